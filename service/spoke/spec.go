package spoke

import (
	"fmt"
	"math"
	"strconv"

	"wheelbench/service/field"
)

// Spec is one spoke, described the same way for every calculation: spoke
// lengths and stretch, the fit rules, conversions, aims and audits.
//
// The spoke's ends are round: DiameterMM (or a BS 3737 Gauge) is the end
// diameter, where the head is formed and the thread rolled. The body — the
// spoke's length outside the listed Sections — has Profile: round (the end
// diameter, a plain-gauge spoke) or bladed / oval (an ellipse of WidthMM ×
// ThicknessMM). Sections are stretches at another size: the thin middle of
// a butted spoke, or the round ends of a bladed one. MeasuredSection says
// which of these the tensiometer sits on (default: the thinnest, where
// builders measure).
type Spec struct {
	// Profile of the body: round (default), bladed, oval or rectangular.
	Profile     Profile  `json:"profile,omitempty"`
	DiameterMM  *float64 `json:"diameter_mm,omitempty"`
	Gauge       *int     `json:"gauge,omitempty"`
	WidthMM     *float64 `json:"width_mm,omitempty"`
	ThicknessMM *float64 `json:"thickness_mm,omitempty"`
	// Sections are butted stretches at other sizes, unloaded length.
	Sections []Butt `json:"sections,omitempty"`
	// Material names a material (default stainless_steel); EGPa overrides
	// its Young's modulus.
	Material string   `json:"material,omitempty"`
	EGPa     *float64 `json:"e_gpa,omitempty"`
	// Thread is the rolled thread at the spoke's end; absent: the end
	// diameter's size at its typical pitch.
	Thread *Thread `json:"thread,omitempty"`
	// ThreadLengthMM is the length of the rolled thread.
	ThreadLengthMM *float64 `json:"thread_length_mm,omitempty"`
	// HeadDiameterMM is the J-bend head's diameter.
	HeadDiameterMM *float64 `json:"head_diameter_mm,omitempty"`
	// ElbowLengthMM is the straight length from under the head to the
	// bend: the flange thickness the elbow suits.
	ElbowLengthMM *float64 `json:"elbow_length_mm,omitempty"`
	// MeasuredSection is where the tensiometer sits: "thinnest" (default),
	// "body", or "section_1", "section_2", … for a listed section.
	MeasuredSection string `json:"measured_section,omitempty"`
}

// Butt is one stretch of a spoke at a size other than the body's: a round
// DiameterMM, or a bladed or oval WidthMM × ThicknessMM.
type Butt struct {
	LengthMM    float64  `json:"length_mm"`
	Profile     Profile  `json:"profile,omitempty"`
	DiameterMM  *float64 `json:"diameter_mm,omitempty"`
	WidthMM     *float64 `json:"width_mm,omitempty"`
	ThicknessMM *float64 `json:"thickness_mm,omitempty"`
}

// Thread is a spoke or nipple thread, named as the trade names it: by the
// spoke size it is cut for (SizeMM, or a BS 3737 Gauge) and its pitch in
// threads per inch. DiameterMM is the thread's measured major diameter,
// optional; a rolled thread measures more than the wire it was rolled on,
// so it is compared only with another measured diameter.
type Thread struct {
	SizeMM     *float64 `json:"size_mm,omitempty"`
	Gauge      *int     `json:"gauge,omitempty"`
	TPI        *float64 `json:"tpi,omitempty"`
	DiameterMM *float64 `json:"diameter_mm,omitempty"`
}

// Limits that separate absurd input from real spokes.
const (
	maxSpokeMM   = 20    // a cross-section dimension
	maxLengthMM  = 5000  // a butted length
	maxButts     = 8     // butting rarely has more than three
	maxEGPa      = 1000  // stiffer than any metal
	maxTPI       = 200.0 // finer than any spoke thread
	measuredBody = "body"
	thinnest     = "thinnest"
)

// Resolved is a validated Spec with its sizes worked out.
type Resolved struct {
	// EndMM is the end diameter (0 when the spec gives none).
	EndMM float64
	// Gauge is the BS 3737 gauge of the end, 0 when none matches.
	Gauge int
	// Body is the body's section; Butts the listed sections, in order.
	Body  Section
	Butts []Section
	// ButtLengthsMM are the listed sections' lengths.
	ButtLengthsMM []float64
	Material      Material
	// EGPa is the modulus used: the material's or the override.
	EGPa float64
	// MaterialAssumed is true when no material or modulus was given.
	MaterialAssumed bool
	// Measured is the section the tensiometer sits on; MeasuredName says
	// which ("body" or "section_<n>").
	Measured     Section
	MeasuredName string
}

// Resolve validates s and works out its sizes. requireEnd says whether
// the end diameter is needed (it is for lengths, stretch and the fit
// rules; a conversion needs only the measured section).
func (s Spec) Resolve(requireEnd bool) (Resolved, []*field.Error) {
	var r Resolved
	var ps []*field.Error
	bad := func(p, format string, a ...any) { ps = append(ps, field.Invalid(p, format, a...)) }
	impossible := func(p, format string, a ...any) { ps = append(ps, field.Unprocessable(p, format, a...)) }
	size := func(p string, v *float64) float64 {
		if v == nil {
			return 0
		}
		if !finite(*v) || *v <= 0 || *v > maxSpokeMM {
			bad(p, "must be a positive, finite size of at most %d mm", maxSpokeMM)
			return 0
		}
		return *v
	}

	switch {
	case s.DiameterMM != nil && s.Gauge != nil:
		d := size("/diameter_mm", s.DiameterMM)
		g, ok := GaugeDiameterMM(*s.Gauge)
		if !ok {
			bad("/gauge", "is not a BS 3737 gauge spokes come in (8 to 17)")
		} else if d > 0 && math.Abs(d-g) > gaugeMatchMM {
			bad("/gauge", "gauge %d is %.4g mm, not the %.4g mm diameter_mm: give one of them", *s.Gauge, g, d)
		}
		r.EndMM = d
	case s.DiameterMM != nil:
		r.EndMM = size("/diameter_mm", s.DiameterMM)
	case s.Gauge != nil:
		if d, ok := GaugeDiameterMM(*s.Gauge); ok {
			r.EndMM = d
		} else {
			bad("/gauge", "is not a BS 3737 gauge spokes come in (8 to 17)")
		}
	}
	r.Gauge = GaugeFor(r.EndMM)

	prof := s.Profile
	if prof == "" {
		prof = Round
	}
	switch prof {
	case Round:
		if s.WidthMM != nil || s.ThicknessMM != nil {
			bad("/profile", "width_mm and thickness_mm describe a bladed or oval body: set profile, or leave them out for a round spoke")
		}
		r.Body = Section{Profile: Round, DiameterMM: r.EndMM}
		if r.EndMM == 0 && s.DiameterMM == nil && s.Gauge == nil {
			bad("/diameter_mm", "give the spoke's diameter_mm or gauge")
		}
	case Bladed, Oval, Rectangular:
		w := size("/width_mm", s.WidthMM)
		t := size("/thickness_mm", s.ThicknessMM)
		if s.WidthMM == nil {
			bad("/width_mm", "a %s spoke needs its width_mm", prof)
		}
		if s.ThicknessMM == nil {
			bad("/thickness_mm", "a %s spoke needs its thickness_mm", prof)
		}
		if w > 0 && t > w {
			bad("/thickness_mm", "must not exceed width_mm (the blade lies flat)")
		}
		r.Body = Section{Profile: prof, WidthMM: w, ThicknessMM: t}
		if requireEnd && s.DiameterMM == nil && s.Gauge == nil {
			bad("/diameter_mm", "give the diameter_mm or gauge of the spoke's round ends")
		}
	default:
		bad("/profile", "must be round, bladed, oval or rectangular")
	}

	if len(s.Sections) > maxButts {
		bad("/sections", "at most %d sections", maxButts)
	} else {
		for i, b := range s.Sections {
			p := "/sections/" + strconv.Itoa(i)
			if !finite(b.LengthMM) || b.LengthMM <= 0 || b.LengthMM > maxLengthMM {
				bad(p+"/length_mm", "must be a positive, finite length of at most %d mm", maxLengthMM)
			}
			bp := b.Profile
			if bp == "" {
				bp = Round
			}
			var sec Section
			switch bp {
			case Round:
				if b.DiameterMM == nil {
					bad(p+"/diameter_mm", "a round section needs its diameter_mm")
				}
				if b.WidthMM != nil || b.ThicknessMM != nil {
					bad(p+"/profile", "width_mm and thickness_mm describe a bladed or oval section: set its profile")
				}
				sec = Section{Profile: Round, DiameterMM: size(p+"/diameter_mm", b.DiameterMM)}
			case Bladed, Oval, Rectangular:
				w, t := size(p+"/width_mm", b.WidthMM), size(p+"/thickness_mm", b.ThicknessMM)
				if b.WidthMM == nil || b.ThicknessMM == nil {
					bad(p+"/width_mm", "a %s section needs width_mm and thickness_mm", bp)
				}
				if w > 0 && t > w {
					bad(p+"/thickness_mm", "must not exceed width_mm (the blade lies flat)")
				}
				sec = Section{Profile: bp, WidthMM: w, ThicknessMM: t}
			default:
				bad(p+"/profile", "must be round, bladed, oval or rectangular")
			}
			r.Butts = append(r.Butts, sec)
			r.ButtLengthsMM = append(r.ButtLengthsMM, b.LengthMM)
		}
	}

	name := s.Material
	if name == "" {
		name = "stainless_steel"
		r.MaterialAssumed = s.EGPa == nil
	}
	m, ok := LookupMaterial(name)
	if !ok {
		bad("/material", "must be one of %v", MaterialNames())
	}
	r.Material, r.EGPa = m, m.EGPa
	if s.EGPa != nil {
		if e := *s.EGPa; !finite(e) || e <= 0 || e > maxEGPa {
			bad("/e_gpa", "must be a positive, finite modulus of at most %d GPa", maxEGPa)
		} else {
			r.EGPa = e
		}
	}

	if s.Thread != nil {
		ps = append(ps, s.Thread.check("/thread", false)...)
	}
	for _, f := range []struct {
		p string
		v *float64
	}{{"/thread_length_mm", s.ThreadLengthMM}, {"/head_diameter_mm", s.HeadDiameterMM}, {"/elbow_length_mm", s.ElbowLengthMM}} {
		if f.v != nil && (!finite(*f.v) || *f.v <= 0 || *f.v > 50) {
			bad(f.p, "must be a positive, finite size of at most 50 mm")
		}
	}
	if s.HeadDiameterMM != nil && r.EndMM > 0 && *s.HeadDiameterMM <= r.EndMM {
		impossible("/head_diameter_mm", "a %.4g mm head on a %.4g mm spoke holds nothing", *s.HeadDiameterMM, r.EndMM)
	}

	if len(ps) == 0 {
		var err error
		r.Measured, r.MeasuredName, err = r.measured(s.MeasuredSection)
		if err != nil {
			bad("/measured_section", "%v", err)
		}
	}
	return r, ps
}

// measured picks the section named by which.
func (r Resolved) measured(which string) (Section, string, error) {
	switch which {
	case "", thinnest:
		best, name := r.Body, measuredBody
		for i, b := range r.Butts {
			if thinner(b, best) {
				best, name = b, "section_"+strconv.Itoa(i+1)
			}
		}
		return best, name, nil
	case measuredBody:
		return r.Body, measuredBody, nil
	}
	for i, b := range r.Butts {
		if which == "section_"+strconv.Itoa(i+1) {
			return b, which, nil
		}
	}
	if len(r.Butts) == 0 {
		return Section{}, "", fmt.Errorf(`must be "thinnest" or "body": the spoke lists no sections`)
	}
	return Section{}, "", fmt.Errorf(`must be "thinnest", "body" or section_1 to section_%d`, len(r.Butts))
}

// thinner reports whether a is thinner than b where a tensiometer's plunger
// presses (then smaller in area).
func thinner(a, b Section) bool {
	ta, tb := a.Thickness(), b.Thickness()
	if math.Abs(ta-tb) > 1e-9 {
		return ta < tb
	}
	return a.AreaMM2() < b.AreaMM2()-1e-12
}

// MinArea is the smallest cross-section of the spoke's wire (body and
// sections), mm², and which one it is.
func (r Resolved) MinArea() (float64, string) {
	a, name := r.Body.AreaMM2(), measuredBody
	for i, b := range r.Butts {
		if x := b.AreaMM2(); x < a {
			a, name = x, "section_"+strconv.Itoa(i+1)
		}
	}
	return a, name
}

// check validates a thread. nipple says whether the pitch is required.
func (t Thread) check(at string, nipple bool) []*field.Error {
	var ps []*field.Error
	bad := func(p, format string, a ...any) { ps = append(ps, field.Invalid(at+p, format, a...)) }
	if t.SizeMM != nil && (!finite(*t.SizeMM) || *t.SizeMM <= 0 || *t.SizeMM > maxSpokeMM) {
		bad("/size_mm", "must be a positive, finite size of at most %d mm", maxSpokeMM)
	}
	if t.Gauge != nil {
		if _, ok := GaugeDiameterMM(*t.Gauge); !ok {
			bad("/gauge", "is not a BS 3737 gauge spokes come in (8 to 17)")
		}
		if t.SizeMM != nil {
			bad("/gauge", "give size_mm or gauge, not both")
		}
	}
	if t.DiameterMM != nil && (!finite(*t.DiameterMM) || *t.DiameterMM <= 0 || *t.DiameterMM > maxSpokeMM) {
		bad("/diameter_mm", "must be a positive, finite size of at most %d mm", maxSpokeMM)
	}
	switch {
	case t.TPI == nil && nipple:
		bad("/tpi", "give the thread's pitch in threads per inch")
	case t.TPI != nil && (!finite(*t.TPI) || *t.TPI <= 0 || *t.TPI > maxTPI):
		bad("/tpi", "must be a positive, finite pitch of at most %g threads per inch", maxTPI)
	}
	if nipple && t.SizeMM == nil && t.Gauge == nil && t.DiameterMM == nil {
		bad("/size_mm", "name the spoke size the nipple is threaded for (size_mm or gauge), or give its measured diameter_mm")
	}
	return ps
}

// CheckNippleThread validates a nipple's thread; pointers start with at.
func (t Thread) CheckNippleThread(at string) []*field.Error { return t.check(at, true) }

// Size is the spoke size a thread is cut for, from SizeMM or Gauge (0 when
// neither is given).
func (t Thread) Size() float64 {
	if t.SizeMM != nil {
		return *t.SizeMM
	}
	if t.Gauge != nil {
		d, _ := GaugeDiameterMM(*t.Gauge)
		return d
	}
	return 0
}

// gaugeMatchMM: a diameter within this of a gauge is that gauge (2.0 mm
// spokes are sold as 14 gauge, 2.032 mm). Common practice.
const gaugeMatchMM = 0.05

// GaugeFor returns the BS 3737 gauge nearest d within gaugeMatchMM, or 0.
func GaugeFor(d float64) int {
	best, bestDiff := 0, math.Inf(1)
	for g, mm := range gaugeMM {
		if diff := math.Abs(mm - d); mm > 0 && diff <= gaugeMatchMM && diff < bestDiff {
			best, bestDiff = g, diff
		}
	}
	return best
}

// gaugeMM is gaugeInches in millimetres.
var gaugeMM = func() (mm [len(gaugeInches)]float64) {
	for g, in := range gaugeInches {
		mm[g] = in * MMPerInch
	}
	return mm
}()

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
