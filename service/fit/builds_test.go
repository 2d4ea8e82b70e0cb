package fit

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
)

func codes(fs []Finding, minSev Severity) []string {
	rank := map[Severity]int{Info: 0, Warning: 1, Error: 2}
	var out []string
	for _, f := range fs {
		if rank[f.Severity] >= rank[minSev] {
			s := f.Code
			if f.Side != "" {
				s += "/" + f.Side
			}
			out = append(out, s)
		}
	}
	return out
}

func mustCheck(t *testing.T, in Input, g Geometry, opt Options) Report {
	t.Helper()
	r, err := Check(in, g, opt)
	if err != nil {
		t.Fatalf("Check: %v", err)
	}
	if _, err := json.Marshal(r); err != nil { // fails on NaN or Inf
		t.Fatalf("report does not encode: %v", err)
	}
	return r
}

func TestRoadFrontFits(t *testing.T) {
	in, g := roadFront()
	r := mustCheck(t, in, g, DefaultOptions())
	if r.Verdict != Fits {
		t.Errorf("verdict %s, want fits; findings %v", r.Verdict, codes(r.Findings, Info))
	}
	if got := codes(r.Findings, Warning); len(got) != 0 {
		t.Errorf("findings above info: %v", got)
	}
	// The only info: 25 mm on 19 mm is a ratio of 1.316, below the 1.4–2.2
	// band (CTC guidance, B) and inside the accepted 1.05–2.6 (common practice).
	if diff := cmp.Diff([]string{CodeTyreWidthOutOfRange}, codes(r.Findings, Info)); diff != "" {
		t.Errorf("info findings (-want +got):\n%s", diff)
	}
	if len(r.Changes) != 0 || len(r.Cautions) != 0 {
		t.Errorf("changes %v cautions %v, want none", r.Changes, r.Cautions)
	}
	// 65 % of a 25 mm tyre (ISO 5775 article rule of thumb, A): 16.25 mm.
	if got := r.Findings[0].Values["suggested_inner_width_mm"]; got != 16.25 {
		t.Errorf("suggested inner width %v, want 16.25", got)
	}
}

func TestMotorBuildRemedies(t *testing.T) {
	in, g := motorBuild()
	r := mustCheck(t, in, g, DefaultOptions())
	if r.Verdict != FitsWithChanges {
		t.Fatalf("verdict %s, findings %v", r.Verdict, codes(r.Findings, Info))
	}
	wantFindings := []string{
		// 13-gauge head 4.5 mm (typical, from memory) on a 4.0 mm hole: margin
		// 0.5 < 0.8 mm (common practice).
		"spoke_head_pulls_through/left",
		// 4.0 − 2.3368 (13 gauge, BS 3737) = 1.663 > 0.8 mm (common practice).
		"spoke_loose_in_flange_hole/left",
		// 6.0 mm elbow on a 4.5 mm flange: gap 1.5 > 0.3 mm (common practice).
		"elbow_gap/left",
		"spoke_head_pulls_through/right", "spoke_loose_in_flange_hole/right", "elbow_gap/right",
		// 4.5 mm shank + 0.2 mm clearance (common practice) > 4.2 mm hole.
		"nipple_wont_pass_rim_hole",
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
		{Kind: ChangeAddWashers, Where: AtHub, Side: "both", PerSpoke: 2, Count: 72,
			ThicknessMM: f64(0.8), InnerDiameterMM: f64(2.5), OuterDiameterMM: f64(7.0), StackMM: f64(1.6),
			FromGiven: true, Fixes: []string{CodeSpokeHeadPullsThrough, CodeElbowGap}},
		{Kind: ChangeDrillRimHoles, Side: "both", Count: 36, DiameterMM: f64(4.7),
			Reason: "nipple shank 4.5 mm, rim holes 4.2 mm", Fixes: []string{CodeNippleWontPassRimHole}},
	}
	if diff := cmp.Diff(want, r.Changes); diff != "" {
		t.Errorf("changes (-want +got):\n%s", diff)
	}
	joined := strings.Join(r.Cautions, "\n")
	for _, want := range []string{
		"weakens it, and may void the rim maker's warranty", // drilling
		"motor maker's requirements",                        // motor hub, always
		"vehicle rules",
		"within 10 % of the rim maker's 1200 N limit", // 1100 N > 0.9 × 1200 N (common practice)
		"spoke.head_diameter_mm",                      // typical values in use
	} {
		if !strings.Contains(joined, want) {
			t.Errorf("cautions lack %q:\n%s", want, joined)
		}
	}
	for _, f := range r.Findings {
		if f.Code == CodeElbowGap && !strings.Contains(f.Remedy, "1.6 mm washer stack") {
			t.Errorf("elbow gap remedy %q does not state the 1.6 mm stack", f.Remedy)
		}
		if f.Code == CodeNippleWontPassRimHole && !strings.Contains(f.Remedy, "4.7 mm") {
			t.Errorf("drill remedy %q does not state 4.7 mm", f.Remedy)
		}
	}
}

// TestMotorBuildStandardWashers: with no washer on hand the stack comes from
// the standard thicknesses (0.5, 0.8, 1.0 mm, from memory): 0.5 needs 3, 1.0
// fits no count (1 leaves 0.5, 2 leave −0.5), 0.8 needs 2 → 2 × 0.8. Bore
// 2.3368 + 0.2 → 2.6 mm; outside 4.0 + 2 × 0.8 = 5.6 mm (common practice).
func TestMotorBuildStandardWashers(t *testing.T) {
	in, g := motorBuild()
	in.Washers = nil
	r := mustCheck(t, in, g, DefaultOptions())
	c := r.Changes[0]
	if c.Kind != ChangeAddWashers || c.FromGiven || c.PerSpoke != 2 || *c.ThicknessMM != 0.8 ||
		math.Abs(*c.InnerDiameterMM-2.6) > 1e-9 || math.Abs(*c.OuterDiameterMM-5.6) > 1e-9 {
		t.Errorf("standard washer change %+v", c)
	}
}

// TestMotorCautionAlways: a motor or motor-vehicle hub carries the motor
// caution even when everything else fits.
func TestMotorCautionAlways(t *testing.T) {
	for _, k := range []HubKind{Motor, MotorVehicle} {
		in, g := roadFront()
		in.Hub.Kind = k
		r := mustCheck(t, in, g, DefaultOptions())
		if r.Verdict != Fits || !strings.Contains(strings.Join(r.Cautions, " "), "motor maker") {
			t.Errorf("%s: verdict %s cautions %v", k, r.Verdict, r.Cautions)
		}
	}
}

func TestNoDrillingOption(t *testing.T) {
	in, g := motorBuild()
	opt := DefaultOptions()
	opt.AllowDrilling = false
	if r := mustCheck(t, in, g, opt); r.Verdict != DoesNotFit {
		t.Errorf("without drilling: verdict %s", r.Verdict)
	}
	in.Rim.Eyelets = true
	if r := mustCheck(t, in, g, DefaultOptions()); r.Verdict != DoesNotFit {
		t.Errorf("eyeleted rim: verdict %s", r.Verdict)
	}
}

// Test584On622: 584 (650B) and 622 (700C) are different ISO 5775 bead seat
// diameters.
func Test584On622(t *testing.T) {
	in, g := roadFront()
	in.Tyre = &Tyre{BSDMM: 584, WidthMM: 25}
	r := mustCheck(t, in, g, DefaultOptions())
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

// TestMirror: swapping left and right (flanges, crosses, geometry, ratio
// inverted) swaps the sides of every finding and nothing else.
func TestMirror(t *testing.T) {
	in, g := motorBuild()
	in.Hub.Left.ThicknessMM = 3.0 // make the sides differ
	in.Crosses.Right = 1
	g.Right.SpokeEndMM = f64(-3)
	g.TensionRatioLeftToRight = 0.35
	m, mg := in, g
	m.Hub.Left, m.Hub.Right = in.Hub.Right, in.Hub.Left
	m.Crosses = Crosses{Left: in.Crosses.Right, Right: in.Crosses.Left}
	mg.Left, mg.Right = g.Right, g.Left
	mg.TensionRatioLeftToRight = 1 / g.TensionRatioLeftToRight
	a, b := mustCheck(t, in, g, DefaultOptions()), mustCheck(t, m, mg, DefaultOptions())
	flip := map[string]string{"left": "right", "right": "left"}
	var want []string
	for _, f := range a.Findings {
		s := f.Code + "/" + flip[f.Side]
		want = append(want, s)
	}
	var got []string
	for _, f := range b.Findings {
		got = append(got, f.Code+"/"+f.Side)
	}
	if diff := cmp.Diff(want, got, cmpSorted); diff != "" {
		t.Errorf("mirrored findings (-want +got):\n%s", diff)
	}
	if a.Verdict != b.Verdict || math.Abs(a.Left.TensionN-b.Right.TensionN) > 1e-9 {
		t.Errorf("verdicts %s/%s tensions %v/%v", a.Verdict, b.Verdict, a.Left.TensionN, b.Right.TensionN)
	}
}

var cmpSorted = cmp.Transformer("sort", func(s []string) []string {
	c := append([]string(nil), s...)
	for i := range c {
		for j := i + 1; j < len(c); j++ {
			if c[j] < c[i] {
				c[i], c[j] = c[j], c[i]
			}
		}
	}
	return c
})
