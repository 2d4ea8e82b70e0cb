package tension

import (
	"errors"
	"strings"

	"wheelbench/service/field"
	"wheelbench/service/spoke"
)

// WarnMaterialAssumed: the spoke named no material or modulus and is taken
// as stainless steel, as in every other calculation.
const WarnMaterialAssumed = "material_assumed"

// measured resolves a whole spoke to the section the tensiometer sits on
// (its measured_section, the thinnest by default), as a conversion takes
// it. Pointers start with at. assumed reports that the material defaulted.
func measured(s spoke.Spec, at string) (sec SpokeSpec, assumed bool, err error) {
	r, ps := s.Resolve(false)
	if len(ps) > 0 {
		errs := make([]error, 0, len(ps))
		for _, p := range ps {
			errs = append(errs, field.Invalid(at+p.Pointer, "%s", p.Message))
		}
		return SpokeSpec{}, false, errors.Join(errs...)
	}
	m := r.Measured
	sec = SpokeSpec{Profile: string(m.Profile), DiameterMM: m.DiameterMM, WidthMM: m.WidthMM, ThicknessMM: m.ThicknessMM,
		Material: r.Material.Name, EGPa: s.EGPa}
	if sec.Profile == "" {
		sec.Profile = string(spoke.Round)
	}
	return sec, r.MaterialAssumed, nil
}

// materialWarning is the warning a conversion carries when the material
// defaulted.
func materialWarning() Warning {
	return Warning{WarnMaterialAssumed, "info", "no material or e_gpa was given: the spoke is taken as " +
		strings.ReplaceAll("stainless_steel", "_", " ") + ", as in every calculation; titanium and aluminium read very differently"}
}

// prepareSpoke prepares a whole spoke's measured section for conversions.
func (m *Model) prepareSpoke(s spoke.Spec, at string) (prepared, error) {
	sec, assumed, err := measured(s, at)
	if err != nil {
		return prepared{}, err
	}
	p, err := m.prepare(sec, at)
	if err != nil {
		return prepared{}, err
	}
	if assumed {
		p.secWarns = append(p.secWarns, materialWarning())
	}
	return p, nil
}

// TargetForSpoke is Target for a whole spoke: the reading to aim for on its
// measured section.
func (m *Model) TargetForSpoke(s spoke.Spec, tensionN float64) (Target, error) {
	p, err := m.prepareSpoke(s, "/spoke")
	if err != nil {
		return Target{}, err
	}
	return p.target(tensionN, "/target_tension_n")
}
