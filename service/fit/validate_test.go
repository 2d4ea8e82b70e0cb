package fit

import (
	"errors"
	"math"
	"testing"

	"github.com/google/go-cmp/cmp"
)

// fieldErrors walks an errors.Join tree, as the HTTP layer does.
func fieldErrors(err error) []*FieldError {
	var out []*FieldError
	var walk func(error)
	walk = func(e error) {
		if fe, ok := e.(*FieldError); ok {
			out = append(out, fe)
			return
		}
		if j, ok := e.(interface{ Unwrap() []error }); ok {
			for _, x := range j.Unwrap() {
				walk(x)
			}
		}
	}
	walk(err)
	return out
}

type wantField struct {
	Pointer       string
	Unprocessable bool
}

func TestValidateNamesTheField(t *testing.T) {
	cases := []struct {
		name string
		set  func(*Input)
		want []wantField
	}{
		{"zero spokes", func(in *Input) { in.SpokeCount = 0 }, []wantField{{"/spoke_count", false}}},
		{"odd spokes", func(in *Input) { in.SpokeCount, in.Hub.Holes, in.Rim.Holes = 33, 33, 33 }, []wantField{{"/spoke_count", true}}},
		{"NaN pcd", func(in *Input) { in.Hub.Left.PCDMM = math.NaN() }, []wantField{{"/hub/left/pcd_mm", false}}},
		{"Inf hole", func(in *Input) { in.Hub.Right.HoleDiameterMM = math.Inf(1) }, []wantField{{"/hub/right/hole_diameter_mm", false}}},
		{"negative flange", func(in *Input) { in.Hub.Left.ThicknessMM = -2.7 }, []wantField{{"/hub/left/thickness_mm", false}}},
		{"absurd tyre", func(in *Input) { in.Tyre.WidthMM = 1e9 }, []wantField{{"/tyre/width_mm", false}}},
		{"unknown kind", func(in *Input) { in.Hub.Kind = "scooter" }, []wantField{{"/hub/kind", false}}},
		{"unknown type", func(in *Input) { in.Hub.Type = "bent" }, []wantField{{"/hub/type", false}}},
		{"no spoke size", func(in *Input) { in.Spoke.DiameterMM = nil }, []wantField{{"/spoke", false}}},
		// BS 3737 spoke gauges here run 8 to 17.
		{"gauge 30", func(in *Input) { in.Spoke.DiameterMM, in.Spoke.Gauge = nil, intp(30) }, []wantField{{"/spoke/gauge", false}}},
		// Gauge 14 is 2.032 mm (BS 3737), not 2.3 mm.
		{"gauge and diameter disagree", func(in *Input) { in.Spoke.DiameterMM, in.Spoke.Gauge = f64(2.3), intp(14) }, []wantField{{"/spoke/diameter_mm", false}}},
		{"unknown material", func(in *Input) { in.Spoke.Material = str("wood") }, []wantField{{"/spoke/material", false}}},
		{"nipple tpi zero", func(in *Input) { in.Nipple.Thread.TPI = 0 }, []wantField{{"/nipple/thread/tpi", false}}},
		{"washer thickness", func(in *Input) {
			in.Washers = append(in.Washers, Washer{ThicknessMM: 0, InnerDiameterMM: 2.2, OuterDiameterMM: 5})
		}, []wantField{{"/washers/1/thickness_mm", false}}},
		{"washer where", func(in *Input) { in.Washers[0].Where = "spokes" }, []wantField{{"/washers/0/where", false}}},
		{"negative crosses", func(in *Input) { in.Crosses.Left = -1 }, []wantField{{"/crosses/left", false}}},
		// 8 × 720°/32 = 180°: the spoke would reach a rim hole half the wheel away.
		{"too many crosses", func(in *Input) { in.Crosses.Right = 8 }, []wantField{{"/crosses/right", true}}},
		{"ERD above BSD", func(in *Input) { in.Rim.ERDMM = 630 }, []wantField{{"/rim/erd_mm", true}}},
		{"no tension", func(in *Input) { in.TargetTensionN = 0 }, []wantField{{"/target_tension_n", false}}},
		{"two at once", func(in *Input) { in.Rim.InnerWidthMM, in.Nipple.LengthMM = math.NaN(), -1 }, []wantField{
			{"/rim/inner_width_mm", false}, {"/nipple/length_mm", false}}},
	}
	for _, c := range cases {
		in, g := roadFront()
		c.set(&in)
		err := Validate(in)
		var got []wantField
		for _, fe := range fieldErrors(err) {
			got = append(got, wantField{fe.FieldPointer(), fe.IsUnprocessable()})
			if fe.Error() == "" || fe.Message == "" {
				t.Errorf("%s: empty message", c.name)
			}
		}
		if diff := cmp.Diff(c.want, got); diff != "" {
			t.Errorf("%s (-want +got):\n%s", c.name, diff)
		}
		if _, cerr := Check(in, g, DefaultOptions()); cerr == nil {
			t.Errorf("%s: Check accepted it", c.name)
		}
	}
	in, _ := roadFront()
	if err := Validate(in); err != nil {
		t.Errorf("plain road front refused: %v", err)
	}
}

// TestUnfillable: a 3.0 mm spoke matches no BS 3737 gauge within 0.05 mm
// (10 gauge is 3.2512 mm, 11 is 2.9464 mm → 11 is 0.054 away), so a missing
// head diameter cannot be assumed: 422 naming the field.
func TestUnfillable(t *testing.T) {
	in, g := roadFront()
	in.Spoke.DiameterMM = f64(3.0)
	in.Spoke.Thread = &Thread{DiameterMM: 3.0, TPI: 40}
	_, err := Check(in, g, DefaultOptions())
	fes := fieldErrors(err)
	var ptrs []string
	for _, fe := range fes {
		if !fe.Unprocessable {
			t.Errorf("%s should be 422", fe.Pointer)
		}
		ptrs = append(ptrs, fe.Pointer)
	}
	want := []string{"/spoke/head_diameter_mm", "/spoke/elbow_length_mm", "/spoke/thread_length_mm"}
	if diff := cmp.Diff(want, ptrs); diff != "" {
		t.Errorf("pointers (-want +got):\n%s", diff)
	}
	// A 2.0 mm thread at 2 TPI has a 12.7 mm pitch: no thread root at all.
	in, g = roadFront()
	in.Spoke.Thread = &Thread{DiameterMM: 2.0, TPI: 2}
	fes = fieldErrors(func() error { _, err := Check(in, g, DefaultOptions()); return err }())
	if len(fes) != 1 || fes[0].Pointer != "/spoke/thread/tpi" || !fes[0].Unprocessable {
		t.Errorf("pitch deeper than thread: %v", fes)
	}
}

func TestBadGeometry(t *testing.T) {
	in, g := roadFront()
	g.TensionRatioLeftToRight = math.NaN()
	if _, err := Check(in, g, DefaultOptions()); !errors.Is(err, ErrGeometry) {
		t.Errorf("NaN ratio: %v", err)
	}
	in, g = roadFront()
	g.Right.LengthMM = 0
	if _, err := Check(in, g, DefaultOptions()); !errors.Is(err, ErrGeometry) {
		t.Errorf("zero length: %v", err)
	}
}
