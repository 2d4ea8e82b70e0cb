package fit

import (
	"math"
	"testing"

	"github.com/google/go-cmp/cmp"

	"wheelbench/service/field"
	"wheelbench/service/spoke"
)

// fieldErrors lists the field errors of an errors.Join tree, as the HTTP
// layer does (this package's and the geometry's are the one type).
func fieldErrors(err error) []wantField {
	var out []wantField
	for _, fe := range field.All(err) {
		out = append(out, wantField{fe.Pointer, fe.Unprocessable})
	}
	return out
}

type wantField struct {
	Pointer       string
	Unprocessable bool
}

// TestCheckNamesTheField: every bad member of a compatibility check comes
// back as a field error at its pointer, from the parts' validation or the
// geometry's.
func TestCheckNamesTheField(t *testing.T) {
	cases := []struct {
		name string
		set  func(*Input)
		want []wantField
	}{
		{"zero spokes", func(in *Input) { in.SpokeCount = 0 }, []wantField{{"/spoke_count", false}}},
		{"odd spokes", func(in *Input) { in.SpokeCount, in.Hub.Holes, in.Rim.Holes = 33, 33, 33 }, []wantField{{"/spoke_count", true}}},
		{"NaN pcd", func(in *Input) { in.Hub.Left.PCDMM = math.NaN() }, []wantField{{"/hub/left/pcd_mm", false}}},
		{"Inf hole", func(in *Input) { in.Hub.Right.HoleDiameterMM = f64(math.Inf(1)) }, []wantField{{"/hub/right/hole_diameter_mm", false}}},
		{"no hole", func(in *Input) { in.Hub.Right.HoleDiameterMM = nil }, []wantField{{"/hub/right/hole_diameter_mm", false}}},
		{"negative flange", func(in *Input) { in.Hub.Left.ThicknessMM = f64(-2.7) }, []wantField{{"/hub/left/thickness_mm", false}}},
		{"absurd tyre", func(in *Input) { in.Tyre.WidthMM = 1e9 }, []wantField{{"/tyre/width_mm", false}}},
		{"unknown kind", func(in *Input) { in.Hub.Kind = "scooter" }, []wantField{{"/hub/kind", false}}},
		{"unknown type", func(in *Input) { in.Hub.Type = "bent" }, []wantField{{"/hub/type", false}}},
		{"unknown brake", func(in *Input) { in.Hub.Brake = "parachute" }, []wantField{{"/hub/brake", false}}},
		{"no spoke size", func(in *Input) { in.Spoke.DiameterMM = nil }, []wantField{{"/spoke/diameter_mm", false}}},
		// BS 3737 spoke gauges here run 8 to 17.
		{"gauge 30", func(in *Input) { in.Spoke.DiameterMM, in.Spoke.Gauge = nil, intp(30) }, []wantField{{"/spoke/gauge", false}}},
		// Gauge 14 is 2.032 mm (BS 3737), not 2.3 mm.
		{"gauge and diameter disagree", func(in *Input) { in.Spoke.DiameterMM, in.Spoke.Gauge = f64(2.3), intp(14) }, []wantField{{"/spoke/gauge", false}}},
		{"unknown material", func(in *Input) { in.Spoke.Material = "wood" }, []wantField{{"/spoke/material", false}}},
		{"nipple tpi zero", func(in *Input) { in.Nipple.Thread.TPI = f64(0) }, []wantField{{"/nipple/thread/tpi", false}}},
		{"nipple tpi missing", func(in *Input) { in.Nipple.Thread.TPI = nil }, []wantField{{"/nipple/thread/tpi", false}}},
		{"nipple names no size", func(in *Input) { in.Nipple.Thread = spoke.Thread{TPI: f64(56)} }, []wantField{{"/nipple/thread/size_mm", false}}},
		{"washer thickness", func(in *Input) {
			in.Washers = append(in.Washers, Washer{ThicknessMM: 0, InnerDiameterMM: 2.2, OuterDiameterMM: 5})
		}, []wantField{{"/washers/1/thickness_mm", false}}},
		{"washer where", func(in *Input) { in.Washers[0].Where = "spokes" }, []wantField{{"/washers/0/where", false}}},
		{"negative crosses", func(in *Input) { in.Crosses.Left = intp(-1) }, []wantField{{"/crosses/left", false}}},
		{"missing crosses", func(in *Input) { in.Crosses.Right = nil }, []wantField{{"/crosses/right", false}}},
		// 8 × 360°/16 = 180°: the spoke would reach a rim hole half the wheel away.
		{"too many crosses", func(in *Input) { in.Crosses.Right = intp(8) }, []wantField{{"/crosses/right", true}}},
		{"ERD above BSD", func(in *Input) { in.Rim.ERDMM = 630 }, []wantField{{"/rim/erd_mm", true}}},
		{"no tension", func(in *Input) { in.TargetTensionN = 0 }, []wantField{{"/target_tension_n", false}}},
		{"two at once", func(in *Input) { in.Rim.InnerWidthMM, in.Nipple.LengthMM = math.NaN(), -1 }, []wantField{
			{"/rim/inner_width_mm", false}, {"/nipple/length_mm", false}}},
	}
	for _, c := range cases {
		in := roadFront()
		c.set(&in)
		_, err := Check(in, DefaultOptions())
		if err == nil {
			t.Errorf("%s: Check accepted it", c.name)
			continue
		}
		if diff := cmp.Diff(c.want, fieldErrors(err)); diff != "" {
			t.Errorf("%s (-want +got):\n%s", c.name, diff)
		}
	}
	if err := Validate(roadFront()); err != nil {
		t.Errorf("plain road front refused: %v", err)
	}
}

// TestUnfillable: a 3.0 mm spoke matches no BS 3737 gauge within 0.05 mm
// (10 gauge is 3.2512 mm, 11 is 2.9464 mm → 11 is 0.054 away), so a missing
// head diameter cannot be assumed: 422 naming the field.
func TestUnfillable(t *testing.T) {
	in := roadFront()
	in.Spoke.DiameterMM = f64(3.0)
	in.Spoke.Thread = &spoke.Thread{TPI: f64(40)}
	in.Nipple.Thread = spoke.Thread{SizeMM: f64(3.0), TPI: f64(40)}
	in.Hub.Left.HoleDiameterMM, in.Hub.Right.HoleDiameterMM = f64(3.2), f64(3.2)
	_, err := Check(in, DefaultOptions())
	want := []wantField{{"/spoke/head_diameter_mm", true}, {"/spoke/elbow_length_mm", true}}
	if diff := cmp.Diff(want, fieldErrors(err)); diff != "" {
		t.Errorf("pointers (-want +got):\n%s", diff)
	}
}

// TestPitchDeeperThanThread: a 2.0 mm thread at 2 TPI has a 12.7 mm pitch:
// no thread root at all, 422 at the pitch.
func TestPitchDeeperThanThread(t *testing.T) {
	in := roadFront()
	in.Spoke.Thread = &spoke.Thread{TPI: f64(2)}
	in.Nipple.Thread.TPI = f64(2)
	_, err := Check(in, DefaultOptions())
	if diff := cmp.Diff([]wantField{{"/spoke/thread/tpi", true}}, fieldErrors(err)); diff != "" {
		t.Errorf("(-want +got):\n%s", diff)
	}
}
