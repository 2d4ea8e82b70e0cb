package geometry

import (
	"encoding/json"
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"

	"wheelbench/service/spoke"
)

// The tests in this file check the lacing plan the service answers against
// a second computation done another way: each plan entry's holes are placed
// in 3-D with gonum's spatial/r3 (a general-purpose reference library) from
// the entry's own angles and the request's sizes, and the spoke is measured
// as the distance between them; crossings are counted with a segment
// intersection test. Nothing here uses the package's closed forms.

// planCase is one wheel to plan.
type planCase struct {
	name string
	w    Wheel
}

func planCases() []planCase {
	jb := func(pcd, c2f, hole float64) Flange {
		return Flange{PCDMM: pcd, CenterToFlangeMM: c2f, HoleDiameterMM: fp(hole)}
	}
	withSpokes := func(f Flange, n int) Flange { f.Spokes = ip(n); return f }
	return []planCase{
		{"32h 3x rear", Wheel{SpokeCount: 32, Hub: Hub{Left: jb(45, 36, 2.6), Right: jb(45, 18.5, 2.6), Driven: true},
			Rim: Rim{ERDMM: 599, SpokeHoleOffsetMM: 2}, Crosses: cross(3, 3)}},
		{"36h disc front 3x/2x", Wheel{SpokeCount: 36, Hub: Hub{Left: jb(58, 22, 2.5), Right: jb(45, 34.5, 2.5), Brake: BrakeRotor},
			Rim: Rim{ERDMM: 602}, Crosses: cross(3, 2)}},
		{"28h radial/2x, staggered, washers", Wheel{SpokeCount: 28, Hub: Hub{Left: jb(40, 30, 2.4), Right: jb(40, 20, 2.4)},
			Rim: Rim{ERDMM: 406, SpokeHoleOffsetMM: -1.5, StaggerMM: Sides{Left: 2.2, Right: 1.7}, NippleWasherMM: 0.6}, Crosses: cross(0, 2)}},
		{"24h 2:1 rear", Wheel{SpokeCount: 24, Hub: Hub{Left: withSpokes(jb(44, 35, 2.6), 8), Right: withSpokes(jb(44, 20, 2.6), 16), Driven: true},
			Rim: Rim{ERDMM: 590}, Crosses: cross(1, 2)}},
		{"30h 2:1 rear, radial left", Wheel{SpokeCount: 30, Hub: Hub{Left: withSpokes(jb(50, 34, 2.6), 10), Right: withSpokes(jb(50, 19, 2.6), 20), Driven: true},
			Rim: Rim{ERDMM: 540, SpokeHoleOffsetMM: 3}, Crosses: cross(0, 2)}},
		{"20h 3:2 (8 left, 12 right)", Wheel{SpokeCount: 20, Hub: Hub{Left: withSpokes(jb(42, 33, 2.6), 8), Right: withSpokes(jb(42, 21, 2.6), 12)},
			Rim: Rim{ERDMM: 600}, Crosses: cross(1, 2)}},
		{"24h straight pull, tangential", Wheel{SpokeCount: 24, Hub: Hub{Type: StraightPull,
			Left:  Flange{PCDMM: 42, CenterToFlangeMM: 30, SpokeExitOffsetMM: fp(1.2)},
			Right: Flange{PCDMM: 42, CenterToFlangeMM: 30, SpokeExitOffsetMM: fp(1.2)}},
			Rim: Rim{ERDMM: 588}, Crosses: cross(2, 2)}},
		{"24h straight pull, angled seats 60°/radial", Wheel{SpokeCount: 24, Hub: Hub{Type: StraightPull,
			Left:  Flange{PCDMM: 50, CenterToFlangeMM: 28, Exit: ExitAngled, ExitAngleDeg: fp(60)},
			Right: Flange{PCDMM: 50, CenterToFlangeMM: 24}},
			Rim: Rim{ERDMM: 600}, Crosses: cross(2, 0)}},
		{"48h tandem 3x", Wheel{SpokeCount: 48, Hub: Hub{Kind: KindTandem, Left: jb(64, 33, 2.7), Right: jb(64, 21, 2.7), Driven: true},
			Rim: Rim{ERDMM: 599}, Crosses: cross(3, 3)}},
	}
}

// planHoles are a plan entry's hub and rim points, placed from the entry's
// angles and the request's sizes.
func planHoles(w Wheel, e LacingSpoke) (hub, rim r3.Vec) {
	f, zHub := w.Hub.Right, -w.Hub.Right.CenterToFlangeMM
	zRim := w.Rim.SpokeHoleOffsetMM - w.Rim.StaggerMM.Right
	if e.Side == "left" {
		f, zHub = w.Hub.Left, w.Hub.Left.CenterToFlangeMM
		zRim = w.Rim.SpokeHoleOffsetMM + w.Rim.StaggerMM.Left
	}
	// A washer under each nipple head lifts the head away from the hub.
	rimR := w.Rim.ERDMM/2 + w.Rim.NippleWasherMM
	rad := math.Pi / 180
	hub = r3.Add(r3.Rotate(r3.Vec{X: f.PCDMM / 2}, e.HubHoleDeg*rad, zAxis), r3.Vec{Z: zHub})
	rim = r3.Add(r3.Rotate(r3.Vec{X: rimR}, e.RimHoleDeg*rad, zAxis), r3.Vec{Z: zRim})
	return hub, rim
}

// TestPlanAgainstHolePositions: for every case, the plan has one entry
// per spoke in spoke order, each rim hole at (spoke − ½)·360°/N from the
// valve; each entry's length is the distance between its two placed holes
// less the hub correction (half the hole for J-bend, the exit offset for a
// seated spoke); crossed J-bend spokes cross exactly `crosses` spokes of
// their own flange in the wheel plane; seated spokes leave their hole
// circle at the angle the seat gives; trailing spokes are heads in and
// leading ones heads out; the two spokes beside the valve are both
// trailing; the length groups cover every spoke; and the rim's net
// lateral force over every spoke is zero at the answered tensions.
func TestPlanAgainstHolePositions(t *testing.T) {
	for _, c := range planCases() {
		t.Run(c.name, func(t *testing.T) {
			w := c.w
			w.IncludeLacing = true
			w.TargetTensionN = fp(1200)
			res, err := Compute(w)
			if err != nil {
				t.Fatal(err)
			}
			n := w.SpokeCount
			if len(res.Lacing) != n || res.KeySpoke != 1 {
				t.Fatalf("plan has %d entries (key spoke %d), want %d and 1", len(res.Lacing), res.KeySpoke, n)
			}
			count := map[string]int{}
			var lateral, scale float64
			for i, e := range res.Lacing {
				count[e.Side]++
				if e.Spoke != i+1 {
					t.Fatalf("entry %d is spoke %d", i, e.Spoke)
				}
				if want := (float64(i) + 0.5) * 360 / float64(n); !near(e.RimHoleDeg, want, 1e-9) {
					t.Errorf("spoke %d rim hole at %.9f°, want %.9f°", e.Spoke, e.RimHoleDeg, want)
				}
				f, side := w.Hub.Right, res.Right
				if e.Side == "left" {
					f, side = w.Hub.Left, res.Left
				}
				hub, rim := planHoles(w, e)
				d := r3.Norm(r3.Sub(rim, hub))
				want := d - *orZero(f.HoleDiameterMM)/2
				if side.Exit != ExitJBend {
					want = d - *orZero(f.SpokeExitOffsetMM)
				}
				if !near(e.LengthMM, want, 1e-9) {
					t.Errorf("spoke %d (%s): plan %.12f mm, from its holes %.12f mm", e.Spoke, e.Side, e.LengthMM, want)
				}
				inGroup := false
				for _, g := range side.LengthGroups {
					inGroup = inGroup || near(g.LengthMM, e.LengthMM, groupTolMM)
				}
				if !inGroup {
					t.Errorf("spoke %d's %.4f mm is in none of %s's groups", e.Spoke, e.LengthMM, e.Side)
				}
				switch {
				case e.Direction == "trailing" && e.Head != "in", e.Direction == "leading" && e.Head != "out", e.Direction == "radial" && e.Head != "out":
					t.Errorf("spoke %d: %s spoke heads %s", e.Spoke, e.Direction, e.Head)
				}
				// Leading: the rim end lies ahead (clockwise) of the hub end.
				ahead := math.Remainder(e.RimHoleDeg-e.HubHoleDeg, 360)
				if e.Direction == "leading" && ahead <= 0 || e.Direction == "trailing" && ahead >= 0 {
					t.Errorf("spoke %d %s, but its rim hole is %.3f° from its hub hole", e.Spoke, e.Direction, ahead)
				}
				if side.Exit != ExitJBend {
					// The seat's angle between the outward radius at the exit
					// point and the spoke's in-plane direction.
					flat := r3.Sub(rim, hub)
					flat.Z = 0
					got := math.Acos(math.Max(-1, math.Min(1, r3.Cos(flat, r3.Vec{X: hub.X, Y: hub.Y})))) * 180 / math.Pi
					want := 90.0
					if side.Exit == ExitAngled {
						want = *side.ExitAngleDeg
					}
					// acos near 0° loses digits: 1e-5° is still far below
					// anything a seat's machining holds.
					if !near(got, want, 1e-5) {
						t.Errorf("spoke %d leaves its seat at %.9f°, want %.9f°", e.Spoke, got, want)
					}
				}
				tension := *side.TensionN
				lateral += tension * r3.Unit(r3.Sub(hub, rim)).Z
				scale += tension
			}
			if count["left"] != res.Left.Spokes || count["right"] != res.Right.Spokes || count["left"]+count["right"] != n {
				t.Errorf("sides %v, flanges %d/%d", count, res.Left.Spokes, res.Right.Spokes)
			}
			for _, s := range []SideResult{res.Left, res.Right} {
				total := 0
				for _, g := range s.LengthGroups {
					total += g.Count
				}
				if total != s.Spokes {
					t.Errorf("groups hold %d spokes, flange %d", total, s.Spokes)
				}
			}
			if math.Abs(lateral) > 1e-9*scale {
				t.Errorf("net lateral force on the rim %.3g N", lateral)
			}
			if a, b := res.Lacing[0], res.Lacing[n-1]; a.Direction != "radial" && b.Direction != "radial" && (a.Direction != "trailing" || b.Direction != "trailing") {
				t.Errorf("spokes beside the valve: %s and %s, want both trailing", a.Direction, b.Direction)
			}
			// Crossings in the wheel plane, J-bend sides.
			for _, s := range []struct {
				name string
				r    SideResult
				k    int
			}{{"left", res.Left, *w.Crosses.Left}, {"right", res.Right, *w.Crosses.Right}} {
				if s.r.Exit != ExitJBend {
					continue
				}
				type seg struct{ a, b r3.Vec }
				var segs []seg
				var nums []int
				for _, e := range res.Lacing {
					if e.Side == s.name {
						h, r := planHoles(w, e)
						segs = append(segs, seg{h, r})
						nums = append(nums, e.Spoke)
					}
				}
				for i, a := range segs {
					crossings := 0
					for j, b := range segs {
						if i != j && inPlaneCross(builtSpoke{hub: a.a, rim: a.b}, builtSpoke{hub: b.a, rim: b.b}) {
							crossings++
						}
					}
					if crossings != s.k {
						t.Errorf("%s spoke %d crosses %d spokes of its flange, want %d", s.name, nums[i], crossings, s.k)
					}
				}
			}
		})
	}
}

func orZero(p *float64) *float64 {
	if p == nil {
		return new(float64)
	}
	return p
}

// TestPlanMatchesAnswerWithoutPlan: asking for the plan changes nothing
// else in the answer.
func TestPlanMatchesAnswerWithoutPlan(t *testing.T) {
	for _, c := range planCases() {
		w := c.w
		w.TargetTensionN, w.Spoke, w.Stock = fp(1100), &spoke.Spec{DiameterMM: fp(2)}, &Stock{IncrementMM: fp(2)}
		a, errA := Compute(w)
		w.IncludeLacing = true
		b, errB := Compute(w)
		if errA != nil || errB != nil {
			t.Fatal(c.name, errA, errB)
		}
		ja, _ := json.Marshal([]any{a.Left, a.Right, a.TensionRatioLeftToRight})
		jb, _ := json.Marshal([]any{b.Left, b.Right, b.TensionRatioLeftToRight})
		if string(ja) != string(jb) {
			t.Errorf("%s: the answer changes when the plan is asked for", c.name)
		}
		if a.Lacing != nil {
			t.Errorf("%s: plan answered without being asked for", c.name)
		}
	}
}

// TestNippleWasherLengthens: a washer of thickness t under each nipple head
// lifts the head t farther from the hub along the radius, so the spoke
// ends at ERD/2 + t: the same wheel as one with an ERD 2t larger and no
// washer (definition), and longer than without the washer. Hand-derived:
// 32 holes 3-cross (hub angle 67.5°), r = 22.5 mm, flanges 30 mm out,
// ERD 560 with a 1.0 mm washer → R = 281 mm:
//
//	in-plane² = 281² + 22.5² − 2·281·22.5·cos 67.5°
//	          = 78961 + 506.25 − 12645·0.3826834324 = 74628.21800…
//	length    = √(74628.21800 + 900) − 1.3 = 273.523976… mm
//
// (cos 67.5° = √(2 − √2)/2; the digits from a 30-digit decimal evaluation).
func TestNippleWasherLengthens(t *testing.T) {
	f := Flange{PCDMM: 45, CenterToFlangeMM: 30, HoleDiameterMM: fp(2.6)}
	w := Wheel{SpokeCount: 32, Hub: Hub{Left: f, Right: f}, Rim: Rim{ERDMM: 560, NippleWasherMM: 1.0}, Crosses: cross(3, 3)}
	with, err := Compute(w)
	if err != nil {
		t.Fatal(err)
	}
	if !near(with.Left.LengthMM, 273.523976, 1e-6) {
		t.Errorf("length with a 1 mm rim washer %.6f mm, hand-derived 273.523976", with.Left.LengthMM)
	}
	w.Rim = Rim{ERDMM: 562}
	wider, _ := Compute(w)
	if with.Left.LengthMM != wider.Left.LengthMM {
		t.Errorf("washer 1 mm on ERD 560 gives %.12f, ERD 562 gives %.12f: they are the same wheel", with.Left.LengthMM, wider.Left.LengthMM)
	}
	w.Rim = Rim{ERDMM: 560}
	without, _ := Compute(w)
	// The end moves 1 mm out along the radius; the spoke, nearly radial,
	// grows by just under that (by x/L ≈ 0.99 of it). Shortening it
	// instead, as a washer was once applied, is wrong by about 2 mm.
	if d := with.Left.LengthMM - without.Left.LengthMM; d < 0.95 || d > 1.0 {
		t.Errorf("the washer lengthens the spoke by %.4f mm; it must lengthen it by just under its 1 mm", d)
	}
}

// TestTangentialSeat: a seated spoke leaving its hole circle along the
// tangent meets the rim after √(R² − r²) in the wheel plane (right angle
// at the exit point, Pythagoras), whatever the crosses. Hand-derived: 24
// holes, ERD 588 (R = 294), pcd 42 (r = 21), flanges 30 mm out, exit
// offset 1.2 mm: √(294² − 21² + 30²) = √86895 = 294.7795786… mm, less
// 1.2 = 293.5795786… The same wheel computed as a J-bend hub without the
// hole correction (the spoke at the 2-cross hub angle of 60° from its
// hole) is 9 mm shorter: √(294² + 21² − 2·294·21·½ + 30²) − 1.2 = 284.46…
func TestTangentialSeat(t *testing.T) {
	f := Flange{PCDMM: 42, CenterToFlangeMM: 30, SpokeExitOffsetMM: fp(1.2)}
	for _, k := range []int{1, 2, 3} {
		w := Wheel{SpokeCount: 24, Hub: Hub{Type: StraightPull, Left: f, Right: f}, Rim: Rim{ERDMM: 588}, Crosses: cross(k, k)}
		res, err := Compute(w)
		if err != nil {
			t.Fatal(err)
		}
		if res.Left.Exit != ExitTangential {
			t.Errorf("%d-cross straight pull computed as %q, want tangential by default", k, res.Left.Exit)
		}
		if !near(res.Left.LengthMM, 293.5795786, 1e-6) {
			t.Errorf("%d-cross: tangential length %.7f, hand-derived 293.5795786", k, res.Left.LengthMM)
		}
		// The seat's in-plane angle is arccos(r/R) = arccos(21/294).
		if !near(res.Left.HubAngleDeg, math.Acos(21.0/294)*180/math.Pi, 1e-9) {
			t.Errorf("hub angle %.9f°, want arccos(r/R)", res.Left.HubAngleDeg)
		}
	}
	jb := math.Sqrt(294*294+21*21-2*294*21*0.5+30*30) - 1.2
	if d := 293.5795786 - jb; d < 9 || d > 10 {
		t.Errorf("the J-bend model at 2-cross would be %.2f mm shorter, expected about 9", d)
	}
}

// TestAngledSeat: a seat at θ to the radius sends the spoke t = −r·cos θ +
// √(R² − r²·sin² θ) in the plane (the rim circle cut by a line from the
// exit point, quadratic formula). θ = 60°, r = 25, R = 300, flange 28 mm
// out: t = −12.5 + √(90000 − 468.75) = 286.717730… mm; length √(t² + 28²)
// = 288.081684… mm (30-digit decimal evaluation). θ = 0 is radial: R − r
// in the plane.
func TestAngledSeat(t *testing.T) {
	w := Wheel{SpokeCount: 24, Hub: Hub{Type: StraightPull,
		Left:  Flange{PCDMM: 50, CenterToFlangeMM: 28, Exit: ExitAngled, ExitAngleDeg: fp(60)},
		Right: Flange{PCDMM: 50, CenterToFlangeMM: 28, Exit: ExitAngled, ExitAngleDeg: fp(0)}},
		Rim: Rim{ERDMM: 600}, Crosses: cross(2, 0)}
	res, err := Compute(w)
	if err != nil {
		t.Fatal(err)
	}
	tIn := -12.5 + math.Sqrt(90000-468.75)
	if !near(tIn, 286.717730, 1e-6) || !near(res.Left.LengthMM, 288.081684, 1e-6) || !near(res.Left.LengthMM, math.Hypot(tIn, 28), 1e-9) {
		t.Errorf("60° seat: length %.6f, hand-derived 288.081684 (in-plane %.6f)", res.Left.LengthMM, tIn)
	}
	if !near(res.Right.LengthMM, math.Hypot(275, 28), 1e-9) {
		t.Errorf("radial seat: length %.6f, want √(275² + 28²)", res.Right.LengthMM)
	}
	if res.Left.Exit != ExitAngled || res.Left.ExitAngleDeg == nil || !near(*res.Left.ExitAngleDeg, 60, 1e-12) {
		t.Errorf("left exit %q %v, want angled 60°", res.Left.Exit, res.Left.ExitAngleDeg)
	}
}

// TestUnevenLacing: a 2:1 wheel's tension ratio follows the spoke counts,
// n_L·T_L·sin β_L = n_R·T_R·sin β_R. With 8 left and 16 right spokes whose
// bracing sines are about 0.124 and 0.072 (plane geometry of the 24h 2:1
// case), T_L/T_R = 16·0.072/(8·0.124) ≈ 1.15: close to balanced, where the
// same hub entered as an even wheel gives about 0.58.
func TestUnevenLacing(t *testing.T) {
	var c planCase
	for _, x := range planCases() {
		if x.name == "24h 2:1 rear" {
			c = x
		}
	}
	res, err := Compute(c.w)
	if err != nil {
		t.Fatal(err)
	}
	sl, sr := math.Sin(res.Left.BracingAngleDeg/deg), math.Sin(res.Right.BracingAngleDeg/deg)
	want := 16 * sr / (8 * sl)
	if !near(res.TensionRatioLeftToRight, want, 1e-9) || !near(want, 1.15, 0.01) {
		t.Errorf("2:1 ratio %.4f, counts give %.4f", res.TensionRatioLeftToRight, want)
	}
	even := c.w
	even.Hub.Left.Spokes, even.Hub.Right.Spokes = nil, nil
	er, err := Compute(even)
	if err != nil {
		t.Fatal(err)
	}
	if !near(er.TensionRatioLeftToRight, sr/sl, 0.02) || er.TensionRatioLeftToRight > 0.7 {
		t.Errorf("as an even wheel the ratio is %.3f; expected about %.3f", er.TensionRatioLeftToRight, sr/sl)
	}
	if res.Left.Spokes != 8 || res.Right.Spokes != 16 {
		t.Errorf("flange spokes %d/%d, want 8/16", res.Left.Spokes, res.Right.Spokes)
	}
}

// TestHeadGapHandValue, by plane geometry: 36 holes 4-cross on a 45 mm
// flange, hole H at (22.5, 0), the next hole P at 20° = (21.14, 7.70), rim
// hole at 80° on R = 300 = (52.09, 295.44): the unit spoke direction is
// (0.0997, 0.9950) and |HP × u| = |−1.357·0.9950 − 7.695·0.0997| ≈ 2.12
// mm, less than head radius 2 + spoke radius 1 mm: it runs over the head.
// At 3-cross (rim hole at 60°) the gap is ≈ 4.6 mm: clear. The answer's
// max_crosses_clear_of_heads says 3.
func TestHeadGapHandValue(t *testing.T) {
	p := 20 * math.Pi / 180
	if g := headGap(22.5, 300, 4*p, p); !near(g, 2.12, 0.01) {
		t.Errorf("head gap %.4f mm, hand value ≈ 2.12", g)
	}
	if g := headGap(22.5, 300, 3*p, p); !near(g, 4.6, 0.05) {
		t.Errorf("head gap %.4f mm at 3-cross, hand value ≈ 4.6", g)
	}
	f := Flange{PCDMM: 45, CenterToFlangeMM: 35, HoleDiameterMM: fp(2.6)}
	res, err := Compute(Wheel{SpokeCount: 36, Hub: Hub{Left: f, Right: f}, Rim: Rim{ERDMM: 600}, Crosses: cross(4, 4),
		Spoke: &spoke.Spec{DiameterMM: fp(2)}})
	if err != nil {
		t.Fatal(err)
	}
	if res.Left.MaxCrosses != 4 || res.Left.MaxCrossesClearOfHeads != 3 {
		t.Errorf("max crosses %d, clear of heads %d; want 4 and 3", res.Left.MaxCrosses, res.Left.MaxCrossesClearOfHeads)
	}
	if sf := res.Facts.Sides[0]; !sf.PassesHeads || !near(sf.HeadGapMM, 2.12, 0.01) || sf.ClearMM != 3 {
		t.Errorf("facts %+v: want a 2.12 mm gap against a 3 mm need", sf)
	}
}

// TestClearCrossesAgainstScan: max_crosses_clear_of_heads is the largest
// cross count whose spokes pass every neighbouring head, found here by
// computing every count from 1 to max_crosses and reading the head gap
// against the gap the head and spoke need.
func TestClearCrossesAgainstScan(t *testing.T) {
	for _, n := range []int{24, 28, 32, 36, 40, 48} {
		for _, pcd := range []float64{38, 45, 58, 70} {
			for k := 0; k <= 4; k++ {
				f := Flange{PCDMM: pcd, CenterToFlangeMM: 35, HoleDiameterMM: fp(2.6)}
				w := Wheel{SpokeCount: n, Hub: Hub{Left: f, Right: f}, Rim: Rim{ERDMM: 600}, Crosses: cross(k, 0),
					Spoke: &spoke.Spec{DiameterMM: fp(2)}}
				res, err := Compute(w)
				if err != nil {
					continue
				}
				want := 0
				for c := 1; c <= res.Left.MaxCrosses; c++ {
					w.Crosses = cross(c, 0)
					r, err := Compute(w)
					if err == nil && (!r.Facts.Sides[0].PassesHeads || r.Facts.Sides[0].HeadGapMM >= r.Facts.Sides[0].ClearMM) {
						want = c
					}
				}
				if got := res.Left.MaxCrossesClearOfHeads; got != want {
					t.Errorf("%dh pcd %v at %d-cross: clear of heads %d, scan %d", n, pcd, k, got, want)
				}
			}
		}
	}
}
