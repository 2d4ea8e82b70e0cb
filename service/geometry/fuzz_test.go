package geometry

import (
	"encoding/json"
	"reflect"
	"strings"
	"testing"
	"wheelbench/service/spoke"
)

// checkOutcome is the contract every input must meet: either a valid,
// finite, JSON-encodable result, or an error tree of *field.Error leaves
// with RFC 6901 pointers and messages.
func checkOutcome(t *testing.T, w Wheel, res Result, err error) {
	t.Helper()
	if err != nil {
		fes := fieldErrors(t, err)
		if len(fes) == 0 {
			t.Fatalf("error without FieldError: %v", err)
		}
		for _, fe := range fes {
			if !strings.HasPrefix(fe.Pointer, "/") || fe.Message == "" {
				t.Fatalf("bad FieldError %+v", fe)
			}
		}
		return
	}
	if !allFinite(reflect.ValueOf(res)) {
		t.Fatalf("non-finite result %+v for %+v", res, w)
	}
	if _, err := json.Marshal(res); err != nil {
		t.Fatalf("result does not encode: %v", err)
	}
	if res.Left.LengthMM <= 0 || res.Right.LengthMM <= 0 || len(res.Left.LengthGroups) == 0 || len(res.Right.LengthGroups) == 0 {
		t.Fatalf("implausible result %+v", res)
	}
}

// FuzzCompute drives the geometry with arbitrary numbers.
func FuzzCompute(f *testing.F) {
	// The contract example; seeds for edge cases are in testdata/fuzz.
	f.Add(32, false, 45.0, 36.0, 45.0, 18.5, 2.6, 599.0, 0.0, 0.0, 0.0, 0.0, 3, 3, 2.0, 1100.0, 2.0)
	f.Fuzz(func(t *testing.T, n int, straight bool, pcdL, c2fL, pcdR, c2fR, hole, erd, offset, stagL, stagR, washer float64, kL, kR int, d, tension, inc float64) {
		w := Wheel{
			SpokeCount: n,
			Hub: Hub{
				Left:  Flange{PCDMM: pcdL, CenterToFlangeMM: c2fL, HoleDiameterMM: &hole},
				Right: Flange{PCDMM: pcdR, CenterToFlangeMM: c2fR, HoleDiameterMM: &hole},
			},
			Rim:            Rim{ERDMM: erd, SpokeHoleOffsetMM: offset, StaggerMM: Sides{stagL, stagR}, NippleWasherMM: washer},
			Crosses:        Cross{Left: &kL, Right: &kR},
			Spoke:          &spoke.Spec{DiameterMM: &d, Sections: []spoke.Butt{{LengthMM: 40, DiameterMM: fp(d * 1.1)}}},
			TargetTensionN: &tension,
			Stock:          &Stock{IncrementMM: &inc},
		}
		if straight {
			w.Hub.Type = StraightPull
			w.Hub.Left.SpokeExitOffsetMM, w.Hub.Right.SpokeExitOffsetMM = &washer, &stagR
		}
		res, err := Compute(w)
		checkOutcome(t, w, res, err)
	})
}

// FuzzDecode decodes arbitrary bytes into Wheel as the HTTP layer will and
// computes whatever decoded: no panic, no NaN or Inf, only FieldErrors.
func FuzzDecode(f *testing.F) {
	f.Add([]byte(`{"spoke_count":32,"hub":{"left":{"pcd_mm":45,"center_to_flange_mm":36},"right":{"pcd_mm":45,"center_to_flange_mm":18.5}},"rim":{"erd_mm":599},"crosses":{"left":3,"right":3}}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		var w Wheel
		_ = json.Unmarshal(data, &w) // a decode error still leaves a partial wheel to compute
		res, err := Compute(w)
		checkOutcome(t, w, res, err)
	})
}
