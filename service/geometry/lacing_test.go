package geometry

import (
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/spatial/r3"
)

// The tests in this file check the closed form against an independent
// construction: every hub and rim hole is placed in 3-D with gonum's
// spatial/r3 (a general-purpose reference library), the lacing is walked
// hole by hole, and each spoke is measured as the distance between its two
// holes. Nothing here uses the law of cosines or crosses × 720°/N.

var zAxis = r3.Vec{Z: 1}

// builtSpoke is one spoke of a walked lacing.
type builtSpoke struct {
	left     bool
	leading  bool
	hub, rim r3.Vec
	rimIndex int
}

// walkLacing places the holes and laces the wheel.
//
// Rim holes i = 0…N−1 sit at angle i·360°/N; even holes take left spokes,
// odd holes right spokes (the usual alternation). Left flange hole j sits at
// the angle of rim hole 2j, right flange hole j at that of rim hole 2j+1 (the
// flanges are offset by half a flange-hole pitch). On each flange, even holes
// carry leading spokes and odd holes trailing ones; a k-cross spoke runs k
// flange holes (2k rim holes) forward or back.
func walkLacing(t *testing.T, w Wheel) []builtSpoke {
	t.Helper()
	n := w.SpokeCount
	// A washer under each nipple head lifts the head away from the hub by
	// its thickness: the spoke end sits that much farther out.
	rimR := w.Rim.ERDMM/2 + w.Rim.NippleWasherMM
	pitch := 2 * math.Pi / float64(n)
	rimHole := func(i int) r3.Vec {
		i = ((i % n) + n) % n
		z := w.Rim.SpokeHoleOffsetMM + w.Rim.StaggerMM.Left
		if i%2 == 1 {
			z = w.Rim.SpokeHoleOffsetMM - w.Rim.StaggerMM.Right
		}
		p := r3.Rotate(r3.Vec{X: rimR}, float64(i)*pitch, zAxis)
		return r3.Add(p, r3.Vec{Z: z})
	}
	var spokes []builtSpoke
	used := make(map[int]int)
	for _, sd := range []struct {
		left  bool
		f     Flange
		k     int
		first int // rim index of flange hole 0
		z     float64
	}{
		{true, w.Hub.Left, *w.Crosses.Left, 0, w.Hub.Left.CenterToFlangeMM},
		{false, w.Hub.Right, *w.Crosses.Right, 1, -w.Hub.Right.CenterToFlangeMM},
	} {
		for j := range n / 2 {
			at := sd.first + 2*j
			hub := r3.Add(r3.Rotate(r3.Vec{X: sd.f.PCDMM / 2}, float64(at)*pitch, zAxis), r3.Vec{Z: sd.z})
			leading := j%2 == 0 || sd.k == 0
			to := at + 2*sd.k
			if !leading {
				to = at - 2*sd.k
			}
			to = ((to % n) + n) % n
			if w.Hub.Type == StraightPull && sd.k > 0 {
				// A seated spoke leaves the hole circle along its tangent:
				// its exit point H is where the line to the rim hole P
				// touches the circle, (P − H)·H = 0 in the wheel plane.
				// Found here by rotating P's direction back by the angle
				// whose cosine is r/|P| (the tangent's right angle at H).
				p := rimHole(to)
				flat := r3.Vec{X: p.X, Y: p.Y}
				a := math.Acos(sd.f.PCDMM / 2 / r3.Norm(flat))
				if leading {
					a = -a
				}
				hub = r3.Add(r3.Scale(sd.f.PCDMM/2/r3.Norm(flat), r3.Rotate(flat, a, zAxis)), r3.Vec{Z: sd.z})
			}
			if (to%2 == 0) != sd.left {
				t.Fatalf("%v spoke %d lands on a hole of the other side", sd.left, j)
			}
			used[to]++
			spokes = append(spokes, builtSpoke{left: sd.left, leading: leading, hub: hub, rim: rimHole(to), rimIndex: to})
		}
	}
	for i := range n {
		if used[i] != 1 {
			t.Fatalf("rim hole %d takes %d spokes, want exactly 1", i, used[i])
		}
	}
	return spokes
}

// inPlaneCross reports whether the wheel-plane projections of two spokes
// intersect (segment test by orientation signs, a standard computational
// geometry predicate).
func inPlaneCross(a, b builtSpoke) bool {
	orient := func(p, q, r r3.Vec) float64 { return (q.X-p.X)*(r.Y-p.Y) - (q.Y-p.Y)*(r.X-p.X) }
	d1 := orient(a.hub, a.rim, b.hub)
	d2 := orient(a.hub, a.rim, b.rim)
	d3 := orient(b.hub, b.rim, a.hub)
	d4 := orient(b.hub, b.rim, a.rim)
	// Radial spokes half a turn apart are collinear: their orientations are
	// rounding noise around zero, which must not count as a crossing.
	const eps = 1e-6 // mm², far below any genuine crossing's orientation
	opposite := func(p, q float64) bool { return (p < -eps && q > eps) || (p > eps && q < -eps) }
	return opposite(d1, d2) && opposite(d3, d4)
}

// leavesInsideTangent reports whether the spoke leaves its hub hole outward
// or along the tangent: the in-plane spoke direction makes at most 90° with
// the outward flange radius at the hole.
func leavesInsideTangent(s builtSpoke) bool {
	radial := r3.Vec{X: s.hub.X, Y: s.hub.Y}
	dir := r3.Sub(s.rim, s.hub)
	dir.Z = 0
	return r3.Dot(radial, dir) >= -1e-9*r3.Norm(radial)*r3.Norm(dir)
}

type lacingCase struct {
	name string
	w    func(n, kl, kr int) Wheel
}

func lacingCases() []lacingCase {
	base := func(n, kl, kr int) Wheel {
		return Wheel{SpokeCount: n, Crosses: cross(kl, kr)}
	}
	return []lacingCase{
		{"symmetric front", func(n, kl, kr int) Wheel {
			w := base(n, kl, kr)
			w.Hub.Left = Flange{PCDMM: 45, CenterToFlangeMM: 35, HoleDiameterMM: fp(2.6)}
			w.Hub.Right = Flange{PCDMM: 45, CenterToFlangeMM: 35, HoleDiameterMM: fp(2.6)}
			w.Rim.ERDMM = 599
			return w
		}},
		{"disc front", func(n, kl, kr int) Wheel {
			w := base(n, kl, kr)
			w.Hub.Left = Flange{PCDMM: 58, CenterToFlangeMM: 22, HoleDiameterMM: fp(2.5)}
			w.Hub.Right = Flange{PCDMM: 45, CenterToFlangeMM: 34.5, HoleDiameterMM: fp(2.5)}
			w.Rim.ERDMM = 602
			w.Hub.DiscBrake = true
			return w
		}},
		{"dished rear, asymmetric rim", func(n, kl, kr int) Wheel {
			w := base(n, kl, kr)
			w.Hub.Left = Flange{PCDMM: 44, CenterToFlangeMM: 36, HoleDiameterMM: fp(2.6)}
			w.Hub.Right = Flange{PCDMM: 52, CenterToFlangeMM: 18.5, HoleDiameterMM: fp(2.6)}
			w.Rim = Rim{ERDMM: 539, SpokeHoleOffsetMM: 3.5}
			w.Hub.Driven = true
			return w
		}},
		{"staggered rim, nipple washers", func(n, kl, kr int) Wheel {
			w := base(n, kl, kr)
			w.Hub.Left = Flange{PCDMM: 40, CenterToFlangeMM: 30, HoleDiameterMM: fp(2.4)}
			w.Hub.Right = Flange{PCDMM: 40, CenterToFlangeMM: 20, HoleDiameterMM: fp(2.4)}
			w.Rim = Rim{ERDMM: 406, SpokeHoleOffsetMM: -1.5, StaggerMM: Sides{Left: 2.2, Right: 1.7}, NippleWasherMM: 0.6}
			return w
		}},
		{"straight pull rear, tangential seats", func(n, kl, kr int) Wheel {
			w := base(n, kl, kr)
			w.Hub.Type = StraightPull
			w.Hub.Left = Flange{PCDMM: 52, CenterToFlangeMM: 33, SpokeExitOffsetMM: fp(1.8)}
			w.Hub.Right = Flange{PCDMM: 56, CenterToFlangeMM: 21, SpokeExitOffsetMM: fp(-0.7)}
			w.Rim = Rim{ERDMM: 622, SpokeHoleOffsetMM: 2}
			return w
		}},
	}
}

// builtLength is a walked spoke's length: hole-to-hole distance less the
// same hub correction the product defines (half the hole for J-bend, the
// exit offset for straight pull).
func builtLength(w Wheel, s builtSpoke) float64 {
	f := w.Hub.Right
	if s.left {
		f = w.Hub.Left
	}
	d := r3.Norm(r3.Sub(s.rim, s.hub))
	if w.Hub.Type == StraightPull {
		if f.SpokeExitOffsetMM != nil {
			d -= *f.SpokeExitOffsetMM
		}
		return d
	}
	return d - *f.HoleDiameterMM/2
}

// TestLacingAgainstWalkedHoles: for radial and 1–4 cross, 24–48 holes and
// every case above, each walked spoke matches the closed-form length to
// 1e-9 mm, crosses exactly k same-flange spokes in the wheel plane, and
// the patterns the tangent check rejects are exactly those Compute rejects.
// Independent reference: gonum spatial/r3 placement and distances.
func TestLacingAgainstWalkedHoles(t *testing.T) {
	checked, rejected := 0, 0
	for _, c := range lacingCases() {
		for _, n := range []int{24, 28, 32, 36, 40, 48} {
			for k := 0; k <= 4; k++ {
				// The right side gets one cross fewer where possible to
				// exercise mixed patterns.
				kr := max(k-1, 0)
				w := c.w(n, k, kr)
				name := fmt.Sprintf("%s/%dh/%dx-%dx", c.name, n, k, kr)
				spokes := walkLacing(t, w)
				feasible := true
				for _, s := range spokes {
					feasible = feasible && leavesInsideTangent(s)
				}
				straight := w.Hub.Type == StraightPull
				res, err := Compute(w)
				if !feasible {
					rejected++
					if err == nil || hasFieldError(t, err, "/crosses/left", true) == nil {
						t.Errorf("%s: a spoke leaves past the tangent, want 422 at /crosses/left, got %v", name, err)
					}
					continue
				}
				if err != nil {
					t.Errorf("%s: %v", name, err)
					continue
				}
				checked++
				for i, s := range spokes {
					want := res.Right.LengthMM
					k := kr
					if s.left {
						want, k = res.Left.LengthMM, *w.Crosses.Left
					}
					if got := builtLength(w, s); math.Abs(got-want) > 1e-9 {
						t.Errorf("%s spoke %d (left=%v leading=%v): walked %.12f mm, closed form %.12f", name, i, s.left, s.leading, got, want)
					}
					if straight {
						// Seated spokes cross as their seats send them, not
						// by the pattern; their tangency is checked above.
						flat := r3.Sub(s.rim, s.hub)
						flat.Z = 0
						if k > 0 && math.Abs(r3.Dot(flat, r3.Vec{X: s.hub.X, Y: s.hub.Y})) > 1e-9*r3.Norm(flat) {
							t.Errorf("%s spoke %d: not tangent at its exit point", name, i)
						}
						continue
					}
					crossings := 0
					for _, o := range spokes {
						if o.left == s.left && o != s && inPlaneCross(s, o) {
							crossings++
						}
					}
					if crossings != k {
						t.Errorf("%s spoke %d crosses %d spokes of its flange, want %d", name, i, crossings, k)
					}
				}
			}
		}
	}
	if checked < 100 || rejected == 0 {
		t.Errorf("coverage: %d feasible patterns checked, %d rejected; want both exercised", checked, rejected)
	}
}

// TestMaxCrossesAgainstTangentWalk: max_crosses is the largest k whose
// walked spokes all leave inside the tangent, and max_crosses+1 is not
// (gonum r3 dot product of flange radius and spoke direction).
func TestMaxCrossesAgainstTangentWalk(t *testing.T) {
	for _, c := range lacingCases() {
		if c.w(24, 0, 0).Hub.Type == StraightPull {
			continue // the tangent limit is a J-bend spoke's; seats are tangent by design
		}
		for _, n := range []int{24, 32, 36, 48} {
			res, err := Compute(c.w(n, 0, 0))
			if err != nil {
				t.Fatal(err)
			}
			for _, sd := range []struct {
				left bool
				max  int
			}{{true, res.Left.MaxCrosses}, {false, res.Right.MaxCrosses}} {
				ok := func(k int) bool {
					w := c.w(n, 0, 0)
					if sd.left {
						w.Crosses.Left = ip(k)
					} else {
						w.Crosses.Right = ip(k)
					}
					for _, s := range walkLacing(t, w) {
						if s.left == sd.left && !leavesInsideTangent(s) {
							return false
						}
					}
					return true
				}
				if !ok(sd.max) || ok(sd.max+1) {
					t.Errorf("%s %dh left=%v: max_crosses %d, tangent walk: %d ok=%v, %d ok=%v",
						c.name, n, sd.left, sd.max, sd.max, ok(sd.max), sd.max+1, ok(sd.max+1))
				}
			}
		}
	}
}

// TestAnglesAndBalanceAgainstWalk: bracing and nipple angles from r3 vector
// angles, and the rim's net lateral force Σ T·ûz over every walked spoke is
// zero at the tensions Compute returns (Newton's first law on the rim).
func TestAnglesAndBalanceAgainstWalk(t *testing.T) {
	for _, c := range lacingCases() {
		w := c.w(36, 3, 2)
		w.TargetTensionN = fp(1200)
		res, err := Compute(w)
		if err != nil {
			t.Fatal(err)
		}
		var lateral, scale float64
		for _, s := range walkLacing(t, w) {
			out, tension := res.Right, *res.Right.TensionN
			if s.left {
				out, tension = res.Left, *res.Left.TensionN
			}
			toHub := r3.Sub(s.hub, s.rim)
			u := r3.Unit(toHub)
			lateral += tension * u.Z
			scale += tension
			brace := math.Asin(math.Abs(u.Z)) * 180 / math.Pi
			if !near(brace, out.BracingAngleDeg, 1e-9) {
				t.Errorf("%s: bracing %.12f°, r3 %.12f°", c.name, out.BracingAngleDeg, brace)
			}
			inward := r3.Scale(-1, r3.Vec{X: s.rim.X, Y: s.rim.Y})
			total := math.Acos(r3.Cos(toHub, inward)) * 180 / math.Pi
			inPlane := math.Acos(r3.Cos(r3.Vec{X: toHub.X, Y: toHub.Y}, inward)) * 180 / math.Pi
			// Out of plane: in the plane spanned by the radius and the axle.
			radial := r3.Scale(r3.Dot(toHub, r3.Unit(inward)), r3.Unit(inward))
			outPlane := math.Acos(r3.Cos(r3.Add(radial, r3.Vec{Z: toHub.Z}), inward)) * 180 / math.Pi
			for _, p := range []struct {
				name      string
				got, want float64
			}{{"total", out.NippleAngleDeg.Total, total}, {"in_plane", out.NippleAngleDeg.InPlane, inPlane}, {"out_of_plane", out.NippleAngleDeg.OutOfPlane, outPlane}} {
				// acos near 0 loses digits; 1e-6° is still far below any
				// builder's concern.
				if !near(p.got, p.want, 1e-6) {
					t.Errorf("%s: nipple %s %.9f°, r3 %.9f°", c.name, p.name, p.got, p.want)
				}
			}
		}
		if math.Abs(lateral) > 1e-9*scale {
			t.Errorf("%s: net lateral force on the rim %.3g N at tensions %.3f/%.3f N", c.name, lateral, *res.Left.TensionN, *res.Right.TensionN)
		}
	}
}
