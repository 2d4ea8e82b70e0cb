package fit

// Input is the body of a compatibility check, decoded straight from JSON.
// Optional members are pointers (nil = not given); required members have no
// meaningful zero value and are refused by Validate when zero.
type Input struct {
	// SpokeCount is the number of spokes in the wheel (even, two flanges).
	SpokeCount int       `json:"spoke_count"`
	Hub        Hub       `json:"hub"`
	Rim        Rim       `json:"rim"`
	Spoke      SpokeSpec `json:"spoke"`
	Nipple     Nipple    `json:"nipple"`
	// Washers are the washers the builder has for this build (on hand or
	// supplied). The check fits none of them by default: it proposes which to
	// add, how many per spoke, and where, as Changes.
	Washers []Washer `json:"washers,omitempty"`
	// Tyre is optional; when nil no tyre check is made.
	Tyre *Tyre `json:"tyre,omitempty"`
	// FrameSpacingMM is the frame or fork dropout spacing; when nil the hub
	// spacing is not compared.
	FrameSpacingMM *float64 `json:"frame_spacing_mm,omitempty"`
	Crosses        Crosses  `json:"crosses"`
	// TargetTensionN is the tension of the tighter side, in newtons.
	TargetTensionN float64 `json:"target_tension_n"`
}

// HubKind says what sort of hub is laced. It decides the cautions a build
// carries; a motor hub always carries the motor caution.
type HubKind string

// Hub kinds. The empty string means Bicycle.
const (
	// Bicycle is an ordinary bicycle hub.
	Bicycle HubKind = "bicycle"
	// Motor is a hub motor (electric assist or e-cargo).
	Motor HubKind = "motor"
	// MotorVehicle is a motorcycle or moped hub laced to a spoked rim.
	MotorVehicle HubKind = "motor_vehicle"
	// Tandem is a tandem hub (higher loads, usually 40 or 48 holes).
	Tandem HubKind = "tandem"
	// Cargo is a cargo-bike hub (higher loads).
	Cargo HubKind = "cargo"
)

// HubKinds lists the accepted hub kinds.
var HubKinds = []HubKind{Bicycle, Motor, MotorVehicle, Tandem, Cargo}

// HubType is how the spoke heads sit in the hub. The empty string means JBend.
type HubType string

// Hub types.
const (
	// JBend flanges take spokes with a bent elbow through drilled holes.
	JBend HubType = "j_bend"
	// StraightPull hubs take straight spokes whose heads sit in the hub
	// body; the elbow checks do not apply.
	StraightPull HubType = "straight_pull"
)

// Hub is the hub as measured.
type Hub struct {
	// Holes is the number of spoke holes in both flanges together.
	Holes int     `json:"holes"`
	Kind  HubKind `json:"kind,omitempty"`
	Type  HubType `json:"type,omitempty"`
	// SpacingMM is the over-locknut width; optional.
	SpacingMM *float64 `json:"spacing_mm,omitempty"`
	Left      Flange   `json:"left"`
	Right     Flange   `json:"right"`
}

// Flange is one hub flange.
type Flange struct {
	// PCDMM is the diameter of the circle through the spoke-hole centres.
	PCDMM float64 `json:"pcd_mm"`
	// CenterToFlangeMM is the distance from the hub's centre plane (midway
	// between the locknuts) to the flange's middle.
	CenterToFlangeMM float64 `json:"center_to_flange_mm"`
	// HoleDiameterMM is the diameter of the flange's spoke holes.
	HoleDiameterMM float64 `json:"hole_diameter_mm"`
	// ThicknessMM is the flange's thickness at the spoke holes.
	ThicknessMM float64 `json:"thickness_mm"`
}

// Rim is the rim as measured.
type Rim struct {
	Holes int `json:"holes"`
	// ERDMM is the effective rim diameter: the diameter at which spoke ends
	// sit flush with the outer (head) end of seated nipples.
	ERDMM float64 `json:"erd_mm"`
	// BSDMM is the ISO 5775 bead seat diameter.
	BSDMM float64 `json:"bsd_mm"`
	// InnerWidthMM is the width between the rim's bead hooks or walls.
	InnerWidthMM float64 `json:"inner_width_mm"`
	// HoleDiameterMM is the diameter of the spoke (nipple) holes.
	HoleDiameterMM float64 `json:"hole_diameter_mm"`
	// MaxTensionN is the rim maker's maximum spoke tension; optional.
	MaxTensionN *float64 `json:"max_tension_n,omitempty"`
	// SpokeHoleOffsetMM is the holes' offset from the rim's centre plane,
	// positive toward the left (used by the geometry, only checked here).
	SpokeHoleOffsetMM float64 `json:"spoke_hole_offset_mm"`
	// Eyelets is true when the spoke holes carry eyelets or sockets; such
	// holes are never proposed for drilling.
	Eyelets bool `json:"eyelets,omitempty"`
}

// SpokeSpec is the spoke. Give DiameterMM or Gauge (BS 3737), not both unless
// they agree. Optional dimensions left nil are filled with typical values by
// gauge (see typical.go), and every finding that rests on one says so.
type SpokeSpec struct {
	DiameterMM *float64 `json:"diameter_mm,omitempty"`
	Gauge      *int     `json:"gauge,omitempty"`
	// HeadDiameterMM is the diameter of the spoke head.
	HeadDiameterMM *float64 `json:"head_diameter_mm,omitempty"`
	// ElbowLengthMM is the straight length between the underside of the head
	// and the start of the bend, i.e. the flange thickness the elbow suits.
	ElbowLengthMM *float64 `json:"elbow_length_mm,omitempty"`
	Thread        *Thread  `json:"thread,omitempty"`
	// ThreadLengthMM is the length of the rolled thread at the spoke end.
	ThreadLengthMM *float64 `json:"thread_length_mm,omitempty"`
	// Material is a service/spoke material name; nil means stainless_steel.
	Material *string `json:"material,omitempty"`
}

// Thread is a spoke or nipple thread.
type Thread struct {
	// DiameterMM is the thread's major (outside) diameter.
	DiameterMM float64 `json:"diameter_mm"`
	// TPI is threads per inch.
	TPI float64 `json:"tpi"`
}

// Nipple is the nipple. Thread, shank, head and length are required.
type Nipple struct {
	Thread Thread `json:"thread"`
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
	Material *string `json:"material,omitempty"`
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

// Tyre is the tyre by its ISO 5775 designation.
type Tyre struct {
	BSDMM   float64 `json:"bsd_mm"`
	WidthMM float64 `json:"width_mm"`
}

// Crosses is the lacing pattern per side (0 = radial).
type Crosses struct {
	Left  int `json:"left"`
	Right int `json:"right"`
}
