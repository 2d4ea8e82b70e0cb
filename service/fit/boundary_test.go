package fit

import "testing"

// boundary is one rule at its limit: set(x) puts the compared quantity at x
// on the plain road front; the finding fires just past limit in the direction
// dir (+1 above, −1 below) and not just before it.
type boundary struct {
	code     string
	severity Severity
	limit    float64 // with its derivation beside each row
	dir      float64
	set      func(in *Input, g *Geometry, x float64)
}

const delta = 1e-6

var boundaries = []boundary{
	// Head 4.0 mm vs hole: hole + 0.8 (common practice) → head limit 2.6 + 0.8.
	{CodeSpokeHeadPullsThrough, Error, 3.4, -1, func(in *Input, _ *Geometry, x float64) { in.Spoke.HeadDiameterMM = &x }},
	// Spoke 2.0 mm + 0.8 mm clearance (common practice) = 2.8 mm hole.
	{CodeSpokeLooseInFlangeHole, Warning, 2.8, +1, func(in *Input, _ *Geometry, x float64) {
		in.Hub.Left.HoleDiameterMM, in.Hub.Right.HoleDiameterMM = x, x
	}},
	// Flange 2.7 mm + 0.3 mm tolerance (common practice) = 3.0 mm elbow.
	{CodeElbowGap, Error, 3.0, +1, func(in *Input, _ *Geometry, x float64) { in.Spoke.ElbowLengthMM = &x }},
	// Flange 2.7 mm − 0.3 mm tolerance (common practice) = 2.4 mm elbow.
	{CodeElbowTooShort, Error, 2.4, -1, func(in *Input, _ *Geometry, x float64) { in.Spoke.ElbowLengthMM = &x }},
	// Shank 3.9 mm + 0.2 mm clearance (common practice) = 4.1 mm rim hole.
	{CodeNippleWontPassRimHole, Error, 4.1, -1, func(in *Input, _ *Geometry, x float64) { in.Rim.HoleDiameterMM = x }},
	// Rim hole 4.3 mm + 0.8 mm margin (common practice) = 5.1 mm nipple head.
	{CodeNippleHeadPullsThrough, Error, 5.1, -1, func(in *Input, _ *Geometry, x float64) { in.Nipple.HeadDiameterMM = x }},
	// Spoke thread 2.0 mm + 0.05 mm tolerance (common practice).
	{CodeThreadMismatch, Error, 2.05, +1, func(in *Input, _ *Geometry, x float64) { in.Nipple.Thread.DiameterMM = x }},
	// 56 TPI + 0.5 TPI tolerance (common practice).
	{CodeThreadMismatch, Error, 56.5, +1, func(in *Input, _ *Geometry, x float64) { in.Nipple.Thread.TPI = x }},
	// Nipple thread from −2 to −8 mm (12 mm nipple: start 2 mm, half its
	// length, from memory); spoke thread 9.5 mm (14 gauge, from memory). For
	// e < −2 the engagement is e + 8; it must reach 2 × 2.0 mm (common
	// practice) → e = −4 mm.
	{CodeThreadEngagementShort, Error, -4, -1, func(_ *Input, g *Geometry, x float64) { g.Left.SpokeEndMM = &x }},
	// The spoke body enters the nipple thread when e − 9.5 > −8 → e = 1.5 mm.
	{CodeSpokeThreadBottoms, Error, 1.5, +1, func(_ *Input, g *Geometry, x float64) { g.Right.SpokeEndMM = &x }},
	// At most 0.5 mm past the nipple head (common practice).
	{CodeSpokeProtrudesPastNipple, Error, 0.5, +1, func(_ *Input, g *Geometry, x float64) { g.Left.SpokeEndMM = &x }},
	// Rim maker's limit 1300 N, equal sides.
	{CodeTensionAboveRimLimit, Error, 1300, +1, func(in *Input, _ *Geometry, x float64) { in.TargetTensionN = x }},
	// UTS 1696 MPa (ASTM A313, materials.tsv) / 2.5 (common practice) =
	// 678.4 MPa over the thread stress area π/4 (2.0 − 0.9382 × 25.4/56)² =
	// 1.9469408 mm² (ISO 898-1 stress-area formula; computed with Python) →
	// 1320.8046518 N. The rim limit is removed so only the stress rule acts.
	{CodeSpokeStressHigh, Error, 1320.804651802518, +1, func(in *Input, _ *Geometry, x float64) {
		in.Rim.MaxTensionN, in.TargetTensionN = nil, x
	}},
	// Target 1000 N: the slack side is 1000 × ratio; 400 N (common practice)
	// at ratio 0.4.
	{CodeLowSideTensionLow, Warning, 0.4, -1, func(_ *Input, g *Geometry, x float64) { g.TensionRatioLeftToRight = x }},
	// Rim 622 mm ± 1 mm (ISO 5775 sizes are whole mm, the closest pair 3 mm apart).
	{CodeTyreRimDiameterMismatch, Error, 623, +1, func(in *Input, _ *Geometry, x float64) { in.Tyre.BSDMM = x }},
	// 19 mm rim × 1.4 (CTC guidance, B) = 26.6 mm tyre: info below.
	{CodeTyreWidthOutOfRange, Info, 26.6, -1, func(in *Input, _ *Geometry, x float64) { in.Tyre.WidthMM = x }},
	// 19 mm rim × 2.6 (accepted band, common practice) = 49.4 mm: warning above.
	{CodeTyreWidthOutOfRange, Warning, 49.4, +1, func(in *Input, _ *Geometry, x float64) { in.Tyre.WidthMM = x }},
	// Hub 100 mm + 1 mm tolerance (common practice).
	{CodeHubSpacingMismatch, Error, 101, +1, func(in *Input, _ *Geometry, x float64) { in.FrameSpacingMM = &x }},
}

func fired(r Report, code string, sev Severity) bool {
	for _, f := range r.Findings {
		if f.Code == code && f.Severity == sev {
			return true
		}
	}
	return false
}

func TestBoundaries(t *testing.T) {
	for _, b := range boundaries {
		for _, past := range []bool{false, true} {
			x := b.limit - b.dir*delta
			if past {
				x = b.limit + b.dir*delta
			}
			in, g := roadFront()
			b.set(&in, &g, x)
			r := mustCheck(t, in, g, DefaultOptions())
			if got := fired(r, b.code, b.severity); got != past {
				t.Errorf("%s (%s) at %.9g (limit %.9g): fired %v, want %v; findings %v",
					b.code, b.severity, x, b.limit, got, past, codes(r.Findings, Info))
			}
		}
	}
}

// TestBooleanAndCountRules covers the rules whose inputs are not continuous.
func TestBooleanAndCountRules(t *testing.T) {
	cases := []struct {
		code string
		set  func(*Input, *Geometry)
	}{
		{CodeHoleCountMismatch, func(in *Input, _ *Geometry) { in.Rim.Holes = 34 }}, // 32 vs 34
		{CodeLacingWrapsFlange, func(_ *Input, g *Geometry) { g.Left.Wraps = true }},
		{CodeSpokeHeadOverlap, func(_ *Input, g *Geometry) { g.Right.HeadOverlap = true }},
		{CodeRimLimitUnknown, func(in *Input, _ *Geometry) { in.Rim.MaxTensionN = nil }},
		{CodeBSDNotInTable, func(in *Input, _ *Geometry) { in.Rim.BSDMM, in.Tyre.BSDMM = 612, 612 }},
	}
	for _, c := range cases {
		in, g := roadFront()
		if r := mustCheck(t, in, g, DefaultOptions()); fired(r, c.code, severityOf(r, c.code)) {
			t.Errorf("%s fires on the plain road front", c.code)
		}
		c.set(&in, &g)
		r := mustCheck(t, in, g, DefaultOptions())
		if severityOf(r, c.code) == "" {
			t.Errorf("%s does not fire; findings %v", c.code, codes(r.Findings, Info))
		}
	}
}

func severityOf(r Report, code string) Severity {
	for _, f := range r.Findings {
		if f.Code == code {
			return f.Severity
		}
	}
	return ""
}

// TestLengthChangeFixes: a spoke 2 mm past the nipple head is fixed by a
// spoke 2 mm shorter (back to flush), which the verdict counts as a change.
func TestLengthChangeFixes(t *testing.T) {
	in, g := roadFront()
	g.Left.SpokeEndMM = f64(2)
	r := mustCheck(t, in, g, DefaultOptions())
	if r.Verdict != FitsWithChanges || len(r.Changes) != 1 || r.Changes[0].Kind != ChangeSpokeLength ||
		*r.Changes[0].ByMM != -2 || r.Changes[0].Side != "left" {
		t.Errorf("verdict %s changes %+v", r.Verdict, r.Changes)
	}
}

// TestOptionsConfigurable: a shop that allows a larger elbow gap sees no
// elbow_gap at 3.2 mm on a 2.7 mm flange.
func TestOptionsConfigurable(t *testing.T) {
	in, g := roadFront()
	in.Spoke.ElbowLengthMM = f64(3.2)
	opt := DefaultOptions()
	if r := mustCheck(t, in, g, opt); !fired(r, CodeElbowGap, Error) {
		t.Fatal("0.5 mm gap should fire at the default 0.3 mm tolerance")
	}
	opt.ElbowGapToleranceMM = 0.6
	if r := mustCheck(t, in, g, opt); fired(r, CodeElbowGap, Error) {
		t.Error("0.5 mm gap fired with a 0.6 mm tolerance")
	}
	opt.SpokeSafetyFactor = 0.5
	if _, err := Check(in, g, opt); err == nil {
		t.Error("a safety factor below 1 was accepted")
	}
}
