// Package spoke owns what every calculation needs to know about a spoke: its
// cross-section (round, elliptical blade, rectangular), its material's
// stiffness and strength, and the BS 3737 wire-gauge sizes shops order by.
//
// It is pure: standard library only, no I/O, no context. The geometry,
// tension and fit packages import it; it imports none of them.
package spoke

import (
	"fmt"
	"math"
	"sort"
)

// Profile is the shape of a spoke's cross-section.
type Profile string

// Profiles a section may have.
const (
	// Round is a round wire of diameter d.
	Round Profile = "round"
	// Bladed is an elliptical blade of full width w and full thickness t
	// (flat face against a tensiometer's anvils).
	Bladed Profile = "bladed"
	// Oval is treated like Bladed: an ellipse of full width w and thickness t.
	Oval Profile = "oval"
	// Rectangular is a flat bar of width w and thickness t.
	Rectangular Profile = "rectangular"
)

// Section is one cross-section of a spoke. Round sections use DiameterMM;
// the others use WidthMM and ThicknessMM.
type Section struct {
	Profile     Profile `json:"profile,omitempty"`
	DiameterMM  float64 `json:"diameter_mm,omitempty"`
	WidthMM     float64 `json:"width_mm,omitempty"`
	ThicknessMM float64 `json:"thickness_mm,omitempty"`
}

// profile returns the section's profile, Round when unset.
func (s Section) profile() Profile {
	if s.Profile == "" {
		return Round
	}
	return s.Profile
}

// Validate reports the first dimension that is missing, non-finite or not
// positive, as a field name relative to the section ("diameter_mm", …).
func (s Section) Validate() (field string, err error) {
	ok := func(v float64) bool { return v > 0 && !math.IsInf(v, 0) && !math.IsNaN(v) }
	switch s.profile() {
	case Round:
		if !ok(s.DiameterMM) {
			return "diameter_mm", fmt.Errorf("a round section needs a positive, finite diameter_mm")
		}
	case Bladed, Oval, Rectangular:
		if !ok(s.WidthMM) {
			return "width_mm", fmt.Errorf("a %s section needs a positive, finite width_mm", s.profile())
		}
		if !ok(s.ThicknessMM) {
			return "thickness_mm", fmt.Errorf("a %s section needs a positive, finite thickness_mm", s.profile())
		}
		if s.ThicknessMM > s.WidthMM {
			return "thickness_mm", fmt.Errorf("thickness_mm must not exceed width_mm (the blade lies flat)")
		}
	default:
		return "profile", fmt.Errorf("profile must be round, bladed, oval or rectangular")
	}
	return "", nil
}

// AreaMM2 is the cross-sectional area in mm².
// Round πd²/4; ellipse of full width w, thickness t: πwt/4; rectangle wt.
func (s Section) AreaMM2() float64 {
	switch s.profile() {
	case Bladed, Oval:
		return math.Pi * s.WidthMM * s.ThicknessMM / 4
	case Rectangular:
		return s.WidthMM * s.ThicknessMM
	default:
		return math.Pi * s.DiameterMM * s.DiameterMM / 4
	}
}

// SecondMomentMM4 is the second moment of area in mm⁴ for bending across the
// thickness (the plane a tensiometer's plunger deflects the spoke in).
// Round πd⁴/64; ellipse of full width w, thickness t: πwt³/64; rectangle wt³/12.
func (s Section) SecondMomentMM4() float64 {
	switch s.profile() {
	case Bladed, Oval:
		t := s.ThicknessMM
		return math.Pi * s.WidthMM * t * t * t / 64
	case Rectangular:
		t := s.ThicknessMM
		return s.WidthMM * t * t * t / 12
	default:
		d := s.DiameterMM
		return math.Pi * d * d * d * d / 64
	}
}

// Thickness is the section's extent in mm along a tensiometer's plunger axis.
func (s Section) Thickness() float64 {
	if s.profile() == Round {
		return s.DiameterMM
	}
	return s.ThicknessMM
}

// EquivalentDiameterMM is the diameter of the round wire with the same area.
func (s Section) EquivalentDiameterMM() float64 {
	return math.Sqrt(4 * s.AreaMM2() / math.Pi)
}

// Material is a spoke or nipple material with the properties the
// calculations use. Values and their sources are in materials below.
type Material struct {
	Name string
	// EGPa is Young's modulus in GPa.
	EGPa float64
	// UTSMPa is the ultimate tensile strength in MPa used for stress checks.
	UTSMPa float64
	// Source names where the values come from.
	Source string
}

// materials holds the named materials. Sources: ASM material data sheets
// (AISI 304, Ti-6Al-4V MTP641), ASTM A313 spring-wire minima for 302/304
// near 2 mm, Wikipedia's 7075 aluminium alloy article, a C36000 brass data
// sheet; see testdata/reference/materials.tsv.
var materials = map[string]Material{
	"stainless_steel": {
		Name: "stainless_steel", EGPa: 193,
		// ASTM A313 Types 302/304 spring wire, 0.075–0.080 in: minimum 246 ksi
		// = 1696 MPa; spokes are cold-drawn wire of this kind.
		UTSMPa: 1696,
		Source: "E: ASM data sheet AISI 304 (193 GPa); UTS: ASTM A313 302/304 wire minimum, 0.075-0.080 in",
	},
	"titanium": {
		Name: "titanium", EGPa: 113.8, UTSMPa: 950,
		Source: "ASM data sheet Ti-6Al-4V (Grade 5) annealed, MTP641",
	},
	"aluminium": {
		Name: "aluminium", EGPa: 71.7, UTSMPa: 572,
		Source: "7075-T6 aluminium alloy, encyclopedia values",
	},
	"brass": {
		Name: "brass", EGPa: 97, UTSMPa: 338,
		Source: "C36000 free-cutting brass data sheet, lowest temper UTS",
	},
}

// LookupMaterial returns a named material.
func LookupMaterial(name string) (Material, bool) {
	m, ok := materials[name]
	return m, ok
}

// MaterialNames lists the known material names, sorted.
func MaterialNames() []string {
	names := make([]string, 0, len(materials))
	for n := range materials {
		names = append(names, n)
	}
	sort.Strings(names)
	return names
}

// gaugeInches is the Imperial Standard Wire Gauge (BS 3737:1964, withdrawn;
// fixed by Order of Council 1883), in inches, for the sizes spokes come in.
// Indexed by gauge; sizes spokes do not come in are 0.
var gaugeInches = [...]float64{
	8: 0.160, 9: 0.144, 10: 0.128, 11: 0.116, 12: 0.104,
	13: 0.092, 14: 0.080, 15: 0.072, 16: 0.064, 17: 0.056,
}

// MMPerInch is exact by the 1959 international yard and pound agreement.
const MMPerInch = 25.4

// GaugeDiameterMM returns the diameter in mm of a BS 3737 wire gauge.
func GaugeDiameterMM(gauge int) (float64, bool) {
	if gauge < 0 || gauge >= len(gaugeInches) || gaugeInches[gauge] == 0 {
		return 0, false
	}
	return gaugeInches[gauge] * MMPerInch, true
}

// Gauges lists the supported gauges, thickest first.
func Gauges() []int {
	var g []int
	for k, in := range gaugeInches {
		if in > 0 {
			g = append(g, k)
		}
	}
	return g
}
