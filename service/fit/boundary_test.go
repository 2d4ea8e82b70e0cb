package fit

import (
	"slices"
	"testing"

	"wheelbench/service/spoke"
)

// boundary is one parts rule at its limit: set(x) puts the compared
// quantity at x on the plain road front; the finding fires just past limit
// in the direction dir (+1 above, −1 below) and not just before it. The
// geometry is computed for each wheel.
type boundary struct {
	code  string
	limit float64 // with its derivation beside each row
	dir   float64
	set   func(in *Input, x float64)
}

const delta = 1e-6

var boundaries = []boundary{
	// Head 4.0 mm (14 gauge, typical) vs hole: hole + 0.8 (common practice)
	// → head limit 2.6 + 0.8.
	{CodeSpokeHeadPullsThrough, 3.4, -1, func(in *Input, x float64) { in.Spoke.HeadDiameterMM = &x }},
	// Spoke 2.0 mm + 0.8 mm clearance (common practice) = 2.8 mm hole.
	{CodeSpokeLooseInFlangeHole, 2.8, +1, func(in *Input, x float64) {
		in.Hub.Left.HoleDiameterMM, in.Hub.Right.HoleDiameterMM = &x, &x
	}},
	// Flange 2.7 mm + 0.3 mm tolerance (common practice) = 3.0 mm elbow.
	{CodeElbowGap, 3.0, +1, func(in *Input, x float64) { in.Spoke.ElbowLengthMM = &x }},
	// Flange 2.7 mm − 0.3 mm tolerance (common practice) = 2.4 mm elbow.
	{CodeElbowTooShort, 2.4, -1, func(in *Input, x float64) { in.Spoke.ElbowLengthMM = &x }},
	// Shank 3.9 mm + 0.2 mm clearance (common practice) = 4.1 mm rim hole.
	{CodeNippleWontPassRimHole, 4.1, -1, func(in *Input, x float64) { in.Rim.HoleDiameterMM = x }},
	// Rim hole 4.3 mm + 0.8 mm margin (common practice) = 5.1 mm nipple head.
	{CodeNippleHeadPullsThrough, 5.1, -1, func(in *Input, x float64) { in.Nipple.HeadDiameterMM = x }},
	// Spoke size 2.0 mm + 0.1 mm tolerance (common practice).
	{CodeThreadMismatch, 2.1, +1, func(in *Input, x float64) { in.Nipple.Thread = spoke.Thread{SizeMM: &x, TPI: f64(56)} }},
	// A measured 2.0 mm + 0.3 mm rolled rise (from memory) + 0.1 mm
	// tolerance: a nipple measured above 2.4 mm fits no 2.0 mm spoke.
	{CodeThreadMismatch, 2.4, +1, func(in *Input, x float64) { in.Nipple.Thread = spoke.Thread{DiameterMM: &x, TPI: f64(56)} }},
	// 56 TPI + 0.5 TPI tolerance (common practice).
	{CodeThreadMismatch, 56.5, +1, func(in *Input, x float64) { in.Nipple.Thread.TPI = &x }},
	// Spoke end at the nipple head (no stock given). The 12 mm nipple's
	// thread starts s below its head and runs 6 mm (half its length, from
	// memory); the 14-gauge spoke's thread is 9.5 mm (from memory). At e = 0
	// the engagement is 9.5 − s for s ≥ 3.5; it must reach 2 × 2.0 mm
	// (common practice) → s = 5.5 mm.
	{CodeThreadEngagementShort, 5.5, +1, func(in *Input, x float64) { in.Nipple.ThreadStartMM = &x }},
	// The spoke body enters the nipple thread when 0 > 9.5 − 2 − L → a
	// nipple thread longer than 7.5 mm.
	{CodeSpokeThreadBottoms, 7.5, +1, func(in *Input, x float64) { in.Nipple.ThreadLengthMM = &x }},
	// Rim maker's limit 1300 N, equal sides.
	{CodeTensionAboveRimLimit, 1300, +1, func(in *Input, x float64) { in.TargetTensionN = x }},
	// UTS 1696 MPa (ASTM A313, materials.tsv) / 2.5 (common practice) =
	// 678.4 MPa over the stress area of a thread rolled on 2.0 mm wire at
	// 56 TPI: pitch diameter ≈ wire (from memory), so π/4·(2.0 − 0.288681 ×
	// 25.4/56)² = 2.743705862 mm² (ISO 898-1 stress-area formula; 30-digit
	// decimal evaluation) → 1861.330057 N. The rim limit is removed so only
	// the stress rule acts.
	{CodeSpokeStressHigh, 1861.330057, +1, func(in *Input, x float64) {
		in.Rim.MaxTensionN, in.TargetTensionN = nil, x
	}},
	// A symmetric front: both sides at the target; 500 N (common practice).
	{CodeLowSideTensionLow, 500, -1, func(in *Input, x float64) { in.TargetTensionN = x }},
	// Rim 622 mm ± 1 mm (ISO 5775 sizes are whole mm, the closest pair 3 mm apart).
	{CodeTyreRimDiameterMismatch, 623, +1, func(in *Input, x float64) { in.Tyre.BSDMM = x }},
	// 19 mm rim × 1.4 (CTC guidance, B) = 26.6 mm tyre: info below.
	{CodeTyreWidthOutsideRecommended, 26.6, -1, func(in *Input, x float64) { in.Tyre.WidthMM = x }},
	// 19 mm rim × 2.6 (accepted band, common practice) = 49.4 mm: warning above.
	{CodeTyreWidthOutOfRange, 49.4, +1, func(in *Input, x float64) { in.Tyre.WidthMM = x }},
	// Hub 100 mm + 1 mm tolerance (common practice).
	{CodeHubSpacingMismatch, 101, +1, func(in *Input, x float64) { in.FrameSpacingMM = &x }},
}

func TestBoundaries(t *testing.T) {
	for _, b := range boundaries {
		for _, past := range []bool{false, true} {
			x := b.limit - b.dir*delta
			if past {
				x = b.limit + b.dir*delta
			}
			in := roadFront()
			b.set(&in, x)
			r := mustCheck(t, in, DefaultOptions())
			got := slices.ContainsFunc(r.Findings, func(f Finding) bool { return f.Code == b.code })
			if got != past {
				t.Errorf("%s at %.9g (limit %.9g): fired %v, want %v; findings %v",
					b.code, x, b.limit, got, past, codes(r.Findings, Info))
			}
		}
	}
}

// TestCountRules covers the rules whose inputs are not continuous.
func TestCountRules(t *testing.T) {
	cases := []struct {
		code string
		set  func(*Input)
	}{
		{CodeHoleCountMismatch, func(in *Input) { in.Rim.Holes = 34 }}, // 32 vs 34
		{CodeRimLimitUnknown, func(in *Input) { in.Rim.MaxTensionN = nil }},
		{CodeBSDNotInTable, func(in *Input) { in.Rim.BSDMM, in.Tyre.BSDMM = 612, 612 }},
	}
	for _, c := range cases {
		in := roadFront()
		if r := mustCheck(t, in, DefaultOptions()); slices.ContainsFunc(r.Findings, func(f Finding) bool { return f.Code == c.code }) {
			t.Errorf("%s fires on the plain road front", c.code)
		}
		c.set(&in)
		r := mustCheck(t, in, DefaultOptions())
		if !slices.ContainsFunc(r.Findings, func(f Finding) bool { return f.Code == c.code }) {
			t.Errorf("%s does not fire; findings %v", c.code, codes(r.Findings, Info))
		}
	}
}

// TestEverySeverityOnce: every code has exactly one severity, and the
// verdict reads errors only.
func TestEverySeverityOnce(t *testing.T) {
	for _, c := range Codes() {
		if s := SeverityOf(c); s != Error && s != Warning && s != Info {
			t.Errorf("%s has no severity", c)
		}
	}
	if v := verdictOf([]Finding{{Code: CodeLowBracingAngle, Severity: Warning}}); v != Fits {
		t.Errorf("a warning changed the verdict to %s", v)
	}
}
