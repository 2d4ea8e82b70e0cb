package geometry

import (
	"math"
	"slices"
)

// The lacing plan. Every spoke runs from a hub hole to a rim hole; its
// length is the distance between them. Conventions (stated once, used by
// every answer and by the bench sheet):
//
//   - Angles lie in the wheel plane as seen from the right (drive) side,
//     clockwise from the valve hole, in degrees. The rim's N holes sit at
//     (i + ½)·360°/N, i = 0…N−1: the valve is midway between the last hole
//     and the first. Spokes are numbered i + 1.
//   - Rim holes go to the sides evenly: hole i is a left hole when
//     ⌊(i+1)·n_L/N⌋ > ⌊i·n_L/N⌋. With even lacing the holes alternate and
//     spoke 1 (the first hole clockwise of the valve) is a right spoke; a
//     2:1 wheel runs right, right, left, …
//   - On each flange, hole j's spoke goes to the side's rim hole
//     (j + d·k) mod n (k crosses, n spokes on the flange, the side's rim
//     holes counted from the valve) with d = +1 (leading: its rim end lies
//     ahead, in the direction a wheel rolling forward turns, of its hub
//     hole) or −1 (trailing: a pulling spoke under drive torque).
//     Directions alternate around a crossed flange; they are chosen so that
//     the two spokes beside the valve are both trailing and run parallel,
//     leaving room for a pump head (common practice).
//   - Heads: trailing spokes heads in, leading spokes heads out (one of the
//     two conventions in common practice; either is sound, follow the hub
//     maker's where it gives one); radial spokes heads out.
//   - Clocking: a flange's holes are turned against the rim so that the
//     spread of its spokes' lengths is smallest. With even lacing that puts
//     each hub hole exactly crosses × 360°/n from its rim hole (one length
//     per side); with uneven lacing the rim holes of a side are not evenly
//     spaced and a side has more than one length.
//   - The key spoke, laced first, is spoke 1.

// spokeGeom is one spoke of the plan.
type spokeGeom struct {
	rimIdx    int     // rim hole index i (spoke number − 1)
	dir       int     // +1 leading, −1 trailing, 0 radial
	rimRad    float64 // rim hole angle
	hubRad    float64 // hub hole (or seat exit point) angle
	alpha     float64 // in-plane angle between hub and rim hole, ≥ 0
	inPlane   float64 // in-plane hub → rim distance
	dz        float64 // axial distance
	dist      float64 // 3-D centre-line distance
	lengthMM  float64
	headGapMM float64 // distance of the next flange hole from the spoke line; +Inf when none
}

// sideGeom is one side's spokes.
type sideGeom struct {
	spokes  []spokeGeom // every spoke, when built
	rep     spokeGeom   // the longest spoke (all alike with even lacing)
	uniform bool        // every spoke has rep's geometry
	even    bool        // computed in closed form (even lacing)
	// With even lacing the plan's spokes are rep turned to each hole
	// (planSide computes them): the side's first rim hole (1 on the left),
	// its seat angle psi for seated spokes, and whether it is radial.
	left, straight, radial bool
	first                  int
	psi, pitch             float64
	n                      int
	k                      int
	limit                  float64 // arccos(r/R): the in-plane angle of a tangent spoke
	maxCrosses             int
	clearMax               int     // most crosses with no head run over
	alphaMax               float64 // largest in-plane angle of the side's spokes
	sumSin                 float64 // Σ sin β over the side's spokes
	headGap                float64 // smallest head gap of the side
	nippleMax              float64 // largest total nipple angle, degrees
	braceMin               float64 // smallest bracing angle, degrees
	// repNipple and repBrace are rep's angles when the side was computed
	// from one spoke (set by finish; zero otherwise).
	repNipple NippleAngle
	repBrace  float64
}

// isLeftHole reports whether rim hole i takes a left spoke.
func isLeftHole(i, n, nLeft int) bool { return (i+1)*nLeft/n > i*nLeft/n }

// sideHoles lists a side's rim hole indices in order from the valve.
func sideHoles(n, nLeft int, left bool) []int {
	var out []int
	for i := range n {
		if isLeftHole(i, n, nLeft) == left {
			out = append(out, i)
		}
	}
	return out
}

// rimRad is rim hole i's angle in radians.
func rimRad(i, n int) float64 { return (float64(i) + 0.5) * 2 * math.Pi / float64(n) }

// dirOf is the direction of flange hole j's spoke: the side whose rim
// holes include the first after the valve (the right) makes that hole's
// spoke trailing; the side with the last hole (the left) makes that one's
// trailing.
func dirOf(j, k, n int, left bool) int {
	ref := k // the flange hole whose spoke reaches the side's hole 0
	if left {
		ref = n - 1 + k // … reaches the side's last hole
	}
	if (j-ref)%2 == 0 {
		return -1
	}
	return 1
}

// straightAngle is the in-plane angle between a seated spoke's exit point
// on the hole circle (radius r) and where it meets the rim circle (R),
// and the in-plane distance, for an exit at angle theta to the radius
// (plane trigonometry: the exit point H at (r, 0), direction (cos θ,
// sin θ); |H + t·u| = R gives t = −r cos θ + √(R² − r² sin² θ)).
func straightAngle(r, rimR, theta float64) (psi, t float64) {
	s, c := math.Sincos(theta)
	t = -r*c + math.Sqrt(rimR*rimR-r*r*s*s)
	return math.Atan2(t*s, r+t*c), t
}

// buildSide lays out one side. n is the wheel's spoke count, nLeft the
// left flange's, rimR the effective rim radius. With even lacing every
// spoke of a side has the same geometry (the side's rim holes are evenly
// spaced and each hub hole sits crosses × 360°/n from its rim hole), so the
// side is computed from one spoke, and the plan's spokes, when full asks
// for them, are that spoke turned to each hole. Uneven lacing places every
// spoke.
func buildSide(n, nLeft int, rimR float64, s *side, left, even, full bool) sideGeom {
	g := sideGeom{n: s.n, k: s.crosses, headGap: math.Inf(1), even: even, left: left}
	p := 2 * math.Pi / float64(s.n) // flange hole pitch
	g.limit = math.Acos(s.r / rimR)
	if s.n%2 == 0 {
		// The tolerance accepts a pattern that reaches the tangent exactly
		// despite rounding in the angle.
		g.maxCrosses = int(g.limit/p + 1e-9)
	}
	dz := math.Abs(s.z - s.zRim)
	straight := s.exit != ExitJBend
	var psi, tIn float64
	if straight {
		theta := math.Pi / 2
		if s.exit == ExitAngled {
			theta = s.angle
		}
		psi, tIn = straightAngle(s.r, rimR, theta)
	}
	g.straight, g.psi, g.pitch = straight, psi, p
	g.radial = s.crosses == 0 && (!straight || psi < 1e-12)
	if left {
		g.first = 1
	}

	// one is a spoke at in-plane angle alpha.
	one := func(alpha float64) spokeGeom {
		sg := spokeGeom{alpha: alpha, dz: dz, headGapMM: math.Inf(1)}
		if straight {
			sg.inPlane = tIn
		} else {
			sg.inPlane = math.Sqrt(math.Max(rimR*rimR+s.r*s.r-2*rimR*s.r*math.Cos(alpha), 0))
		}
		sg.dist = hypot(sg.inPlane, dz)
		if straight {
			sg.lengthMM = sg.dist - s.offset
		} else {
			sg.lengthMM = sg.dist - s.hole/2
		}
		return sg
	}

	if even {
		alpha := float64(s.crosses) * p
		if straight {
			alpha = psi
		}
		g.rep = one(alpha)
		if !straight && s.crosses > 0 {
			g.rep.headGapMM = headGap(s.r, rimR, alpha, p)
		}
		g.uniform = true
		g.finish(s, rimR, []spokeGeom{g.rep}, s.n)
		g.clearMax = clearCrosses(s, rimR, p, g.maxCrosses, straight, g.rep.headGapMM)
		return g
	}

	holes := sideHoles(n, nLeft, left)
	nn := len(holes)
	target := make([]int, nn) // flange hole j → the side's rim hole
	dirs := make([]int, nn)
	radial := s.crosses == 0 && (!straight || psi < 1e-12)
	for j := range nn {
		if radial {
			target[j] = j
			continue
		}
		dirs[j] = dirOf(j, s.crosses, nn, left)
		target[j] = ((j+dirs[j]*s.crosses)%nn + nn) % nn
	}
	a := make([]float64, nn) // the side's rim hole angles
	for m, i := range holes {
		a[m] = rimRad(i, n)
	}
	spokes := make([]spokeGeom, nn)
	place := func(phi float64) {
		for j := range nn {
			m := target[j]
			var sg spokeGeom
			var hub float64
			if straight {
				hub = a[m] - float64(dirs[j])*psi
				sg = one(psi)
			} else {
				hub = phi + float64(j)*p
				sg = one(math.Abs(remainder(a[m] - hub)))
				if s.crosses > 0 {
					sg.headGapMM = headGapAt(s.r, rimR, hub, a[m], p, dirs[j])
				}
			}
			sg.rimIdx, sg.dir, sg.rimRad, sg.hubRad = holes[m], dirs[j], a[m], hub
			spokes[j] = sg
		}
	}
	phi := a[0]
	if !straight {
		// The spread as the clocking moves: a spoke's length grows as the
		// cosine of its hub angle falls, so only the extreme cosines matter.
		k2 := rimR*rimR + s.r*s.r + dz*dz
		length := func(c float64) float64 { return math.Sqrt(math.Max(k2-2*rimR*s.r*c, 0)) }
		phi = bestClocking(a[0], p, func(phi float64) float64 {
			lo, hi := 2.0, -2.0
			for j := range nn {
				c := math.Cos(a[target[j]] - phi - float64(j)*p)
				lo, hi = math.Min(lo, c), math.Max(hi, c)
			}
			return length(lo) - length(hi)
		})
	}
	place(phi)
	g.spokes = spokes
	g.rep = spokes[0]
	for _, sg := range spokes[1:] {
		if sg.lengthMM > g.rep.lengthMM+1e-9 {
			g.rep = sg
		}
	}
	g.uniform = spread(spokes) < 1e-9
	g.finish(s, rimR, spokes, 1)
	// With uneven holes the pitch-based count is an estimate for the side.
	g.clearMax = clearCrosses(s, rimR, p, g.maxCrosses, straight, math.NaN())
	return g
}

// finish fills the side's sums and extremes from its spokes, each standing
// for weight spokes.
func (g *sideGeom) finish(s *side, rimR float64, spokes []spokeGeom, weight int) {
	g.braceMin = math.Inf(1)
	for _, sg := range spokes {
		g.sumSin += float64(weight) * sg.dz / sg.dist
		g.alphaMax = math.Max(g.alphaMax, sg.alpha)
		g.headGap = math.Min(g.headGap, sg.headGapMM)
		if weight > 1 { // the side's one spoke: its angles are the side's
			g.repNipple, g.repBrace = nippleAngle(rimR, s.r, sg), bracingDeg(sg)
			g.nippleMax, g.braceMin = g.repNipple.Total, g.repBrace
			continue
		}
		g.nippleMax = math.Max(g.nippleMax, nippleAngle(rimR, s.r, sg).Total)
		g.braceMin = math.Min(g.braceMin, bracingDeg(sg))
	}
}

// bestClocking finds the flange clocking within half a pitch of phi0 that
// makes spread smallest: a coarse scan, then a golden-section refinement
// around the best point. Ties keep the clocking nearest phi0.
func bestClocking(phi0, p float64, spreadAt func(float64) float64) float64 {
	const steps = 16
	best, bestS := phi0, spreadAt(phi0)
	for i := 1; i <= steps; i++ {
		for _, sign := range []float64{1, -1} {
			phi := phi0 + sign*float64(i)*p/(2*steps)
			if s := spreadAt(phi); s < bestS-1e-9 {
				best, bestS = phi, s
			}
		}
	}
	lo, hi := best-p/(2*steps), best+p/(2*steps)
	const gr = 0.6180339887498949
	x1, x2 := hi-gr*(hi-lo), lo+gr*(hi-lo)
	f1, f2 := spreadAt(x1), spreadAt(x2)
	for range 48 {
		if f1 <= f2 {
			hi, x2, f2 = x2, x1, f1
			x1 = hi - gr*(hi-lo)
			f1 = spreadAt(x1)
		} else {
			lo, x1, f1 = x1, x2, f2
			x2 = lo + gr*(hi-lo)
			f2 = spreadAt(x2)
		}
	}
	if x := (lo + hi) / 2; spreadAt(x) < bestS-1e-9 {
		return x
	}
	return best
}

// spread is the difference between the longest and shortest spoke.
func spread(sg []spokeGeom) float64 {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, s := range sg {
		lo, hi = math.Min(lo, s.lengthMM), math.Max(hi, s.lengthMM)
	}
	return hi - lo
}

// remainder maps an angle difference into [−π, π].
func remainder(x float64) float64 { return x - 2*math.Pi*math.Round(x/(2*math.Pi)) }

// hypot is √(a² + b²): the sizes here are far from overflow, and
// math.Hypot's guard against it was a sixth of a wheel's time.
func hypot(a, b float64) float64 { return math.Sqrt(a*a + b*b) }

// headGap is, for a crossed J-bend spoke at in-plane angle alpha, the
// in-plane distance from the next flange hole in its direction to its
// centre line (+Inf when that hole lies behind it). Hub hole H = (r, 0),
// rim hole at (R cos α, R sin α), next hole P = (r cos p, r sin p); the gap
// is |HP × u| with u the unit direction H → rim.
func headGap(r, rimR, alpha, p float64) float64 {
	sinS, cosS := math.Sincos(p)
	return headGapSC(r, rimR, alpha, sinS, cosS)
}

// headGapSC is headGap with the pitch's sine and cosine given.
func headGapSC(r, rimR, alpha, sinS, cosS float64) float64 {
	sinA, cosA := math.Sincos(alpha)
	ux, uy := rimR*cosA-r, rimR*sinA
	inPlane := hypot(ux, uy)
	px, py := r*cosS-r, r*sinS
	if px*ux+py*uy <= 0 {
		return math.Inf(1)
	}
	return math.Abs(px*uy-py*ux) / inPlane
}

// headGapAt is headGap for a spoke from the hub hole at angle hub to the
// rim hole at angle rim, with its next flange hole at hub + dir·p.
func headGapAt(r, rimR, hub, rim, p float64, dir int) float64 {
	alpha := remainder(rim - hub)
	if dir < 0 {
		alpha = -alpha
	}
	if alpha <= 0 {
		return math.Inf(1)
	}
	return headGap(r, rimR, alpha, p)
}

// clearCrosses is the most crosses, up to max, at which a J-bend spoke
// passes clear of its neighbour's head: a gap of at least half the head
// and half the spoke. Straight-pull spokes have no neighbouring heads.
// The gap shrinks as the crosses grow, so when the side's own crosses
// (whose gap ownGap is known; NaN when not) clear the heads only the counts
// above them need a look, and otherwise only those below.
func clearCrosses(s *side, rimR, p float64, max int, straight bool, ownGap float64) int {
	if straight || s.clear <= 0 {
		return max
	}
	sinS, cosS := math.Sincos(p)
	lo, hi := 1, max
	if s.crosses > 0 && s.crosses <= max && !math.IsNaN(ownGap) {
		if ownGap >= s.clear {
			lo = s.crosses + 1
		} else {
			hi = s.crosses - 1
		}
	}
	for k := hi; k >= lo; k-- {
		if headGapSC(s.r, rimR, float64(k)*p, sinS, cosS) >= s.clear {
			return k
		}
	}
	if lo > 1 {
		return lo - 1
	}
	return 0
}

// nippleAngle is a spoke's angle to the rim radius at the nipple: in the
// wheel plane, out of it, and in total. In the rim hole's frame the hub
// point lies x = R − r cos α inward and y = r sin α across (for a seated
// spoke the exit point), dz out of plane.
func nippleAngle(rimR, r float64, sg spokeGeom) NippleAngle {
	sinA, cosA := math.Sincos(sg.alpha)
	x, y := rimR-r*cosA, r*sinA
	return NippleAngle{
		InPlane:    math.Atan2(y, x) * deg,
		OutOfPlane: math.Atan2(sg.dz, x) * deg,
		Total:      math.Atan2(hypot(y, sg.dz), x) * deg,
	}
}

// bracingDeg is the angle between the spoke and the wheel plane.
func bracingDeg(sg spokeGeom) float64 { return math.Atan2(sg.dz, sg.inPlane) * deg }

// groups are a side's distinct lengths, longest first: lengths within
// groupTolMM of each other are one length to a builder.
func groups(g sideGeom) []LengthGroup {
	if g.uniform || len(g.spokes) == 0 {
		return []LengthGroup{{LengthMM: g.rep.lengthMM, Count: g.n}}
	}
	ls := make([]float64, len(g.spokes))
	for i, s := range g.spokes {
		ls[i] = s.lengthMM
	}
	slices.Sort(ls)
	var out []LengthGroup
	for i := len(ls) - 1; i >= 0; {
		j, sum := i, 0.0
		for j >= 0 && ls[i]-ls[j] <= groupTolMM {
			sum += ls[j]
			j--
		}
		out = append(out, LengthGroup{LengthMM: sum / float64(i-j), Count: i - j})
		i = j
	}
	return out
}

// groupTolMM: lengths this close are cut and ordered as one (a hundredth
// of a millimetre is far below any tolerance of spoke stock).
const groupTolMM = 0.01

const deg = 180 / math.Pi
