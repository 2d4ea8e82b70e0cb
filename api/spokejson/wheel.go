package spokejson

import (
	"encoding/binary"
	"math/bits"
	"strconv"

	"wheelbench/api/strictjson"
	"wheelbench/service/geometry"
	"wheelbench/service/spoke"
)

// DecodeWheel decodes one wheel body into w under the strict policy: by the
// fast path when it takes the body, else by strictjson, whose errors
// (*field.Error) it returns.
func DecodeWheel(b []byte, w *geometry.Wheel) error {
	if parseWheel(b, w, nil) {
		return nil
	}
	*w = geometry.Wheel{}
	return strictjson.Unmarshal(b, w)
}

// The fast path. wheelParser decodes the plain, common form of a wheel —
// exact lower-case member names, no duplicates, no null, no escapes or
// non-ASCII in strings — by hand and gives up (ok = false) on anything
// else, which then goes through strictjson, the strict decoder every
// route uses. So the fast path never decides an error: it either yields
// the Wheel the strict decoder would, or steps aside. FuzzWheelParser
// checks that.

type wheelParser struct {
	b   []byte
	i   int
	bad bool
	a   *arena
}

// arena hands out the decoded wheels' optional numbers and parts from
// shared slabs, so that a batch does not allocate each one. A slab is
// replaced, never grown, so that the pointers stay valid.
type arena struct {
	f  []float64
	n  []int
	sp []spoke.Spec
	st []geometry.Stock
}

// reuse lets the next wheel overwrite the slabs: only once nothing decoded
// so far is referenced any more.
func (a *arena) reuse() {
	a.f, a.n, a.sp, a.st = a.f[:0], a.n[:0], a.sp[:0], a.st[:0]
}

// drop forgets the slabs, leaving what was decoded to whatever holds it.
func (a *arena) drop() { *a = arena{} }

func (a *arena) float(v float64) *float64 {
	if a == nil {
		p := new(float64)
		*p = v
		return p
	}
	if len(a.f) == cap(a.f) {
		a.f = make([]float64, 0, 64)
	}
	a.f = append(a.f, v)
	return &a.f[len(a.f)-1]
}

func (a *arena) int(v int) *int {
	if a == nil {
		p := new(int)
		*p = v
		return p
	}
	if len(a.n) == cap(a.n) {
		a.n = make([]int, 0, 16)
	}
	a.n = append(a.n, v)
	return &a.n[len(a.n)-1]
}

func (a *arena) spoke() *spoke.Spec {
	if a == nil {
		return new(spoke.Spec)
	}
	if len(a.sp) == cap(a.sp) {
		a.sp = make([]spoke.Spec, 0, 4)
	}
	a.sp = append(a.sp, spoke.Spec{})
	return &a.sp[len(a.sp)-1]
}

func (a *arena) stock() *geometry.Stock {
	if a == nil {
		return new(geometry.Stock)
	}
	if len(a.st) == cap(a.st) {
		a.st = make([]geometry.Stock, 0, 4)
	}
	a.st = append(a.st, geometry.Stock{})
	return &a.st[len(a.st)-1]
}

// parseWheel decodes b into w; ok is false when the fast path declined (w
// is then garbage and must be decoded again the slow way). a may be nil.
func parseWheel(b []byte, w *geometry.Wheel, a *arena) (ok bool) {
	end, ok := parseWheelAt(b, 0, w, a)
	if !ok {
		return false
	}
	p := wheelParser{b: b, i: end}
	p.ws()
	return p.i == len(p.b)
}

// parseWheelAt decodes the object that starts at b[at] (after any
// whitespace) and returns where it ends; what follows is not looked at.
// It agrees with parseWheel(b[at:end]) and, like it, declines (ok = false)
// whatever it does not take.
func parseWheelAt(b []byte, at int, w *geometry.Wheel, a *arena) (end int, ok bool) {
	p := wheelParser{b: b, i: at, a: a}
	*w = geometry.Wheel{}
	p.object(func(k []byte) bool {
		switch string(k) {
		case "spoke_count":
			w.SpokeCount = p.integer()
		case "hub":
			p.hub(&w.Hub)
		case "rim":
			p.rim(&w.Rim)
		case "crosses":
			p.object(func(k []byte) bool {
				switch string(k) {
				case "left":
					w.Crosses.Left = p.intPtr()
				case "right":
					w.Crosses.Right = p.intPtr()
				default:
					return false
				}
				return true
			})
		case "spoke":
			w.Spoke = p.a.spoke()
			p.spoke(w.Spoke)
		case "target_tension_n":
			w.TargetTensionN = p.numPtr()
		case "stock":
			w.Stock = p.a.stock()
			p.stock(w.Stock)
		case "include_lacing":
			w.IncludeLacing = p.boolean()
		default:
			return false
		}
		return true
	})
	return p.i, !p.bad
}

func (p *wheelParser) hub(h *geometry.Hub) {
	p.object(func(k []byte) bool {
		switch string(k) {
		case "type":
			h.Type = p.str()
		case "kind":
			h.Kind = p.str()
		case "brake":
			h.Brake = p.str()
		case "holes":
			h.Holes = p.integer()
		case "left":
			p.flange(&h.Left)
		case "right":
			p.flange(&h.Right)
		case "disc_brake":
			h.DiscBrake = p.boolean()
		case "driven":
			h.Driven = p.boolean()
		case "motor":
			h.Motor = p.boolean()
		default:
			return false
		}
		return true
	})
}

func (p *wheelParser) flange(f *geometry.Flange) {
	p.object(func(k []byte) bool {
		switch string(k) {
		case "pcd_mm":
			f.PCDMM = p.number()
		case "center_to_flange_mm":
			f.CenterToFlangeMM = p.number()
		case "hole_diameter_mm":
			f.HoleDiameterMM = p.numPtr()
		case "thickness_mm":
			f.ThicknessMM = p.numPtr()
		case "spoke_exit_offset_mm":
			f.SpokeExitOffsetMM = p.numPtr()
		case "spokes":
			f.Spokes = p.intPtr()
		case "exit":
			f.Exit = p.str()
		case "exit_angle_deg":
			f.ExitAngleDeg = p.numPtr()
		default:
			return false
		}
		return true
	})
}

func (p *wheelParser) rim(r *geometry.Rim) {
	p.object(func(k []byte) bool {
		switch string(k) {
		case "erd_mm":
			r.ERDMM = p.number()
		case "spoke_hole_offset_mm":
			r.SpokeHoleOffsetMM = p.number()
		case "nipple_washer_mm":
			r.NippleWasherMM = p.number()
		case "stagger_mm":
			p.object(func(k []byte) bool {
				switch string(k) {
				case "left":
					r.StaggerMM.Left = p.number()
				case "right":
					r.StaggerMM.Right = p.number()
				default:
					return false
				}
				return true
			})
		default:
			return false
		}
		return true
	})
}

func (p *wheelParser) spoke(s *spoke.Spec) {
	p.object(func(k []byte) bool {
		switch string(k) {
		case "diameter_mm":
			s.DiameterMM = p.numPtr()
		case "gauge":
			s.Gauge = p.intPtr()
		case "profile":
			s.Profile = spoke.Profile(p.str())
		case "width_mm":
			s.WidthMM = p.numPtr()
		case "thickness_mm":
			s.ThicknessMM = p.numPtr()
		case "material":
			s.Material = p.str()
		case "e_gpa":
			s.EGPa = p.numPtr()
		case "head_diameter_mm":
			s.HeadDiameterMM = p.numPtr()
		case "measured_section":
			s.MeasuredSection = p.str()
		case "sections":
			s.Sections = []spoke.Butt{}
			p.array(func() {
				var sec spoke.Butt
				p.object(func(k []byte) bool {
					switch string(k) {
					case "length_mm":
						sec.LengthMM = p.number()
					case "diameter_mm":
						sec.DiameterMM = p.numPtr()
					case "profile":
						sec.Profile = spoke.Profile(p.str())
					case "width_mm":
						sec.WidthMM = p.numPtr()
					case "thickness_mm":
						sec.ThicknessMM = p.numPtr()
					default:
						return false
					}
					return true
				})
				s.Sections = append(s.Sections, sec)
			})
		default:
			return false
		}
		return true
	})
}

func (p *wheelParser) stock(s *geometry.Stock) {
	p.object(func(k []byte) bool {
		switch string(k) {
		case "increment_mm":
			s.IncrementMM = p.numPtr()
		case "lengths_mm":
			s.LengthsMM = []float64{}
			p.array(func() { s.LengthsMM = append(s.LengthsMM, p.number()) })
		default:
			return false
		}
		return true
	})
}

func (p *wheelParser) ws() {
	b, i := p.b, p.i // locals: the loop then keeps them in registers
	for i < len(b) && (b[i] == ' ' || b[i] == '\t' || b[i] == '\n' || b[i] == '\r') {
		i++
	}
	p.i = i
}

// expect consumes c after whitespace.
func (p *wheelParser) expect(c byte) bool {
	p.ws()
	if p.bad || p.i >= len(p.b) || p.b[p.i] != c {
		p.bad = true
		return false
	}
	p.i++
	return true
}

// peek reports whether the next non-space byte is c, without consuming it.
func (p *wheelParser) peek(c byte) bool {
	p.ws()
	return !p.bad && p.i < len(p.b) && p.b[p.i] == c
}

// object parses {"k": v, ...}; member parses v for known k and returns
// false for an unknown one. A repeated member declines (the strict decoder
// refuses it and says where).
func (p *wheelParser) object(member func(k []byte) bool) {
	if !p.expect('{') {
		return
	}
	if p.peek('}') {
		p.i++
		return
	}
	var seen [8][]byte
	n := 0
	for !p.bad {
		k := p.key()
		if p.bad {
			return
		}
		for _, s := range seen[:min(n, len(seen))] {
			if string(s) == string(k) {
				p.bad = true
				return
			}
		}
		if n >= len(seen) { // more members than any of ours has
			p.bad = true
			return
		}
		seen[n] = k
		n++
		if !p.expect(':') || !member(k) {
			p.bad = true
			return
		}
		p.ws()
		if p.i < len(p.b) && p.b[p.i] == ',' {
			p.i++
			continue
		}
		p.expect('}')
		return
	}
}

func (p *wheelParser) array(elem func()) {
	if !p.expect('[') {
		return
	}
	if p.peek(']') {
		p.i++
		return
	}
	for !p.bad {
		elem()
		p.ws()
		if p.i < len(p.b) && p.b[p.i] == ',' {
			p.i++
			continue
		}
		p.expect(']')
		return
	}
}

// key parses a string of printable ASCII without escapes and returns its
// bytes (no copy).
func (p *wheelParser) key() []byte {
	if !p.expect('"') {
		return nil
	}
	b, start := p.b, p.i
	i := start
	for ; i+8 <= len(b); i += 8 { // eight bytes at a time
		if m := specialBytes(binary.LittleEndian.Uint64(b[i:])); m != 0 {
			i += bits.TrailingZeros64(m) / 8
			break
		}
	}
	for ; i < len(b); i++ {
		if c := b[i]; c == '"' || c == '\\' || c < 0x20 || c >= 0x80 {
			break
		}
	}
	if i < len(b) && b[i] == '"' {
		p.i = i + 1
		return b[start:i]
	}
	p.bad = true // an escape, a control or non-ASCII byte, or no end
	return nil
}

// specialBytes flags (high bit) the bytes of w, eight bytes of a key in
// little-endian order, that end a plain key: '"', '\\', controls and
// non-ASCII. Only the lowest flag is sure (a borrow can flag bytes above
// a flagged one), and only the lowest is used.
func specialBytes(w uint64) uint64 {
	const lo, hi = 0x0101010101010101, 0x8080808080808080
	q := w ^ ('"' * lo)
	bs := w ^ ('\\' * lo)
	return ((q-lo)&^q | (bs-lo)&^bs | (w-0x20*lo)&^w | w) & hi
}

// str is key as a string; the names a wheel usually holds are not copied.
func (p *wheelParser) str() string {
	k := p.key()
	switch string(k) {
	case geometry.JBend:
		return geometry.JBend
	case geometry.StraightPull:
		return geometry.StraightPull
	case "stainless_steel":
		return "stainless_steel"
	}
	return string(k)
}

func (p *wheelParser) boolean() bool {
	p.ws()
	switch {
	case p.bad:
	case len(p.b)-p.i >= 4 && string(p.b[p.i:p.i+4]) == "true":
		p.i += 4
		return true
	case len(p.b)-p.i >= 5 && string(p.b[p.i:p.i+5]) == "false":
		p.i += 5
		return false
	default:
		p.bad = true
	}
	return false
}

// literal scans a JSON number and reports whether it is an integer
// literal (no fraction, no exponent).
func (p *wheelParser) literal() (s []byte, integer bool) {
	p.ws()
	if p.bad {
		return nil, false
	}
	start, b := p.i, p.b
	i := p.i
	if i < len(b) && b[i] == '-' {
		i++
	}
	switch {
	case i < len(b) && b[i] == '0':
		i++
	case i < len(b) && b[i] >= '1' && b[i] <= '9':
		for i < len(b) && b[i] >= '0' && b[i] <= '9' {
			i++
		}
	default:
		p.bad = true
		return nil, false
	}
	integer = true
	if i < len(b) && b[i] == '.' {
		integer = false
		i++
		d := i
		for i < len(b) && b[i] >= '0' && b[i] <= '9' {
			i++
		}
		if i == d {
			p.bad = true
			return nil, false
		}
	}
	if i < len(b) && (b[i] == 'e' || b[i] == 'E') {
		integer = false
		i++
		if i < len(b) && (b[i] == '+' || b[i] == '-') {
			i++
		}
		d := i
		for i < len(b) && b[i] >= '0' && b[i] <= '9' {
			i++
		}
		if i == d {
			p.bad = true
			return nil, false
		}
	}
	p.i = i
	return b[start:i], integer
}

func (p *wheelParser) number() float64 {
	s, _ := p.literal()
	if p.bad {
		return 0
	}
	if v, ok := exactDecimal(s); ok {
		return v
	}
	v, err := strconv.ParseFloat(string(s), 64)
	if err != nil { // out of range: the strict decoder's error, not ours to word
		p.bad = true
	}
	return v
}

func (p *wheelParser) integer() int {
	s, integer := p.literal()
	if p.bad || !integer {
		p.bad = true
		return 0
	}
	if digits := bytesTrimMinus(s); len(digits) <= 18 { // no overflow
		v := 0
		for _, c := range digits {
			v = v*10 + int(c-'0')
		}
		if len(digits) < len(s) {
			v = -v
		}
		return v
	}
	v, err := strconv.ParseInt(string(s), 10, 0)
	if err != nil {
		p.bad = true
	}
	return int(v)
}

func bytesTrimMinus(s []byte) []byte {
	if len(s) > 0 && s[0] == '-' {
		return s[1:]
	}
	return s
}

// pow10 are the powers of ten that a float64 holds exactly.
var pow10 = [...]float64{1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15}

// exactDecimal is strconv.ParseFloat for a JSON number literal s (already
// checked) without an exponent and with at most 15 digits: the digits as
// an integer m < 2⁵³ and 10ᵏ are both exact float64s, so the one rounding
// of m / 10ᵏ gives the float64 nearest the literal, as ParseFloat does.
// ok is false for any other literal.
func exactDecimal(s []byte) (v float64, ok bool) {
	digits := bytesTrimMinus(s)
	var m uint64
	nd, frac, dot := 0, 0, false
	for _, c := range digits {
		switch {
		case c >= '0' && c <= '9':
			m = m*10 + uint64(c-'0')
			nd++
			if dot {
				frac++
			}
		case c == '.':
			dot = true
		default: // an exponent
			return 0, false
		}
	}
	if nd > 15 {
		return 0, false
	}
	v = float64(m) / pow10[frac]
	if len(digits) < len(s) {
		v = -v // -0 stays negative zero, as ParseFloat has it
	}
	return v, true
}

func (p *wheelParser) numPtr() *float64 { return p.a.float(p.number()) }

func (p *wheelParser) intPtr() *int { return p.a.int(p.integer()) }

// skip passes over one value: strings (escapes honoured) and brackets are
// matched; what lies between is left to the element's own decoder. A
// scalar runs to the next comma or closing bracket at its level.
func (p *wheelParser) skip() bool {
	var stack [64]byte
	depth := 0
	b, start := p.b, p.i
	for i := p.i; i < len(b); i++ {
		switch c := b[i]; c {
		case '"':
			for i++; i < len(b) && b[i] != '"'; i++ {
				if b[i] == '\\' {
					i++
				}
			}
			if i >= len(b) {
				return false
			}
			if depth == 0 {
				p.i = i + 1
				return true
			}
		case '{', '[':
			if depth == len(stack) {
				return false
			}
			stack[depth] = c
			depth++
		case '}', ']':
			if depth == 0 {
				p.i = i
				return i > start
			}
			if (c == '}') != (stack[depth-1] == '{') {
				return false
			}
			depth--
			if depth == 0 {
				p.i = i + 1
				return true
			}
		case ',', ' ', '\t', '\n', '\r':
			if depth == 0 {
				p.i = i
				return i > start
			}
		}
	}
	return false
}
