package sheet

import (
	"bytes"
	"fmt"
	"html"
	"math"
	"slices"
	"strconv"

	"wheelbench/service/geometry"
)

// Lacing is what the lacing diagram is drawn from: the build's lacing plan
// as its snapshot keeps it.
type Lacing struct {
	// Plan is one entry per spoke (any order).
	Plan []geometry.LacingSpoke
	// KeySpoke is the spoke laced first (0: none marked).
	KeySpoke int
	// Title is printed above the wheel; empty leaves it out (the sheet
	// has its own heading).
	Title string
	// IDPrefix keeps the drawing's element ids apart from the page's when
	// it is inlined in HTML.
	IDPrefix string
}

// Diagram geometry in SVG user units. The drawing is 360 units wide and
// printed 90 mm wide (1 unit = 0.25 mm), so that its smallest text (8.5
// units) is about 6 pt on paper.
const (
	lacingW      = 360.0
	lacingWidth  = 90.0 // mm
	rimR         = 138.0
	nearHubR     = 0.30 * rimR // the right (drive-side) flange, nearer the viewer
	farHubR      = 0.21 * rimR // the left flange, drawn inside it
	numberR      = rimR + 12
	keyLabelR    = rimR - 12
	arrowR       = rimR + 25
	legendRow    = 13.0
	numberSize   = 8.5
	legendSize   = 8.5
	titleSize    = 11.0
	nearWidth    = 1.5
	farWidth     = 0.9
	headR        = 2.6
	topForValve  = 30.0
	belowNumbers = 20.0
)

// Spoke styles: every distinction is made by line style and by colour, so
// that a black-and-white print keeps it. Colours from a palette that stays
// apart for colour-blind readers; dash patterns in user units.
var directionStyle = map[string]struct {
	colour, dash, label string
}{
	"trailing": {"#c04f00", "", "trailing (pulls on drive)"},
	"leading":  {"#0064a0", "7 3.5", "leading"},
	"radial":   {"#00795a", "1.6 2.6", "radial"},
}

// Head markers at the hub end: filled for heads in, hollow for heads out.
const (
	headInFill   = "#000000"
	headOutFill  = "#ffffff"
	headOutLine  = "#000000"
	halo         = ` stroke="#ffffff" stroke-width="3" stroke-linejoin="round" paint-order="stroke"`
	keyHaloColor = "#b8b8b8"
)

// polar returns the point at angle deg (clockwise from the valve at the
// top, as the plan gives angles: seen from the right) and radius r about
// (cx, cy).
func polar(cx, cy, r, deg float64) (x, y float64) {
	a := deg * math.Pi / 180
	return cx + r*math.Sin(a), cy - r*math.Cos(a)
}

// num formats a coordinate for the SVG (two decimals, no trailing zeros).
func num(v float64) string {
	return strconv.FormatFloat(math.Round(v*100)/100+0, 'f', -1, 64)
}

// LacingSVG draws the plan seen from the drive (right) side: the rim with
// its holes numbered clockwise from the valve, the two flanges (the hub
// enlarged, the left flange drawn inside the right one), and every spoke as
// one path from its hub hole to its rim hole — leading, trailing and
// radial apart by dash pattern and colour, heads in and out by a filled or
// hollow mark at the hub end, right and left by line weight and flange
// ring — with the key spoke marked, the direction of rotation and a
// legend. The angles are the plan's exactly; the radii are not to scale.
func LacingSVG(l Lacing) []byte {
	plan := slices.Clone(l.Plan)
	slices.SortFunc(plan, func(a, b geometry.LacingSpoke) int { return a.Spoke - b.Spoke })
	titleH := 0.0
	if l.Title != "" {
		titleH = 20
	}
	cx, cy := lacingW/2, titleH+topForValve+numberR
	legendTop := cy + numberR + belowNumbers
	present := map[string]bool{}
	heads := map[string]bool{}
	sides := map[string]bool{}
	for _, s := range plan {
		present[s.Direction] = true
		heads[s.Head] = true
		sides[s.Side] = true
	}
	legend := legendLines(present, heads, sides, l.KeySpoke)
	h := legendTop + float64((len(legend)+1)/2)*legendRow + 26
	id := func(name string) string { return l.IDPrefix + name }

	var b bytes.Buffer
	w := func(format string, args ...any) { fmt.Fprintf(&b, format, args...) }
	w(`<svg xmlns="http://www.w3.org/2000/svg" class="lacing" viewBox="0 0 %s %s" width="%smm" height="%smm" role="img" aria-labelledby="%s">`,
		num(lacingW), num(h), num(lacingWidth), num(h*lacingWidth/lacingW), id("lacing-title"))
	desc := l.Title
	if desc == "" {
		desc = "Lacing diagram"
	}
	w(`<title id="%s">%s, seen from the drive (right) side</title>`, id("lacing-title"), html.EscapeString(desc))
	w(`<defs><marker id="%s" viewBox="0 0 10 10" refX="8" refY="5" markerWidth="7" markerHeight="7" orient="auto-start-reverse"><path d="M0,0 L10,5 L0,10 z" fill="#000"/></marker></defs>`, id("arrow"))
	w(`<rect width="100%%" height="100%%" fill="#ffffff"/>`)
	fontAttr := `font-family="DejaVu Sans, Liberation Sans, Arial, Helvetica, sans-serif"`
	if l.Title != "" {
		w(`<text x="%s" y="14" text-anchor="middle" font-size="%s" font-weight="bold" %s>%s</text>`, num(cx), num(titleSize), fontAttr, html.EscapeString(l.Title))
	}

	// Rim, its holes and the valve.
	w(`<circle class="rim" cx="%s" cy="%s" r="%s" fill="none" stroke="#000" stroke-width="2.4"/>`, num(cx), num(cy), num(rimR))
	vx, vy := polar(cx, cy, rimR, 0)
	w(`<rect class="valve" x="%s" y="%s" width="7" height="11" fill="#000"/>`, num(vx-3.5), num(vy-5.5))
	w(`<text class="valve-label" x="%s" y="%s" text-anchor="middle" font-size="9" font-weight="bold" %s>VALVE</text>`, num(vx), num(vy-22), fontAttr)

	// Rotation: an arc outside the numbers, clockwise (forward, seen from
	// the right).
	ax0, ay0 := polar(cx, cy, arrowR, 28)
	ax1, ay1 := polar(cx, cy, arrowR, 58)
	w(`<path class="rotation" d="M%s %s A%s %s 0 0 1 %s %s" fill="none" stroke="#000" stroke-width="1.1" marker-end="url(#%s)"/>`,
		num(ax0), num(ay0), num(arrowR), num(arrowR), num(ax1), num(ay1), id("arrow"))
	tx, ty := polar(cx, cy, arrowR+9, 43)
	w(`<text x="%s" y="%s" font-size="8" %s text-anchor="start">forward</text>`, num(tx), num(ty), fontAttr)

	// Flanges.
	w(`<circle class="flange-right" cx="%s" cy="%s" r="%s" fill="none" stroke="#000" stroke-width="1.3"/>`, num(cx), num(cy), num(nearHubR))
	w(`<circle class="flange-left" cx="%s" cy="%s" r="%s" fill="none" stroke="#000" stroke-width="0.8" stroke-dasharray="3 2"/>`, num(cx), num(cy), num(farHubR))
	w(`<circle cx="%s" cy="%s" r="3" fill="#000"/>`, num(cx), num(cy))

	// Spokes: the far (left) side first, so the near side is drawn over it.
	var key *geometry.LacingSpoke
	for i := range plan {
		if plan[i].Spoke == l.KeySpoke {
			key = &plan[i]
		}
	}
	if key != nil {
		x1, y1, x2, y2 := spokeEnds(cx, cy, *key)
		w(`<line class="key-halo" x1="%s" y1="%s" x2="%s" y2="%s" stroke="%s" stroke-width="6" stroke-linecap="round"/>`,
			num(x1), num(y1), num(x2), num(y2), keyHaloColor)
	}
	for _, pass := range []string{"left", "right"} {
		for _, s := range plan {
			if s.Side != pass {
				continue
			}
			st, ok := directionStyle[s.Direction]
			if !ok {
				st = directionStyle["radial"]
			}
			width := farWidth
			if s.Side == "right" {
				width = nearWidth
			}
			x1, y1, x2, y2 := spokeEnds(cx, cy, s)
			dash := ""
			if st.dash != "" {
				dash = fmt.Sprintf(` stroke-dasharray="%s"`, st.dash)
			}
			w(`<path class="spoke" data-spoke="%d" data-side="%s" data-head="%s" data-direction="%s" d="M%s %s L%s %s" fill="none" stroke="%s" stroke-width="%s"%s/>`,
				s.Spoke, html.EscapeString(s.Side), html.EscapeString(s.Head), html.EscapeString(s.Direction),
				num(x1), num(y1), num(x2), num(y2), st.colour, num(width), dash)
		}
	}
	// Heads over the lines, then the rim holes and their numbers.
	for _, s := range plan {
		x1, y1, _, _ := spokeEnds(cx, cy, s)
		fill, stroke := headOutFill, headOutLine
		if s.Head == "in" {
			fill, stroke = headInFill, headInFill
		}
		w(`<circle class="head-%s" cx="%s" cy="%s" r="%s" fill="%s" stroke="%s" stroke-width="1"/>`,
			html.EscapeString(s.Head), num(x1), num(y1), num(headR), fill, stroke)
	}
	for _, s := range plan {
		hx, hy := polar(cx, cy, rimR, s.RimHoleDeg)
		w(`<circle class="rim-hole" cx="%s" cy="%s" r="1.6" fill="#000"/>`, num(hx), num(hy))
		nx, ny := polar(cx, cy, numberR, s.RimHoleDeg)
		weight := "normal"
		if s.Side == "right" {
			weight = "bold"
		}
		w(`<text class="spoke-no" data-spoke="%d" x="%s" y="%s" text-anchor="middle" dominant-baseline="central" font-size="%s" font-weight="%s" %s>%d</text>`,
			s.Spoke, num(nx), num(ny), num(numberSize), weight, fontAttr, s.Spoke)
	}
	if key != nil {
		nx, ny := polar(cx, cy, numberR, key.RimHoleDeg)
		w(`<circle class="key-ring" cx="%s" cy="%s" r="8" fill="none" stroke="#000" stroke-width="1.2"/>`, num(nx), num(ny))
		kx, ky := polar(cx, cy, keyLabelR, key.RimHoleDeg) // inside the rim, clear of the valve's label
		w(`<text class="key-label" x="%s" y="%s" text-anchor="middle" dominant-baseline="central" font-size="8" font-weight="bold" %s%s>KEY</text>`,
			num(kx), num(ky), fontAttr, halo)
	}

	if len(plan) == 0 {
		w(`<text x="%s" y="%s" text-anchor="middle" font-size="11" font-weight="bold" %s%s>No lacing plan is kept for this build.</text>`, num(cx), num(cy), fontAttr, halo)
	}

	// Legend, two columns.
	for i, ln := range legend {
		col, row := i%2, i/2
		x := 8.0 + float64(col)*178
		y := legendTop + float64(row)*legendRow
		w(`%s`, ln.sample(x, y))
		w(`<text x="%s" y="%s" font-size="%s" dominant-baseline="central" %s>%s</text>`, num(x+30), num(y), num(legendSize), fontAttr, html.EscapeString(ln.text))
	}
	for i, note := range []string{
		"Seen from the drive (right) side, numbered clockwise from the valve;",
		"bold numbers are right spokes. Angles exact; hub enlarged, not to scale.",
	} {
		w(`<text class="note" x="%s" y="%s" font-size="7.5" text-anchor="middle" %s>%s</text>`, num(cx), num(h-18+float64(i)*10), fontAttr, html.EscapeString(note))
	}
	w(`</svg>`)
	return b.Bytes()
}

// spokeEnds are a spoke's hub end (on its flange's ring) and rim end.
func spokeEnds(cx, cy float64, s geometry.LacingSpoke) (x1, y1, x2, y2 float64) {
	r := farHubR
	if s.Side == "right" {
		r = nearHubR
	}
	x1, y1 = polar(cx, cy, r, s.HubHoleDeg)
	x2, y2 = polar(cx, cy, rimR, s.RimHoleDeg)
	return
}

// legendLine is one legend entry: a sample drawing and its words.
type legendLine struct {
	text   string
	sample func(x, y float64) string
}

func legendLines(present, heads, sides map[string]bool, key int) []legendLine {
	line := func(colour, dash string, width float64) func(x, y float64) string {
		return func(x, y float64) string {
			d := ""
			if dash != "" {
				d = fmt.Sprintf(` stroke-dasharray="%s"`, dash)
			}
			return fmt.Sprintf(`<line x1="%s" y1="%s" x2="%s" y2="%s" stroke="%s" stroke-width="%s"%s/>`,
				num(x), num(y), num(x+24), num(y), colour, num(width), d)
		}
	}
	var out []legendLine
	for _, d := range []string{"trailing", "leading", "radial"} {
		if present[d] {
			st := directionStyle[d]
			out = append(out, legendLine{st.label, line(st.colour, st.dash, nearWidth)})
		}
	}
	mark := func(fill, stroke string) func(x, y float64) string {
		return func(x, y float64) string {
			return fmt.Sprintf(`<line x1="%s" y1="%s" x2="%s" y2="%s" stroke="#000" stroke-width="1"/><circle cx="%s" cy="%s" r="%s" fill="%s" stroke="%s" stroke-width="1"/>`,
				num(x+4), num(y), num(x+24), num(y), num(x+4), num(y), num(headR), fill, stroke)
		}
	}
	if heads["in"] {
		out = append(out, legendLine{"head in (inner face)", mark(headInFill, headInFill)})
	}
	if heads["out"] {
		out = append(out, legendLine{"head out (outer face)", mark(headOutFill, headOutLine)})
	}
	if sides["right"] {
		out = append(out, legendLine{"right flange: outer ring", line("#000", "", nearWidth)})
	}
	if sides["left"] {
		out = append(out, legendLine{"left flange: inner ring", line("#000", "", farWidth)})
	}
	if key > 0 {
		out = append(out, legendLine{fmt.Sprintf("KEY: spoke %d, lace first", key), func(x, y float64) string {
			return fmt.Sprintf(`<line x1="%s" y1="%s" x2="%s" y2="%s" stroke="%s" stroke-width="6" stroke-linecap="round"/><line x1="%s" y1="%s" x2="%s" y2="%s" stroke="#000" stroke-width="%s"/>`,
				num(x+3), num(y), num(x+21), num(y), keyHaloColor, num(x), num(y), num(x+24), num(y), num(nearWidth))
		}})
	}
	return out
}
