package fit

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"wheelbench/service/field"
	"wheelbench/service/geometry"
	"wheelbench/service/spoke"
)

// Report is the answer to a compatibility check. Slices are never nil, so
// they encode as [] rather than null.
type Report struct {
	Verdict  Verdict    `json:"verdict"`
	Findings []Finding  `json:"findings"`
	Changes  []Change   `json:"changes"`
	Cautions []string   `json:"cautions"`
	Left     SideLength `json:"left"`
	Right    SideLength `json:"right"`
	Geometry Geometry   `json:"geometry"`
}

// SideLength echoes one side's spoke lengths.
type SideLength struct {
	LengthMM      float64  `json:"length_mm"`
	StockLengthMM *float64 `json:"stock_length_mm,omitempty"`
	// TensionN is this side's tension at the target.
	TensionN float64 `json:"tension_n"`
}

// Geometry is the spoke-length calculation a report rests on.
type Geometry struct {
	// Crosses are the crosses the lengths were computed for: the requested
	// ones, except that a side whose crosses pass the tangent is computed
	// at its max_crosses (the finding lacing_wraps_flange and a caution
	// say so).
	Crosses Crosses             `json:"crosses"`
	Left    geometry.SideResult `json:"left"`
	Right   geometry.SideResult `json:"right"`
	Ratio   float64             `json:"tension_ratio_left_to_right"`
	// NippleWasherMM is the washer under each nipple head the lengths
	// include (given on the rim, or proposed).
	NippleWasherMM float64 `json:"nipple_washer_mm"`
	// Findings are the findings on the geometry alone — every one of them
	// is also among the report's findings.
	Findings []Finding              `json:"findings"`
	Lacing   []geometry.LacingSpoke `json:"lacing,omitempty"`
	KeySpoke int                    `json:"key_spoke,omitempty"`
	Result   geometry.Result        `json:"-"`
	Wheel    geometry.Wheel         `json:"-"`
	Wrapped  [2]bool                `json:"-"`
}

// Crosses is a pair of cross counts.
type Crosses struct {
	Left  int `json:"left"`
	Right int `json:"right"`
}

// Check decides whether the parts of in make a wheel. It validates in
// (field errors naming members of the body), computes the geometry — a
// side whose crosses pass the tangent is not an error here but the finding
// lacing_wraps_flange, its lengths computed at its max_crosses — proposes
// washers under the nipple heads when the heads would pull through (and
// computes the lengths with them), and applies every rule: those on the
// geometry alone (the same as spoke lengths apply) and those on the parts.
// The Report is deterministic and finite.
func Check(in Input, opt Options) (Report, error) {
	if err := Validate(in); err != nil {
		return Report{}, err
	}
	if err := opt.validate(); err != nil {
		return Report{}, err
	}
	p, err := resolveParts(in)
	if err != nil {
		return Report{}, err
	}

	var j judge
	if in.SpokeCount != in.Hub.Holes || in.SpokeCount != in.Rim.Holes {
		j.add(Finding{
			Code:    CodeHoleCountMismatch,
			Message: fmt.Sprintf("Spoke count %d, hub holes %d and rim holes %d must all agree.", in.SpokeCount, in.Hub.Holes, in.Rim.Holes),
			Remedy:  "Choose a hub and a rim with the same number of holes, and that many spokes.",
			Values: map[string]float64{
				"spoke_count": float64(in.SpokeCount), "hub_holes": float64(in.Hub.Holes), "rim_holes": float64(in.Rim.Holes),
			},
		})
	}
	washer := checkRim(&j, in, p, opt)

	w := in.Wheel()
	w.Rim.NippleWasherMM += washer
	res, wrapped, crosses, err := computeGeometry(w)
	if err != nil {
		return Report{}, err
	}
	for k, wr := range wrapped {
		if !wr {
			continue
		}
		name := sideNames[k]
		req, sr := *in.Crosses.Left, res.Left
		if k == 1 {
			req, sr = *in.Crosses.Right, res.Right
		}
		j.add(Finding{
			Code: CodeLacingWrapsFlange, Side: name,
			Message: fmt.Sprintf("At %d crosses the %s spokes would leave the flange past the tangent: no J-bend spoke can be laced so.", req, name),
			Remedy:  fmt.Sprintf("Lace the %s side with at most %d crosses (%d clears the heads).", name, sr.MaxCrosses, sr.MaxCrossesClearOfHeads),
			Values:  map[string]float64{"crosses": float64(req), "max_crosses": float64(sr.MaxCrosses)},
		})
		j.caution(fmt.Sprintf("The %s side cannot be laced %d-cross with this hub and rim; its spoke lengths are computed for %d crosses, the most this geometry allows.",
			name, req, sr.MaxCrosses))
	}

	// The rules on the geometry alone, then those on the parts.
	nip := in.Nipple
	var wj judge
	wj.wheelRules(w, &res, &nip, opt)
	geoFindings := slices.Clone(wj.fs)
	j.fs = append(j.fs, wj.fs...)
	j.cs = append(j.cs, wj.cs...)
	for _, c := range wj.cautions {
		j.caution(c)
	}
	for k, f := range []geometry.Flange{in.Hub.Left, in.Hub.Right} {
		seated := res.Facts.Sides[k].Exit != geometry.ExitJBend
		checkFlange(&j, in, p, sideNames[k], f, seated, res.Facts.Sides[k].Spokes, opt)
	}
	tl, tr := 0.0, 0.0
	if res.Left.TensionN != nil {
		tl, tr = *res.Left.TensionN, *res.Right.TensionN
	}
	checkRimLimit(&j, in, math.Max(tl, tr), res.Facts.Kind, opt)
	checkTyre(&j, in, opt)
	if h, fr := in.Hub.SpacingMM, in.FrameSpacingMM; h != nil && fr != nil && math.Abs(*h-*fr) > opt.HubSpacingToleranceMM+eps {
		j.add(Finding{
			Code:    CodeHubSpacingMismatch,
			Message: fmt.Sprintf("The hub is %.4g mm over the locknuts; the frame is spaced %.4g mm.", *h, *fr),
			Remedy:  fmt.Sprintf("Use a hub spaced %.4g mm, or have the hub re-spaced as its maker allows.", *fr),
			Values: map[string]float64{
				"hub_spacing_mm": *h, "frame_spacing_mm": *fr,
				"difference_mm": round4(*h - *fr), "tolerance_mm": opt.HubSpacingToleranceMM,
			},
		})
	}
	if a := assumedInUse(j.fs); len(a) > 0 {
		j.caution(fmt.Sprintf("Some warnings and errors rest on typical values, not measurements (%s): measure those parts to confirm.", strings.Join(a, ", ")))
	}

	rep := Report{
		Findings: j.fs, Changes: mergeSides(j.cs), Cautions: j.cautions,
		Left:  SideLength{LengthMM: res.Left.LengthMM, StockLengthMM: res.Left.StockLengthMM, TensionN: round4(tl)},
		Right: SideLength{LengthMM: res.Right.LengthMM, StockLengthMM: res.Right.StockLengthMM, TensionN: round4(tr)},
		Geometry: Geometry{Crosses: crosses, Left: res.Left, Right: res.Right, Ratio: res.TensionRatioLeftToRight,
			NippleWasherMM: w.Rim.NippleWasherMM, Findings: geoFindings, Lacing: res.Lacing, KeySpoke: res.KeySpoke,
			Result: res, Wheel: w, Wrapped: wrapped},
	}
	if rep.Findings == nil {
		rep.Findings = []Finding{}
	}
	if rep.Geometry.Findings == nil {
		rep.Geometry.Findings = []Finding{}
	}
	if rep.Changes == nil {
		rep.Changes = []Change{}
	}
	if rep.Cautions == nil {
		rep.Cautions = []string{}
	}
	rep.Verdict = verdictOf(rep.Findings)
	return rep, nil
}

// computeGeometry computes w; a J-bend side whose crosses pass the tangent
// is computed at its max_crosses instead and reported as wrapped.
func computeGeometry(w geometry.Wheel) (geometry.Result, [2]bool, Crosses, error) {
	var wrapped [2]bool
	res, err := geometry.Compute(w)
	if err == nil {
		return res, wrapped, Crosses{Left: *w.Crosses.Left, Right: *w.Crosses.Right}, nil
	}
	var crosses Crosses
	var rest []error
	for _, fe := range field.All(err) {
		switch p := fe.Pointer; {
		case fe.Unprocessable && p == "/crosses/left" && tangentOnly(w, 0):
			wrapped[0] = true
		case fe.Unprocessable && p == "/crosses/right" && tangentOnly(w, 1):
			wrapped[1] = true
		default:
			rest = append(rest, fe)
		}
	}
	if len(rest) > 0 || !wrapped[0] && !wrapped[1] {
		return geometry.Result{}, wrapped, crosses, err
	}
	crosses = Crosses{Left: *w.Crosses.Left, Right: *w.Crosses.Right}
	// Radial on the wrapped sides gives their max_crosses.
	probe := w
	probe.IncludeLacing, probe.Stock = false, nil
	zero := 0
	for k, wr := range wrapped {
		if wr {
			setCrosses(&probe, k, &zero)
		}
	}
	pr, err := geometry.Compute(probe)
	if err != nil {
		return geometry.Result{}, wrapped, crosses, err
	}
	if wrapped[0] {
		m := pr.Left.MaxCrosses
		setCrosses(&w, 0, &m)
		crosses.Left = m
	}
	if wrapped[1] {
		m := pr.Right.MaxCrosses
		setCrosses(&w, 1, &m)
		crosses.Right = m
	}
	res, err = geometry.Compute(w)
	return res, wrapped, crosses, err
}

// tangentOnly reports whether side k's crosses fail only the tangent: a
// J-bend flange with an even spoke count, fewer than half its spokes.
func tangentOnly(w geometry.Wheel, k int) bool {
	f, c := w.Hub.Left, *w.Crosses.Left
	if k == 1 {
		f, c = w.Hub.Right, *w.Crosses.Right
	}
	if f.Exit == geometry.ExitTangential || f.Exit == geometry.ExitAngled || w.Hub.Type == geometry.StraightPull {
		return false
	}
	n := w.SpokeCount / 2
	if f.Spokes != nil {
		n = *f.Spokes
	} else if o := [2]*int{w.Hub.Right.Spokes, w.Hub.Left.Spokes}[k]; o != nil {
		n = w.SpokeCount - *o
	}
	return n%2 == 0 && 2*c < n
}

func setCrosses(w *geometry.Wheel, k int, c *int) {
	if k == 0 {
		w.Crosses.Left = c
	} else {
		w.Crosses.Right = c
	}
}

// assumedInUse lists, sorted and once each, the assumed fields behind
// warnings and errors.
func assumedInUse(fs []Finding) []string {
	var out []string
	for _, f := range fs {
		if f.Severity == Info {
			continue
		}
		for _, a := range f.Assumed {
			if !slices.Contains(out, a) {
				out = append(out, a)
			}
		}
	}
	slices.Sort(out)
	return out
}

// parts is the spoke with every dimension the parts rules use filled in,
// and the request fields (dotted paths) filled with typical values.
type parts struct {
	endMM         float64
	headMM        float64
	elbowMM       float64
	threadSizeMM  float64 // the spoke size the thread is cut for
	threadTPI     float64
	threadMajorMM float64 // measured, 0 when not given
	assumed       map[string]bool
}

// resolveParts fills the spoke's optional dimensions with typical values
// by gauge. It assumes Validate passed; it reports (as *field.Error, 422) a
// dimension that is needed and has no typical value for the spoke's size.
func resolveParts(in Input) (parts, error) {
	p := parts{assumed: map[string]bool{}}
	s := in.Spoke
	r, _ := s.Resolve(true)
	p.endMM = r.EndMM
	typ, haveTyp := spoke.TypicalFor(r.Gauge)
	var errs []error
	fill := func(given *float64, typical float64, path, pointer string, needed bool) float64 {
		if given != nil {
			return *given
		}
		if haveTyp && typical > 0 {
			p.assumed[path] = true
			return typical
		}
		if needed {
			errs = append(errs, field.Unprocessable(pointer,
				"needed for this check, and there is no typical value for a %.4g mm spoke", p.endMM))
		}
		return 0
	}
	jbend := false
	for _, f := range []geometry.Flange{in.Hub.Left, in.Hub.Right} {
		jbend = jbend || f.Exit == geometry.ExitJBend || f.Exit == "" && in.Hub.Type != geometry.StraightPull
	}
	p.headMM = fill(s.HeadDiameterMM, typ.HeadDiameterMM, "spoke.head_diameter_mm", "/spoke/head_diameter_mm", true)
	p.elbowMM = fill(s.ElbowLengthMM, typ.ElbowLengthMM, "spoke.elbow_length_mm", "/spoke/elbow_length_mm", jbend)
	p.threadSizeMM = p.endMM
	if s.Thread != nil {
		if sz := s.Thread.Size(); sz > 0 {
			p.threadSizeMM = sz
		}
		if s.Thread.DiameterMM != nil {
			p.threadMajorMM = *s.Thread.DiameterMM
		}
	}
	if s.Thread != nil && s.Thread.TPI != nil {
		p.threadTPI = *s.Thread.TPI
	} else {
		p.threadTPI = fill(nil, typ.ThreadTPI, "spoke.thread", "/spoke/thread/tpi", true)
		p.assumed["spoke.thread"] = true
	}
	if p.threadTPI > 0 {
		if _, ok := spoke.ThreadStressArea(p.endMM, p.threadMajorMM, p.threadTPI); !ok {
			errs = append(errs, field.Unprocessable("/spoke/thread/tpi",
				"a %.4g mm spoke cannot carry a thread of %.4g per inch (the pitch is deeper than the thread)", p.endMM, p.threadTPI))
		}
	}
	if len(errs) > 0 {
		return p, joinErrs(errs)
	}
	return p, nil
}

// assumedOf returns, in the order given, those of paths that were filled
// with typical values.
func (p parts) assumedOf(paths ...string) []string {
	var out []string
	for _, k := range paths {
		if p.assumed[k] {
			out = append(out, k)
		}
	}
	return out
}
