package geometry

import "math"

// sideGeom is the closed-form geometry of one side's spokes. All spokes of
// a side have the same geometry: leading and trailing spokes are mirror
// images in the wheel plane.
type sideGeom struct {
	// alpha is the in-plane angle, seen from the axle, between a spoke's hub
	// hole and its rim hole: crosses × 720° / spoke count, in radians.
	alpha float64
	// alphaDeg is alpha in degrees, computed exactly as crosses × 720 / n.
	alphaDeg float64
	// x, y are the in-plane components of the rim hole → hub hole vector in
	// the rim hole's frame: x along the inward radius, y tangential.
	x, y float64
	// dz is the axial distance between the flange plane and the rim holes.
	dz float64
	// dist is the 3-D centre-line distance between hub hole and rim hole.
	dist float64
	// limit is the in-plane angle at which the spoke leaves the flange
	// tangentially: arccos(r/R).
	limit      float64
	maxCrosses int
	// headGap is the in-plane distance from the next flange hole in the
	// spoke's direction to the spoke's centre line (crossed lacing only).
	headGap float64
}

// lacingSide computes one side. n is the spoke count, rimR the effective rim
// radius. It does no validation beyond what guards the math.
func lacingSide(n int, rimR float64, s *side) sideGeom {
	var g sideGeom
	step := 4 * math.Pi / float64(n) // angle between neighbouring holes of one flange
	g.alpha = float64(s.crosses) * step
	g.alphaDeg = float64(s.crosses) * 720 / float64(n)
	ratio := s.r / rimR // 0 < ratio < 1 after validation
	g.limit = math.Acos(ratio)
	if n%4 == 0 {
		// The tolerance accepts a pattern that reaches the tangent exactly
		// despite rounding in the angle.
		g.maxCrosses = int(g.limit/step + 1e-9)
	}
	sinA, cosA := math.Sincos(g.alpha)
	g.x = rimR - s.r*cosA
	g.y = s.r * sinA
	g.dz = math.Abs(s.z - s.zRim)
	g.dist = math.Sqrt(g.x*g.x + g.y*g.y + g.dz*g.dz)
	if s.crosses > 0 {
		// Hub hole H = (r, 0), rim hole at (R cos α, R sin α), next hole
		// on the flange P = (r cos step, r sin step). The gap is |HP × u|
		// with u the unit in-plane direction H → rim.
		ux, uy := rimR*cosA-s.r, rimR*sinA
		inPlane := math.Sqrt(ux*ux + uy*uy)
		sinS, cosS := math.Sincos(step)
		px, py := s.r*cosS-s.r, s.r*sinS
		if px*ux+py*uy > 0 { // the neighbour lies ahead of the hole, not behind
			g.headGap = math.Abs(px*uy-py*ux) / inPlane
		} else {
			g.headGap = math.Inf(1)
		}
	}
	return g
}

// lengthMM is the spoke length to the effective ERD: the centre-line
// distance less half the flange hole for J-bend spokes (the elbow's inside
// bears on the hole's edge), less the exit offset for straight-pull spokes.
func (g sideGeom) lengthMM(straight bool, s *side) float64 {
	if straight {
		return g.dist - s.exit
	}
	return g.dist - s.hole/2
}

// sinBrace is the lateral (axial) component of the spoke's unit direction,
// the sine of the bracing angle.
func (g sideGeom) sinBrace() float64 { return g.dz / g.dist }

// bracingDeg is the angle between the spoke and the wheel plane.
func (g sideGeom) bracingDeg() float64 {
	return math.Atan2(g.dz, math.Sqrt(g.x*g.x+g.y*g.y)) * deg
}

// nipple returns the spoke's angle to the rim radius at the nipple: in the
// wheel plane, out of it (in the plane through the radius and the axis),
// and in total.
func (g sideGeom) nipple() NippleAngle {
	return NippleAngle{
		InPlane:    math.Atan2(g.y, g.x) * deg,
		OutOfPlane: math.Atan2(g.dz, g.x) * deg,
		Total:      math.Atan2(math.Sqrt(g.y*g.y+g.dz*g.dz), g.x) * deg,
	}
}

const deg = 180 / math.Pi
