package geometry

import (
	"fmt"
	"math"
	"strconv"

	"wheelbench/service/spoke"
)

// Options are the defaults for unmeasured sizes. A zero field takes its
// DefaultOptions value. (The thresholds that judge a wheel belong to the
// rule set, service/fit.)
type Options struct {
	// DefaultHoleDiameterMM is assumed for a J-bend flange without one.
	DefaultHoleDiameterMM float64
	// DefaultSpokeDiameterMM is assumed for the head-overlap check when
	// the spoke is not given.
	DefaultSpokeDiameterMM float64
	// HeadToSpokeRatio estimates a J-bend head's diameter from the spoke's.
	HeadToSpokeRatio float64
}

// DefaultOptions are values recalled from shop stock (from memory), not
// standards; the rule set reports every result that rests on one.
func DefaultOptions() Options {
	return Options{
		DefaultHoleDiameterMM:  2.6, // from memory: typical for 2.0 mm spokes
		DefaultSpokeDiameterMM: 2.0, // from memory: the most common size
		HeadToSpokeRatio:       2.0, // from memory: J-bend heads are about twice the wire
	}
}

func (o Options) withDefaults() Options {
	d := DefaultOptions()
	set := func(v *float64, def float64) {
		if *v == 0 || !finite(*v) {
			*v = def
		}
	}
	set(&o.DefaultHoleDiameterMM, d.DefaultHoleDiameterMM)
	set(&o.DefaultSpokeDiameterMM, d.DefaultSpokeDiameterMM)
	set(&o.HeadToSpokeRatio, d.HeadToSpokeRatio)
	return o
}

var defaultOptions = DefaultOptions()

// Compute computes both sides of one wheel with DefaultOptions. Invalid or
// impossible input returns a *field.Error or an errors.Join of them, and a
// zero Result. No NaN or Inf is ever returned.
func Compute(w Wheel) (Result, error) { return compute(&w, &defaultOptions) }

// Compute computes w with the defaults in o (zero fields take defaults).
func (o Options) Compute(w Wheel) (Result, error) {
	o = o.withDefaults()
	return compute(&w, &o)
}

// wheelBuf backs one wheel's optional outputs, allocated once.
type wheelBuf struct {
	sp     spoke.Resolved
	groups [2]LengthGroup
	val    [2][5]float64 // per side: tension, order, stock, end, exit angle
}

func compute(w *Wheel, o *Options) (Result, error) {
	r, err := resolve(w, o)
	if err != nil {
		return Result{}, err
	}
	full := w.IncludeLacing || !r.even
	gl := buildSide(r.n, r.left.n, r.rimR, &r.left, true, r.even, full)
	gr := buildSide(r.n, r.left.n, r.rimR, &r.right, false, r.even, full)
	var l errList
	l.feasible("/crosses/left", &r.left, &gl)
	l.feasible("/crosses/right", &r.right, &gr)
	if shortest(&gl) <= 0 {
		l.impossible("/hub/left/spoke_exit_offset_mm", "leaves no spoke: the offset exceeds the hub-to-rim distance")
	}
	if shortest(&gr) <= 0 {
		l.impossible("/hub/right/spoke_exit_offset_mm", "leaves no spoke: the offset exceeds the hub-to-rim distance")
	}
	if err := l.err(); err != nil {
		return Result{}, err
	}

	var res Result
	res.TensionRatioLeftToRight = gr.sumSin / gl.sumSin // both > 0 after validation
	buf := new(wheelBuf)
	res.Left = sideResult(&gl, &r.left, r.rimR, buf, 0)
	res.Right = sideResult(&gr, &r.right, r.rimR, buf, 1)

	var tL, tR float64
	if r.target > 0 {
		// Σ_L T_L·sin β = Σ_R T_R·sin β: the side with the smaller lateral
		// sum carries the target, the other side proportionally less.
		if gl.sumSin < gr.sumSin {
			tL, tR = r.target, r.target*gl.sumSin/gr.sumSin
		} else {
			tL, tR = r.target*gr.sumSin/gl.sumSin, r.target
		}
		buf.val[0][0], buf.val[1][0] = tL, tR
		res.Left.TensionN, res.Right.TensionN = &buf.val[0][0], &buf.val[1][0]
	}
	if r.target > 0 || r.stock != nil {
		orderAndStock(&l, &r, &res.Left, &buf.val[0], tL, "left")
		orderAndStock(&l, &r, &res.Right, &buf.val[1], tR, "right")
		if err := l.err(); err != nil {
			return Result{}, err
		}
	}
	res.Facts = facts(w, &r, &gl, &gr)
	if w.Spoke != nil {
		buf.sp = r.sp
		res.Facts.Spoke = &buf.sp
	}
	if w.IncludeLacing {
		res.Lacing = plan(r.n, &gl, &gr, &r)
		res.KeySpoke = 1
	}
	return res, nil
}

// shortest is a side's shortest spoke.
func shortest(g *sideGeom) float64 {
	if len(g.spokes) == 0 {
		return g.rep.lengthMM
	}
	m := math.Inf(1)
	for _, s := range g.spokes {
		m = math.Min(m, s.lengthMM)
	}
	return m
}

func sideResult(g *sideGeom, s *side, rimR float64, buf *wheelBuf, k int) SideResult {
	nip, brace := g.repNipple, g.repBrace
	if g.repBrace == 0 {
		nip, brace = nippleAngle(rimR, s.r, g.rep), bracingDeg(g.rep)
	}
	out := SideResult{
		LengthMM:               g.rep.lengthMM,
		BracingAngleDeg:        brace,
		NippleAngleDeg:         nip,
		HubAngleDeg:            g.rep.alpha * deg,
		MaxCrosses:             g.maxCrosses,
		Spokes:                 s.n,
		Exit:                   s.exit,
		MaxCrossesClearOfHeads: g.clearMax,
	}
	if s.exit == ExitJBend && g.even {
		// Exact decimal: crosses × 360 / n, not α converted back.
		out.HubAngleDeg = float64(s.crosses) * 360 / float64(s.n)
	} else if !g.even {
		out.HubAngleDeg = roundDeg(out.HubAngleDeg)
	}
	if s.exit == ExitAngled {
		buf.val[k][4] = s.angle * deg
		out.ExitAngleDeg = &buf.val[k][4]
	}
	if g.uniform {
		buf.groups[k] = LengthGroup{LengthMM: g.rep.lengthMM, Count: s.n}
		out.LengthGroups = buf.groups[k : k+1 : k+1]
	} else {
		out.LengthGroups = groups(*g)
		out.LengthMM = out.LengthGroups[0].LengthMM
	}
	return out
}

// orderAndStock fills each length group's order length (Hooke's law at
// tension t when the spoke is known) and stock choice, and the side's
// figures from its longest group.
func orderAndStock(l *errList, r *resolved, out *SideResult, val *[5]float64, t float64, name string) {
	var wr wire
	hasStretch := r.hasSpoke && t > 0
	if hasStretch {
		wr = newWire(t, r.sp.EGPa*1000, r.sp.Body, r.sp.Butts, r.sp.ButtLengthsMM) // 1 GPa = 1000 N/mm²
	}
	gs := out.LengthGroups
	vals := val[1:1:4] // order, stock, end of a single group
	if len(gs) > 1 {
		vals = make([]float64, 0, 3*len(gs))
	}
	for i := range gs {
		g := &gs[i]
		want := g.LengthMM
		if hasStretch {
			want = wr.unloadedMM(g.LengthMM)
			if want <= wr.buttLen {
				l.impossible("/spoke/sections", "the listed sections ("+fmtMM(wr.buttLen)+") are longer than the "+name+" spoke ("+fmtMM(want)+")")
				return
			}
			vals = append(vals, want)
			g.OrderLengthMM = &vals[len(vals)-1]
		}
		if r.stock == nil {
			continue
		}
		stock := chooseStock(r.stock, want)
		end := stock - g.LengthMM
		if hasStretch {
			end = stock + wr.stretchMM(stock) - g.LengthMM
		}
		vals = append(vals, stock, end)
		g.StockLengthMM, g.SpokeEndMM = &vals[len(vals)-2], &vals[len(vals)-1]
	}
	out.OrderLengthMM, out.StockLengthMM, out.SpokeEndMM = gs[0].OrderLengthMM, gs[0].StockLengthMM, gs[0].SpokeEndMM
}

// feasible checks a side's cross count against its flange's spokes and,
// for J-bend spokes, the tangent limit.
func (l *errList) feasible(p string, s *side, g *sideGeom) {
	if s.crosses == 0 {
		return
	}
	if s.n%2 != 0 {
		l.impossible(p, "crossed lacing needs an even number of spokes on the flange (leading and trailing spokes alternate); "+
			strconv.Itoa(s.n)+" spokes allow radial lacing only: at most 0 crosses")
		return
	}
	if 2*s.crosses >= s.n {
		l.impossible(p, fmt.Sprintf("%d crosses would take each spoke half way round a flange of %d spokes: at most %d crosses",
			s.crosses, s.n, max(s.n/2-1, 0)))
		return
	}
	if s.exit != ExitJBend {
		return
	}
	if s.crosses > g.maxCrosses || g.alphaMax > g.limit+1e-9 {
		m := g.maxCrosses
		if s.crosses <= m {
			m = s.crosses - 1 // uneven holes: this pattern passes the tangent somewhere
		}
		l.impossible(p, fmt.Sprintf("%d crosses would make the spoke leave the flange past the tangent (hub angle %.1f° > %.1f° = arccos(r/R)): at most %d crosses for this geometry",
			s.crosses, g.alphaMax*deg, g.limit*deg, m))
	}
}

// facts gathers what the rule set judges.
func facts(w *Wheel, r *resolved, gl, gr *sideGeom) Facts {
	f := Facts{Kind: r.kind, Brake: r.brake, Driven: r.driven, HasSpoke: r.hasSpoke,
		HeadMM: r.headD, HeadAssumed: w.Spoke == nil || w.Spoke.HeadDiameterMM == nil, TargetN: r.target, Stock: r.stock}
	f.Sides[0], f.Sides[1] = sideFacts(&r.left, gl), sideFacts(&r.right, gr)
	if o, sl, sr := w.Rim.SpokeHoleOffsetMM, w.Rim.StaggerMM.Left, w.Rim.StaggerMM.Right; o != 0 || sl != 0 || sr != 0 {
		// Turned round, the offset points the other way and each side's
		// holes are the other side's: left holes at −o + s_R, right at
		// −o − s_L. The in-plane geometry is unchanged.
		turned := func(g *sideGeom, z, zRim float64) float64 {
			dz := math.Abs(z - zRim)
			if len(g.spokes) == 0 {
				return float64(g.n) * dz / hypot(g.rep.inPlane, dz)
			}
			sum := 0.0
			for _, s := range g.spokes {
				sum += dz / hypot(s.inPlane, dz)
			}
			return sum
		}
		// A left side left with no bracing (its holes in its flange's
		// plane) has no ratio to compare: 0, as for a rim with no offset,
		// never +Inf or NaN. The rule set compares only a positive ratio.
		if left := turned(gl, r.left.z, -o+sr); left > 0 {
			f.RatioIfRimTurned = turned(gr, r.right.z, -o-sl) / left
		}
	}
	return f
}

func sideFacts(s *side, g *sideGeom) SideFacts {
	sf := SideFacts{Exit: s.exit, Crosses: s.crosses, Spokes: s.n, HoleMM: s.hole, HoleAssumed: s.assumedHole,
		ThicknessMM: s.thickness, ClearMM: s.clear, NippleMaxDeg: g.nippleMax, BracingMinDeg: g.braceMin,
		PatternAngleDeg: float64(s.crosses) * 360 / float64(s.n)}
	if s.exit != ExitJBend {
		sf.SeatAngleDeg = g.rep.alpha * deg
	}
	if !math.IsInf(g.headGap, 1) {
		sf.PassesHeads, sf.HeadGapMM = true, g.headGap
	}
	return sf
}

// plan writes the lacing plan in spoke order.
func plan(n int, gl, gr *sideGeom, r *resolved) []LacingSpoke {
	out := make([]LacingSpoke, n)
	planSide(out, n, gl, r.left.crosses, "left")
	planSide(out, n, gr, r.right.crosses, "right")
	return out
}

func planSide(out []LacingSpoke, n int, g *sideGeom, crosses int, name string) {
	if g.spokes == nil { // even lacing: rep turned to each hole
		evenPlan(out, n, g, crosses, name)
		return
	}
	for _, sg := range g.spokes {
		// The rim hole's angle exactly; the hub hole's to a billionth of a
		// degree (a clocking found by search carries rounding noise).
		e := LacingSpoke{Spoke: sg.rimIdx + 1, Side: name, RimHoleDeg: (float64(sg.rimIdx) + 0.5) * 360 / float64(n),
			HubHoleDeg: roundDeg(normDeg(sg.hubRad * deg)), Crosses: crosses, LengthMM: sg.lengthMM}
		switch sg.dir {
		case 1:
			e.Direction, e.Head = "leading", "out"
		case -1:
			e.Direction, e.Head = "trailing", "in"
		default:
			e.Direction, e.Head = "radial", "out"
		}
		out[sg.rimIdx] = e
	}
}

// evenPlan writes an evenly laced side's spokes: flange hole j's spoke goes
// to the side's rim hole m = j + d·k (every other rim hole, the left side's
// the odd ones), its hub hole at the side's first rim hole's angle plus j
// pitches (a seated spoke's exit point: its rim hole less d times the seat
// angle).
func evenPlan(out []LacingSpoke, n int, g *sideGeom, crosses int, name string) {
	step := 360 / float64(n)
	pitch := g.pitch * deg
	for j := range g.n {
		d, m := 0, j
		if !g.radial {
			d = dirOf(j, crosses, g.n, g.left)
			m = ((j+d*crosses)%g.n + g.n) % g.n
		}
		i := 2*m + g.first
		rim := (float64(i) + 0.5) * step
		hub := (float64(g.first)+0.5)*step + float64(j)*pitch
		if g.straight {
			hub = rim - float64(d)*g.psi*deg
		}
		e := LacingSpoke{Spoke: i + 1, Side: name, RimHoleDeg: rim, HubHoleDeg: roundDeg(normDeg(hub)), Crosses: crosses, LengthMM: g.rep.lengthMM}
		switch d {
		case 1:
			e.Direction, e.Head = "leading", "out"
		case -1:
			e.Direction, e.Head = "trailing", "in"
		default:
			e.Direction, e.Head = "radial", "out"
		}
		out[i] = e
	}
}

// roundDeg rounds an angle to 1e-9° (and 360 back to 0).
func roundDeg(d float64) float64 {
	d = math.Round(d*1e9) / 1e9
	if d >= 360 {
		d -= 360
	}
	return d + 0
}

// normDeg maps an angle into [0°, 360°).
func normDeg(d float64) float64 {
	d -= 360 * math.Floor(d/360)
	if d >= 360 {
		d -= 360
	}
	return d + 0 // no −0
}
