package geometry

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"reflect"
	"testing"
	"wheelbench/service/spoke"
)

// randomWheel draws a valid wheel from the ranges shops meet (24–72 holes,
// 30–70 mm flange circles, 10–45 mm flange offsets, 250–640 mm ERD), with a
// cross count within each side's limit. Deterministic for a given source.
func randomWheel(t *testing.T, rng *rand.Rand) Wheel {
	t.Helper()
	u := func(lo, hi float64) float64 { return lo + (hi-lo)*rng.Float64() }
	w := Wheel{SpokeCount: 4 * (6 + rng.IntN(13)), Crosses: cross(0, 0)}
	if rng.IntN(4) == 0 {
		w.Hub.Type = StraightPull
		w.Hub.Left = Flange{PCDMM: u(30, 70), CenterToFlangeMM: u(10, 45), SpokeExitOffsetMM: fp(u(-2, 2))}
		w.Hub.Right = Flange{PCDMM: u(30, 70), CenterToFlangeMM: u(10, 45), SpokeExitOffsetMM: fp(u(-2, 2))}
	} else {
		w.Hub.Left = Flange{PCDMM: u(30, 70), CenterToFlangeMM: u(10, 45), HoleDiameterMM: fp(u(2.2, 3))}
		w.Hub.Right = Flange{PCDMM: u(30, 70), CenterToFlangeMM: u(10, 45), HoleDiameterMM: fp(u(2.2, 3))}
	}
	w.Rim = Rim{ERDMM: u(250, 640), SpokeHoleOffsetMM: u(-4, 4), StaggerMM: Sides{u(0, 3), u(0, 3)}, NippleWasherMM: u(0, 1)}
	w.Spoke = &spoke.Spec{DiameterMM: fp(u(1.5, 2.2))}
	if rng.IntN(2) == 0 {
		w.Spoke.Sections = []spoke.Butt{{LengthMM: u(20, 60), DiameterMM: fp(u(1.8, 2.3))}}
	}
	if rng.IntN(4) == 0 {
		// Uneven lacing: about a third on the left (2:1), both flanges even.
		nl := 2 * int(math.Round(float64(w.SpokeCount)/6))
		w.Hub.Left.Spokes, w.Hub.Right.Spokes = ip(nl), ip(w.SpokeCount-nl)
	}
	w.TargetTensionN = fp(u(600, 1400))
	w.Stock = &Stock{IncrementMM: fp(float64(1 + rng.IntN(2)))}
	res, err := Compute(w)
	if err != nil {
		t.Fatalf("radial draw rejected: %v", err)
	}
	kl, kr := rng.IntN(res.Left.MaxCrosses+1), rng.IntN(res.Right.MaxCrosses+1)
	for {
		w.Crosses = cross(kl, kr)
		if _, err := Compute(w); err == nil {
			return w
		}
		// Uneven holes can pass the tangent a cross earlier.
		kl, kr = max(kl-1, 0), max(kr-1, 0)
	}
}

// mirror swaps left and right: flanges, crosses, stagger, and the rim offset
// changes sign (positive is toward the left flange).
func mirror(w Wheel) Wheel {
	m := w
	m.Spoke = w.Spoke
	m.Hub.Left, m.Hub.Right = w.Hub.Right, w.Hub.Left
	m.Crosses = Cross{Left: w.Crosses.Right, Right: w.Crosses.Left}
	m.Rim.SpokeHoleOffsetMM = -w.Rim.SpokeHoleOffsetMM
	m.Rim.StaggerMM = Sides{Left: w.Rim.StaggerMM.Right, Right: w.Rim.StaggerMM.Left}
	return m
}

// TestPropertyMirror: a mirrored hub gives mirrored sides (reflection
// symmetry of the wheel about its centre plane). Evenly laced wheels only:
// with uneven lacing a side's rim holes come in pairs, and which hole of a
// pair the leading spokes take is fixed by the plan's valve convention,
// which a mirror image does not keep — the mirrored wheel is another
// lacing, with lengths of its own.
func TestPropertyMirror(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for range 500 {
		w := randomWheel(t, rng)
		if w.Hub.Left.Spokes != nil {
			continue
		}
		a, errA := Compute(w)
		b, errB := Compute(mirror(w))
		if errA != nil || errB != nil {
			t.Fatal(errA, errB)
		}
		if d := sideDiff(a.Left, b.Right); d != "" {
			t.Fatalf("left vs mirrored right: %s\n%+v", d, w)
		}
		if d := sideDiff(a.Right, b.Left); d != "" {
			t.Fatalf("right vs mirrored left: %s\n%+v", d, w)
		}
		if !near(a.TensionRatioLeftToRight*b.TensionRatioLeftToRight, 1, 1e-12) {
			t.Fatalf("ratios %v and %v are not reciprocal", a.TensionRatioLeftToRight, b.TensionRatioLeftToRight)
		}
	}
}

func sideDiff(a, b SideResult) string {
	eq := func(x, y float64) bool { return near(x, y, 1e-9*math.Max(1, math.Abs(x))) }
	eqp := func(x, y *float64) bool { return (x == nil) == (y == nil) && (x == nil || eq(*x, *y)) }
	switch {
	case !eq(a.LengthMM, b.LengthMM):
		return "length_mm"
	case !eqp(a.OrderLengthMM, b.OrderLengthMM):
		return "order_length_mm"
	case !eqp(a.StockLengthMM, b.StockLengthMM):
		return "stock_length_mm"
	case !eqp(a.SpokeEndMM, b.SpokeEndMM):
		return "spoke_end_mm"
	case !eqp(a.TensionN, b.TensionN):
		return "tension_n"
	case !eq(a.BracingAngleDeg, b.BracingAngleDeg):
		return "bracing_angle_deg"
	case !eq(a.NippleAngleDeg.Total, b.NippleAngleDeg.Total), !eq(a.NippleAngleDeg.InPlane, b.NippleAngleDeg.InPlane), !eq(a.NippleAngleDeg.OutOfPlane, b.NippleAngleDeg.OutOfPlane):
		return "nipple_angle_deg"
	case a.MaxCrosses != b.MaxCrosses || !eq(a.HubAngleDeg, b.HubAngleDeg):
		return "max_crosses/hub_angle_deg"
	}
	return ""
}

// TestPropertyLengthGrowsWithERD: a larger rim puts every rim hole farther
// from every hub hole (the distance from a fixed interior point grows with
// the circle's radius once past the flange circle), so both lengths grow.
func TestPropertyLengthGrowsWithERD(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for range 500 {
		w := randomWheel(t, rng)
		a, err := Compute(w)
		if err != nil {
			t.Fatal(err)
		}
		erd := w.Rim.ERDMM
		w.Rim.ERDMM += 0.5 + 20*rng.Float64()
		b, err := Compute(w)
		if err != nil {
			t.Fatal(err)
		}
		if !(b.Left.LengthMM > a.Left.LengthMM && b.Right.LengthMM > a.Right.LengthMM) {
			t.Fatalf("ERD %v → %v: lengths %v/%v → %v/%v", erd, w.Rim.ERDMM, a.Left.LengthMM, a.Right.LengthMM, b.Left.LengthMM, b.Right.LengthMM)
		}
		if b.Left.MaxCrosses < a.Left.MaxCrosses || b.Right.MaxCrosses < a.Right.MaxCrosses {
			t.Fatalf("a larger rim lowered max_crosses")
		}
	}
}

// TestPropertyTensionBalance: n_L·T_L·sin β_L = n_R·T_R·sin β_R (lateral
// force balance on the rim) for evenly laced wheels, the higher side
// carries exactly the target, and the reported ratio is T_L/T_R. (Uneven
// wheels are balanced spoke by spoke in TestPlanAgainstHolePositions.)
func TestPropertyTensionBalance(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for range 500 {
		w := randomWheel(t, rng)
		if w.Hub.Left.Spokes != nil {
			continue
		}
		r, err := Compute(w)
		if err != nil {
			t.Fatal(err)
		}
		tl, tr := *r.Left.TensionN, *r.Right.TensionN
		sl, sr := math.Sin(r.Left.BracingAngleDeg/deg), math.Sin(r.Right.BracingAngleDeg/deg)
		if !near(tl*sl, tr*sr, 1e-9*tl) {
			t.Fatalf("T_L sin β_L = %v, T_R sin β_R = %v", tl*sl, tr*sr)
		}
		if math.Max(tl, tr) != *w.TargetTensionN {
			t.Fatalf("higher tension %v, target %v", math.Max(tl, tr), *w.TargetTensionN)
		}
		if !near(r.TensionRatioLeftToRight, tl/tr, 1e-12*tl/tr) {
			t.Fatalf("ratio %v, T_L/T_R %v", r.TensionRatioLeftToRight, tl/tr)
		}
	}
}

// TestPropertyFinite: every output of a valid wheel is finite and encodes
// as JSON (encoding/json rejects NaN and Inf), lengths and angles positive.
func TestPropertyFinite(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	for range 2000 {
		w := randomWheel(t, rng)
		r, err := Compute(w)
		if err != nil {
			t.Fatal(err)
		}
		if !allFinite(reflect.ValueOf(r)) {
			t.Fatalf("non-finite output %+v for %+v", r, w)
		}
		if _, err := json.Marshal(r); err != nil {
			t.Fatal(err)
		}
		for _, s := range []SideResult{r.Left, r.Right} {
			if s.LengthMM <= 0 || *s.OrderLengthMM <= 0 || *s.OrderLengthMM >= s.LengthMM || s.BracingAngleDeg <= 0 || s.BracingAngleDeg >= 90 {
				t.Fatalf("implausible side %+v", s)
			}
		}
	}
}
