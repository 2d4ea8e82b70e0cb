package geometry

import (
	"errors"
	"math"
	"reflect"
	"testing"
	"wheelbench/service/field"
	"wheelbench/service/spoke"
)

func ip(v int) *int               { return &v }
func fp(v float64) *float64       { return &v }
func cross(l, r int) Cross        { return Cross{Left: ip(l), Right: ip(r)} }
func near(a, b, tol float64) bool { return math.Abs(a-b) <= tol }

// contractWheel is the example request of the endpoint contract: a dished
// J-bend rear, 32 holes, 3-cross both sides.
func contractWheel() Wheel {
	return Wheel{
		SpokeCount: 32,
		Hub: Hub{Type: JBend,
			Left:  Flange{PCDMM: 45, CenterToFlangeMM: 36, HoleDiameterMM: fp(2.6), ThicknessMM: fp(3)},
			Right: Flange{PCDMM: 45, CenterToFlangeMM: 18.5, HoleDiameterMM: fp(2.6)}},
		Rim:            Rim{ERDMM: 599},
		Crosses:        cross(3, 3),
		Spoke:          &spoke.Spec{DiameterMM: fp(2.0), Material: "stainless_steel"},
		TargetTensionN: fp(1100),
		Stock:          &Stock{IncrementMM: fp(2)},
	}
}

// fieldErrors flattens an errors.Join tree into its *field.Error leaves.
func fieldErrors(t *testing.T, err error) []*field.Error {
	t.Helper()
	var out []*field.Error
	var walk func(error)
	walk = func(e error) {
		var fe *field.Error
		if j, ok := e.(interface{ Unwrap() []error }); ok {
			for _, x := range j.Unwrap() {
				walk(x)
			}
			return
		}
		if errors.As(e, &fe) {
			out = append(out, fe)
			return
		}
		t.Errorf("error %v (%T) is not a *field.Error", e, e)
	}
	if err != nil {
		walk(err)
	}
	return out
}

// hasFieldError reports whether err holds a FieldError at pointer with the
// given kind.
func hasFieldError(t *testing.T, err error, pointer string, unprocessable bool) *field.Error {
	t.Helper()
	for _, fe := range fieldErrors(t, err) {
		if fe.Pointer == pointer && fe.Unprocessable == unprocessable {
			return fe
		}
	}
	return nil
}

// allFinite walks every float64 reachable from v (fields, pointers, slices).
func allFinite(v reflect.Value) bool {
	switch v.Kind() {
	case reflect.Float64:
		return !math.IsNaN(v.Float()) && !math.IsInf(v.Float(), 0)
	case reflect.Pointer:
		return v.IsNil() || allFinite(v.Elem())
	case reflect.Struct:
		for i := range v.NumField() {
			if !allFinite(v.Field(i)) {
				return false
			}
		}
	case reflect.Slice, reflect.Array:
		for i := range v.Len() {
			if !allFinite(v.Index(i)) {
				return false
			}
		}
	}
	return true
}
