package fit

import (
	"wheelbench/service/geometry"
	"wheelbench/service/spoke"
)

// Input is the body of a compatibility check: the parts as measured, with
// the hub, rim, crosses and spoke described exactly as for spoke lengths.
// Optional members are pointers (nil = not given) or have a zero value
// that means "none"; Validate refuses a missing required one.
type Input struct {
	// SpokeCount is the number of spokes in the wheel.
	SpokeCount int          `json:"spoke_count"`
	Hub        geometry.Hub `json:"hub"`
	Rim        geometry.Rim `json:"rim"`
	Spoke      spoke.Spec   `json:"spoke"`
	Nipple     Nipple       `json:"nipple"`
	// Washers are the washers the builder has for this build (on hand or
	// supplied). The check fits none of them by default: it proposes which to
	// add, how many per spoke, and where, as Changes.
	Washers []Washer `json:"washers,omitempty"`
	// Tyre is optional; when nil no tyre check is made.
	Tyre *Tyre `json:"tyre,omitempty"`
	// FrameSpacingMM is the frame or fork dropout spacing; when nil the hub
	// spacing is not compared.
	FrameSpacingMM *float64       `json:"frame_spacing_mm,omitempty"`
	Crosses        geometry.Cross `json:"crosses"`
	// TargetTensionN is the tension of the tighter side, in newtons.
	TargetTensionN float64 `json:"target_tension_n"`
	// Stock is the spoke lengths the shop can get; a stock length is then
	// chosen per length group and the thread rules judge where it ends.
	Stock *geometry.Stock `json:"stock,omitempty"`
	// IncludeLacing asks for the lacing plan in the report's geometry.
	IncludeLacing bool `json:"include_lacing,omitempty"`
	// CatalogWashers are washers the shop's catalog carries, proposed
	// before standard ones when none of Washers suits (builds fill it).
	CatalogWashers []CatalogWasher `json:"-"`
}

// Nipple is the nipple. Thread (the spoke size it is threaded for and the
// pitch), shank, head and length are required.
type Nipple struct {
	Thread spoke.Thread `json:"thread"`
	// ShankDiameterMM is the outside diameter of the shank that passes
	// through the rim's spoke hole.
	ShankDiameterMM float64 `json:"shank_diameter_mm"`
	// HeadDiameterMM is the diameter of the head that bears on the rim bed.
	HeadDiameterMM float64 `json:"head_diameter_mm"`
	// LengthMM is the nipple's overall length.
	LengthMM float64 `json:"length_mm"`
	// ThreadLengthMM is the length of the internal thread; optional.
	ThreadLengthMM *float64 `json:"thread_length_mm,omitempty"`
	// ThreadStartMM is the depth from the head end of the nipple to the first
	// internal thread (the driver slot and counterbore); optional.
	ThreadStartMM *float64 `json:"thread_start_mm,omitempty"`
	// Material is a service/spoke material name; optional.
	Material string `json:"material,omitempty"`
}

// WasherPlace says where a washer goes.
type WasherPlace string

// Washer places. The empty string means either, as its size suits.
const (
	// AtHub is under the spoke head, against the flange.
	AtHub WasherPlace = "hub"
	// AtRim is under the nipple head, against the rim's spoke bed.
	AtRim WasherPlace = "rim"
)

// Washer is one kind of washer available for the build.
type Washer struct {
	ThicknessMM     float64     `json:"thickness_mm"`
	InnerDiameterMM float64     `json:"inner_diameter_mm"`
	OuterDiameterMM float64     `json:"outer_diameter_mm"`
	Where           WasherPlace `json:"where,omitempty"`
}

// CatalogWasher is a washer of the shop's catalog, named by its part id.
type CatalogWasher struct {
	Washer
	PartID string
}

// Tyre is the tyre by its ISO 5775 designation.
type Tyre struct {
	BSDMM   float64 `json:"bsd_mm"`
	WidthMM float64 `json:"width_mm"`
}

// Wheel is the geometric part of in, as the geometry takes it.
func (in Input) Wheel() geometry.Wheel {
	sp := in.Spoke
	t := in.TargetTensionN
	return geometry.Wheel{SpokeCount: in.SpokeCount, Hub: in.Hub, Rim: in.Rim, Crosses: in.Crosses,
		Spoke: &sp, TargetTensionN: &t, Stock: in.Stock, IncludeLacing: in.IncludeLacing}
}
