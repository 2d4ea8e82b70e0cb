package fit

import (
	"encoding/json"
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"wheelbench/service/geometry"
	"wheelbench/service/spoke"
)

func mustCheck(t *testing.T, in Input, opt Options) Report {
	t.Helper()
	r, err := Check(in, opt)
	if err != nil {
		t.Fatalf("Check: %v", err)
	}
	if _, err := json.Marshal(r); err != nil { // fails on NaN or Inf
		t.Fatalf("report does not encode: %v", err)
	}
	for _, f := range r.Findings {
		if f.Severity != SeverityOf(f.Code) {
			t.Errorf("%s: severity %s, its rule's %s", f.Code, f.Severity, SeverityOf(f.Code))
		}
	}
	return r
}

func TestRoadFrontFits(t *testing.T) {
	r := mustCheck(t, roadFront(), DefaultOptions())
	if r.Verdict != Fits {
		t.Errorf("verdict %s, want fits; findings %v", r.Verdict, codes(r.Findings, Info))
	}
	if got := codes(r.Findings, Info); len(got) != 0 {
		t.Errorf("findings on a plain road front: %v", got)
	}
	if len(r.Changes) != 0 || len(r.Cautions) != 0 {
		t.Errorf("changes %v cautions %v, want none", r.Changes, r.Cautions)
	}
	if r.Geometry.Lacing != nil {
		t.Errorf("lacing plan answered without being asked for")
	}
	in := roadFront()
	in.IncludeLacing = true
	if r := mustCheck(t, in, DefaultOptions()); len(r.Geometry.Lacing) != 32 || r.Geometry.KeySpoke != 1 {
		t.Errorf("plan %d entries, key %d", len(r.Geometry.Lacing), r.Geometry.KeySpoke)
	}
}

// TestMotorBuildRemedies: the motor build's parts, each finding derived
// beside it, with the geometry computed for its real sizes.
func TestMotorBuildRemedies(t *testing.T) {
	r := mustCheck(t, motorBuild(), DefaultOptions())
	if r.Verdict != FitsWithChanges {
		t.Fatalf("verdict %s, findings %v", r.Verdict, codes(r.Findings, Info))
	}
	wantFindings := []string{
		// 4.5 mm shank + 0.2 mm clearance (common practice) > 4.2 mm hole.
		"nipple_wont_pass_rim_hole",
		// 4.0 − 2.3368 (13 gauge, BS 3737) = 1.663 > 0.8 mm (common practice).
		"spoke_loose_in_flange_hole/left",
		// r = 75, R = 190, 2-cross on 18 holes: α = 40°, y = 48.2, x = 132.5,
		// dz = 22: atan(√(48.2² + 22²)/132.5) = 21.8° > 10° (plane geometry).
		"nipple_angle_high/left",
		"spoke_loose_in_flange_hole/right", "nipple_angle_high/right",
		// 13-gauge head 4.5 mm (typical, from memory) on a 4.0 mm hole: margin
		// 0.5 < 0.8 mm (common practice).
		"spoke_head_pulls_through/left",
		// 6.0 mm elbow on a 4.5 mm flange: gap 1.5 > 0.3 mm (common practice).
		"elbow_gap/left",
		"spoke_head_pulls_through/right", "elbow_gap/right",
	}
	if diff := cmp.Diff(wantFindings, codes(r.Findings, Info)); diff != "" {
		t.Errorf("findings (-want +got):\n%s", diff)
	}
	for _, f := range r.Findings {
		if f.Code == CodeSpokeHeadPullsThrough && !cmp.Equal(f.Assumed, []string{"spoke.head_diameter_mm"}) {
			t.Errorf("pull-through rests on the typical head, assumed = %v", f.Assumed)
		}
	}
	// Washer stack: gap 1.5 mm with the given 0.8 mm washer: 1 leaves 0.7
	// (> 0.3), 2 leave −0.1 (within −0.3…0.3) → 2 per spoke, 1.6 mm, 72
	// washers for 36 spokes. Drill: 4.5 + 0.2 = 4.7 mm, in 0.1 mm steps, 36
	// holes (common practice clearances; arithmetic).
	want := []Change{
		{Kind: ChangeDrillRimHoles, Side: "both", Count: 36, DiameterMM: f64(4.7),
			Reason: "nipple shank 4.5 mm, rim holes 4.2 mm", Fixes: []string{CodeNippleWontPassRimHole}},
		{Kind: ChangeAddWashers, Where: AtHub, Side: "both", PerSpoke: 2, Count: 72,
			ThicknessMM: f64(0.8), InnerDiameterMM: f64(2.5), OuterDiameterMM: f64(7.0), StackMM: f64(1.6),
			FromGiven: true, Fixes: []string{CodeSpokeHeadPullsThrough, CodeElbowGap}},
	}
	if diff := cmp.Diff(want, r.Changes); diff != "" {
		t.Errorf("changes (-want +got):\n%s", diff)
	}
	joined := strings.Join(r.Cautions, "\n")
	for _, want := range []string{
		"weakens it, and may void the rim maker's warranty", // drilling
		"hub motor",   // motor hub, always
		"steep angle", // nipple angle
		"within 10 % of the rim maker's 1200 N limit", // 1100 N > 0.9 × 1200 N (common practice)
		"spoke.head_diameter_mm",                      // typical values in use
	} {
		if !strings.Contains(joined, want) {
			t.Errorf("cautions lack %q:\n%s", want, joined)
		}
	}
	// Every finding on the geometry reaches the top level too.
	for _, g := range r.Geometry.Findings {
		if !slices.ContainsFunc(r.Findings, func(f Finding) bool { return f.Code == g.Code && f.Side == g.Side }) {
			t.Errorf("geometry finding %s/%s is not among the report's findings", g.Code, g.Side)
		}
	}
}

// TestStandardAndCatalogWashers: with no washer on hand the stack comes
// from the catalog when it has one that suits, else from the standard
// thicknesses (0.5, 0.8, 1.0 mm, from memory): 0.5 needs 3, 1.0 fits no
// count (1 leaves 0.5, 2 leave −0.5), 0.8 needs 2 → 2 × 0.8. Bore 2.3368 +
// 0.2 → 2.6 mm; outside 4.0 + 2 × 0.8 = 5.6 mm (common practice).
func TestStandardAndCatalogWashers(t *testing.T) {
	in := motorBuild()
	in.Washers = nil
	r := mustCheck(t, in, DefaultOptions())
	c := r.Changes[1]
	if c.Kind != ChangeAddWashers || c.FromGiven || c.PartID != "" || c.PerSpoke != 2 || *c.ThicknessMM != 0.8 ||
		math.Abs(*c.InnerDiameterMM-2.6) > 1e-9 || math.Abs(*c.OuterDiameterMM-5.6) > 1e-9 {
		t.Errorf("standard washer change %+v", c)
	}
	in.CatalogWashers = []CatalogWasher{
		{Washer{ThicknessMM: 0.8, InnerDiameterMM: 1.9, OuterDiameterMM: 6}, "too-small-bore"},
		{Washer{ThicknessMM: 0.75, InnerDiameterMM: 2.45, OuterDiameterMM: 6.5}, "part-42"},
	}
	r = mustCheck(t, in, DefaultOptions())
	c = r.Changes[1]
	if c.PartID != "part-42" || c.FromGiven || *c.ThicknessMM != 0.75 || c.PerSpoke != 2 {
		t.Errorf("catalog washer change %+v, want part-42, 2 × 0.75 mm", c)
	}
}

// TestRimWashersLengthenSpokes: nipple heads that would pull through the
// rim get a washer each; the washer lifts every head away from the hub, so
// the report's lengths are those of the same wheel with that washer on the
// rim (ERD + 2t), and one true sentence says so.
func TestRimWashersLengthenSpokes(t *testing.T) {
	in := roadFront()
	// 5.0 − 4.3 = 0.7 < 0.8 mm (common practice); a washer of bore 3.9 + 0.2
	// = 4.1 mm still holds the head (5.0 − 4.1 = 0.9 mm).
	in.Nipple.HeadDiameterMM = 5.0
	r := mustCheck(t, in, DefaultOptions())
	var washer *Change
	for i, c := range r.Changes {
		if c.Kind == ChangeAddWashers && c.Where == AtRim {
			washer = &r.Changes[i]
		}
	}
	if washer == nil || r.Verdict != FitsWithChanges {
		t.Fatalf("want a rim washer change, got %v %+v", r.Verdict, r.Changes)
	}
	tw := *washer.ThicknessMM
	w := roadFront().Wheel()
	w.Rim.NippleWasherMM = tw
	with, err := geometry.Compute(w)
	if err != nil {
		t.Fatal(err)
	}
	if r.Left.LengthMM != with.Left.LengthMM || r.Geometry.NippleWasherMM != tw {
		t.Errorf("report length %.6f, the wheel with a %.2f mm washer %.6f", r.Left.LengthMM, tw, with.Left.LengthMM)
	}
	plain, _ := geometry.Compute(roadFront().Wheel())
	if r.Left.LengthMM <= plain.Left.LengthMM {
		t.Errorf("washers must lengthen the spokes: %.4f vs %.4f", r.Left.LengthMM, plain.Left.LengthMM)
	}
	var about []string
	for _, c := range r.Cautions {
		if strings.Contains(c, "washer") && strings.Contains(c, "length") {
			about = append(about, c)
		}
	}
	if len(about) != 1 || !strings.Contains(about[0], "include") {
		t.Errorf("want one sentence saying the lengths include the washers, got %q", about)
	}
}

func TestNoDrillingOption(t *testing.T) {
	opt := DefaultOptions()
	opt.AllowDrilling = false
	if r := mustCheck(t, motorBuild(), opt); r.Verdict != DoesNotFit {
		t.Errorf("without drilling: verdict %s", r.Verdict)
	}
	in := motorBuild()
	in.Rim.Eyelets = true
	if r := mustCheck(t, in, DefaultOptions()); r.Verdict != DoesNotFit {
		t.Errorf("eyeleted rim: verdict %s", r.Verdict)
	}
}

// Test584On622: 584 (650B) and 622 (700C) are different ISO 5775 bead seat
// diameters.
func Test584On622(t *testing.T) {
	in := roadFront()
	in.Tyre = &Tyre{BSDMM: 584, WidthMM: 25}
	r := mustCheck(t, in, DefaultOptions())
	if r.Verdict != DoesNotFit {
		t.Fatalf("verdict %s", r.Verdict)
	}
	var f Finding
	for _, x := range r.Findings {
		if x.Code == CodeTyreRimDiameterMismatch {
			f = x
		}
	}
	if f.Severity != Error || f.FixedByChange || !strings.Contains(f.Message, "584 mm (650B") ||
		!strings.Contains(f.Message, "622 mm (700C") {
		t.Errorf("mismatch finding %+v", f)
	}
}

// TestThreadsLikeWithLike: nipples are named by the spoke size they fit and
// the pitch; a measured major diameter is compared only with a measured
// one. A nipple entered with its measured 2.2 mm thread (a rolled thread
// stands above the wire) fits a 2.0 mm spoke; one threaded for 2.34 mm
// spokes (13 gauge) does not; nor a 2.0 mm one at 60 TPI.
func TestThreadsLikeWithLike(t *testing.T) {
	cases := []struct {
		name     string
		thread   spoke.Thread
		spokeThr *spoke.Thread
		mismatch bool
	}{
		{"named 2.0 × 56", spoke.Thread{SizeMM: f64(2.0), TPI: f64(56)}, nil, false},
		{"named 14 gauge × 56", spoke.Thread{Gauge: intp(14), TPI: f64(56)}, nil, false},
		{"measured 2.2 × 56", spoke.Thread{DiameterMM: f64(2.2), TPI: f64(56)}, nil, false},
		{"named 13 gauge", spoke.Thread{Gauge: intp(13), TPI: f64(56)}, nil, true},
		{"60 TPI", spoke.Thread{SizeMM: f64(2.0), TPI: f64(60)}, nil, true},
		{"measured 2.6", spoke.Thread{DiameterMM: f64(2.6), TPI: f64(56)}, nil, true},
		{"both measured, alike", spoke.Thread{SizeMM: f64(2.0), DiameterMM: f64(2.19), TPI: f64(56)},
			&spoke.Thread{DiameterMM: f64(2.2), TPI: f64(56)}, false},
		{"both measured, apart", spoke.Thread{SizeMM: f64(2.0), DiameterMM: f64(2.05), TPI: f64(56)},
			&spoke.Thread{DiameterMM: f64(2.2), TPI: f64(56)}, true},
	}
	for _, c := range cases {
		in := roadFront()
		in.Nipple.Thread = c.thread
		in.Spoke.Thread = c.spokeThr
		r := mustCheck(t, in, DefaultOptions())
		got := slices.ContainsFunc(r.Findings, func(f Finding) bool { return f.Code == CodeThreadMismatch })
		if got != c.mismatch {
			t.Errorf("%s: thread_mismatch %v, want %v (%v)", c.name, got, c.mismatch, codes(r.Findings, Info))
		}
	}
}

// TestAluminiumNipples: aluminium nipples on a motor, cargo or tandem hub,
// or above 1200 N (common practice, from memory), get a warning and a
// caution; brass never.
func TestAluminiumNipples(t *testing.T) {
	for _, c := range []struct {
		kind   string
		target float64
		want   bool
	}{
		{geometry.KindBicycle, 1000, false}, {geometry.KindBicycle, 1250, true},
		{geometry.KindCargo, 900, true}, {geometry.KindTandem, 900, true}, {geometry.KindMotor, 900, true},
	} {
		in := roadFront()
		in.Nipple.Material = "aluminium"
		in.Hub.Kind, in.TargetTensionN = c.kind, c.target
		in.Rim.MaxTensionN = nil
		r := mustCheck(t, in, DefaultOptions())
		got := slices.ContainsFunc(r.Findings, func(f Finding) bool { return f.Code == CodeAluminiumNippleHighLoad })
		if got != c.want || got && !strings.Contains(strings.Join(r.Cautions, " "), "brass") {
			t.Errorf("%s at %v N: aluminium_nipple_high_load %v, want %v", c.kind, c.target, got, c.want)
		}
		in.Nipple.Material = "brass"
		if r := mustCheck(t, in, DefaultOptions()); slices.ContainsFunc(r.Findings, func(f Finding) bool { return f.Code == CodeAluminiumNippleHighLoad }) {
			t.Errorf("brass flagged")
		}
	}
}

// TestWrapsIsAFinding: crosses past the tangent are a finding here, the
// lengths computed at the side's max crosses, with a caution; the remedy's
// count agrees with the geometry's max_crosses: arccos(19/300) = 86.4° over
// a 22.5° pitch (32 holes) → 3.
func TestWrapsIsAFinding(t *testing.T) {
	in := roadFront()
	in.Crosses = crosses(5, 3)
	r := mustCheck(t, in, DefaultOptions())
	var f *Finding
	for i := range r.Findings {
		if r.Findings[i].Code == CodeLacingWrapsFlange {
			f = &r.Findings[i]
		}
	}
	if f == nil || f.Side != "left" || r.Verdict != DoesNotFit {
		t.Fatalf("want lacing_wraps_flange on the left, got %v", codes(r.Findings, Info))
	}
	if r.Geometry.Crosses.Left != r.Geometry.Left.MaxCrosses || f.Values["max_crosses"] != float64(r.Geometry.Left.MaxCrosses) ||
		!strings.Contains(f.Remedy, "at most 3") {
		t.Errorf("computed at %d crosses, max %d, remedy %q", r.Geometry.Crosses.Left, r.Geometry.Left.MaxCrosses, f.Remedy)
	}
}

// TestMirror: swapping left and right (flanges, crosses, rim offset) swaps
// the sides of every finding and nothing else (reflection symmetry).
func TestMirror(t *testing.T) {
	in := motorBuild()
	in.Hub.Left.ThicknessMM = f64(3.0) // make the sides differ
	in.Hub.Left.CenterToFlangeMM = 30
	in.Crosses = crosses(2, 1)
	in.Rim.SpokeHoleOffsetMM = 2
	m := in
	m.Hub.Left, m.Hub.Right = in.Hub.Right, in.Hub.Left
	m.Crosses = geometry.Cross{Left: in.Crosses.Right, Right: in.Crosses.Left}
	m.Rim.SpokeHoleOffsetMM = -in.Rim.SpokeHoleOffsetMM
	a, b := mustCheck(t, in, DefaultOptions()), mustCheck(t, m, DefaultOptions())
	flip := map[string]string{"left": "right", "right": "left", "": ""}
	var want, got []string
	for _, f := range a.Findings {
		want = append(want, f.Code+"/"+flip[f.Side])
	}
	for _, f := range b.Findings {
		got = append(got, f.Code+"/"+f.Side)
	}
	slices.Sort(want)
	slices.Sort(got)
	if diff := cmp.Diff(want, got); diff != "" {
		t.Errorf("mirrored findings (-want +got):\n%s", diff)
	}
	if a.Verdict != b.Verdict || math.Abs(a.Left.TensionN-b.Right.TensionN) > 1e-9 || math.Abs(a.Left.LengthMM-b.Right.LengthMM) > 1e-9 {
		t.Errorf("verdicts %s/%s tensions %v/%v", a.Verdict, b.Verdict, a.Left.TensionN, b.Right.TensionN)
	}
}

// TestOneRuleSet: the rules on the geometry give the same findings —
// code, severity, message, remedy, values — whether a wheel is judged as
// spoke lengths or as a compatibility check, and every one of them
// reaches the check's top level.
func TestOneRuleSet(t *testing.T) {
	for _, in := range []Input{roadFront(), motorBuild(), func() Input {
		in := roadFront()
		in.Crosses = crosses(3, 0) // a radial side
		in.Hub.Brake = geometry.BrakeRotor
		in.Hub.Right.CenterToFlangeMM = 14
		in.TargetTensionN = 1200
		in.Rim.MaxTensionN = nil
		in.Stock = &geometry.Stock{LengthsMM: []float64{300}}
		return in
	}()} {
		r := mustCheck(t, in, DefaultOptions())
		w := in.Wheel()
		w.Rim.NippleWasherMM = r.Geometry.NippleWasherMM
		res, err := geometry.Compute(w)
		if err != nil {
			t.Fatal(err)
		}
		fs, _ := AssessWheel(w, &res, DefaultOptions())
		for _, f := range fs {
			if f.Code == CodeSpokeThreadBottoms || f.Code == CodeThreadEngagementShort || f.Code == CodeSpokeProtrudesPastNipple {
				continue // judged against the given nipple in the check, a typical one here
			}
			i := slices.IndexFunc(r.Findings, func(g Finding) bool { return g.Code == f.Code && g.Side == f.Side })
			if i < 0 {
				t.Errorf("%s/%s found by spoke lengths, not by the check", f.Code, f.Side)
				continue
			}
			g := r.Findings[i]
			g.FixedByChange, g.Assumed, f.Assumed = false, nil, nil
			if diff := cmp.Diff(f, g); diff != "" {
				t.Errorf("%s/%s differs between the endpoints (-spoke lengths +check):\n%s", f.Code, f.Side, diff)
			}
		}
	}
}

// TestOptionsConfigurable: a shop that allows a larger elbow gap sees no
// elbow_gap at 3.2 mm on a 2.7 mm flange.
func TestOptionsConfigurable(t *testing.T) {
	in := roadFront()
	in.Spoke.ElbowLengthMM = f64(3.2)
	opt := DefaultOptions()
	if r := mustCheck(t, in, opt); !slices.Contains(codes(r.Findings, Error), "elbow_gap/left") {
		t.Fatal("0.5 mm gap should fire at the default 0.3 mm tolerance")
	}
	opt.ElbowGapToleranceMM = 0.6
	if r := mustCheck(t, in, opt); slices.Contains(codes(r.Findings, Error), "elbow_gap/left") {
		t.Error("0.5 mm gap fired with a 0.6 mm tolerance")
	}
	opt.SpokeSafetyFactor = 0.5
	if _, err := Check(in, opt); err == nil {
		t.Error("a safety factor below 1 was accepted")
	}
}
