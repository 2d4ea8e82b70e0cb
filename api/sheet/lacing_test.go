package sheet

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"math"
	"strconv"
	"strings"
	"testing"

	"wheelbench/service/geometry"
)

// The tests in this file read the drawing back as a second computation
// done another way: every spoke path's end points are parsed from the SVG
// and turned back into angles about the rim circle's centre with atan2,
// and compared with the plan the drawing was made from.

func ip(n int) *int { return &n }

func fp(v float64) *float64 { return &v }

// lacingCases are plans from the geometry package for wheels of several
// kinds: even and uneven lacing, radial sides, straight-pull seats.
func lacingCases(t *testing.T) map[string]geometry.Result {
	t.Helper()
	jb := func(pcd, c2f float64, spokes *int) geometry.Flange {
		return geometry.Flange{PCDMM: pcd, CenterToFlangeMM: c2f, HoleDiameterMM: fp(2.6), Spokes: spokes}
	}
	cross := func(l, r int) geometry.Cross { return geometry.Cross{Left: &l, Right: &r} }
	wheels := map[string]geometry.Wheel{
		"36h 3x front": {SpokeCount: 36, Hub: geometry.Hub{Left: jb(57, 29, nil), Right: jb(57, 34, nil)},
			Rim: geometry.Rim{ERDMM: 605}, Crosses: cross(3, 3)},
		"32h 3x rear, offset rim": {SpokeCount: 32, Hub: geometry.Hub{Left: jb(45, 36, nil), Right: jb(45, 18.5, nil), Driven: true},
			Rim: geometry.Rim{ERDMM: 599, SpokeHoleOffsetMM: 2}, Crosses: cross(3, 3)},
		"24h 2:1 rear": {SpokeCount: 24, Hub: geometry.Hub{Left: jb(44, 35, ip(8)), Right: jb(44, 20, ip(16)), Driven: true},
			Rim: geometry.Rim{ERDMM: 590}, Crosses: cross(1, 2)},
		"28h radial/2x": {SpokeCount: 28, Hub: geometry.Hub{Left: jb(40, 30, nil), Right: jb(40, 20, nil)},
			Rim: geometry.Rim{ERDMM: 406}, Crosses: cross(0, 2)},
		"24h straight pull": {SpokeCount: 24, Hub: geometry.Hub{Type: geometry.StraightPull,
			Left:  geometry.Flange{PCDMM: 42, CenterToFlangeMM: 30},
			Right: geometry.Flange{PCDMM: 42, CenterToFlangeMM: 30}},
			Rim: geometry.Rim{ERDMM: 588}, Crosses: cross(2, 2)},
		"48h tandem 4x": {SpokeCount: 48, Hub: geometry.Hub{Kind: geometry.KindTandem, Left: jb(60, 35, nil), Right: jb(60, 21, nil), Driven: true},
			Rim: geometry.Rim{ERDMM: 541}, Crosses: cross(4, 4)},
	}
	out := map[string]geometry.Result{}
	for name, w := range wheels {
		w.IncludeLacing = true
		res, err := geometry.Compute(w)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if len(res.Lacing) != w.SpokeCount {
			t.Fatalf("%s: plan of %d spokes for a %d-spoke wheel", name, len(res.Lacing), w.SpokeCount)
		}
		out[name] = res
	}
	return out
}

// drawnSpoke is one spoke path read back from the SVG.
type drawnSpoke struct {
	spoke                int
	side, head, dir      string
	x1, y1, x2, y2       float64
	strokeDash, colour   string
	strokeWidth          float64
	hubAngle, rimAngle   float64
	hubRadius, rimRadius float64
}

// readLacing parses the SVG as XML and returns the rim circle's centre and
// radius and every spoke path, with its angles computed back from its end
// points.
func readLacing(t *testing.T, svg []byte) (cx, cy, r float64, spokes []drawnSpoke) {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(svg))
	f := func(s string) float64 {
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatalf("not a number: %q", s)
		}
		return v
	}
	for {
		tok, err := dec.Token()
		if err != nil {
			break
		}
		el, ok := tok.(xml.StartElement)
		if !ok {
			continue
		}
		attr := map[string]string{}
		for _, a := range el.Attr {
			attr[a.Name.Local] = a.Value
		}
		switch {
		case el.Name.Local == "circle" && attr["class"] == "rim":
			cx, cy, r = f(attr["cx"]), f(attr["cy"]), f(attr["r"])
		case el.Name.Local == "path" && attr["class"] == "spoke":
			var d drawnSpoke
			d.spoke, _ = strconv.Atoi(attr["data-spoke"])
			d.side, d.head, d.dir = attr["data-side"], attr["data-head"], attr["data-direction"]
			d.strokeDash, d.colour, d.strokeWidth = attr["stroke-dasharray"], attr["stroke"], f(attr["stroke-width"])
			if _, err := fmt.Sscanf(attr["d"], "M%g %g L%g %g", &d.x1, &d.y1, &d.x2, &d.y2); err != nil {
				t.Fatalf("spoke %d: path %q: %v", d.spoke, attr["d"], err)
			}
			spokes = append(spokes, d)
		}
	}
	if r == 0 {
		t.Fatal("no rim circle in the drawing")
	}
	for i := range spokes {
		d := &spokes[i]
		// The plan's angles run clockwise from the valve at the top, seen
		// from the right; SVG's y runs down.
		ang := func(x, y float64) float64 {
			a := math.Atan2(x-cx, -(y-cy)) * 180 / math.Pi
			return math.Mod(a+360, 360)
		}
		d.hubAngle, d.rimAngle = ang(d.x1, d.y1), ang(d.x2, d.y2)
		d.hubRadius, d.rimRadius = math.Hypot(d.x1-cx, d.y1-cy), math.Hypot(d.x2-cx, d.y2-cy)
	}
	return cx, cy, r, spokes
}

// angleDiff is the smallest difference between two angles in degrees.
func angleDiff(a, b float64) float64 {
	d := math.Mod(math.Abs(a-b), 360)
	return math.Min(d, 360-d)
}

// TestLacingDrawsThePlan: for each wheel, the SVG parses as XML and holds
// exactly one spoke path per spoke of the plan; each path runs from its
// flange's ring at the plan's hub-hole angle to the rim circle at the
// plan's rim-hole angle (within 0.5°, computed back from the drawn
// coordinates); the path carries the plan's side, head and direction; the
// near (right) side is drawn heavier than the far side; leading, trailing
// and radial spokes differ by dash pattern as well as colour; every spoke
// number is printed once; the key spoke and the valve are marked.
func TestLacingDrawsThePlan(t *testing.T) {
	for name, res := range lacingCases(t) {
		t.Run(name, func(t *testing.T) {
			svg := LacingSVG(Lacing{Plan: res.Lacing, KeySpoke: res.KeySpoke, Title: name})
			_, _, rimRadius, drawn := readLacing(t, svg)
			if len(drawn) != len(res.Lacing) {
				t.Fatalf("%d spoke paths for a plan of %d spokes", len(drawn), len(res.Lacing))
			}
			seen := map[int]int{}
			plan := map[int]geometry.LacingSpoke{}
			for _, s := range res.Lacing {
				plan[s.Spoke] = s
			}
			style := map[string]string{} // direction → dash pattern
			colour := map[string]string{}
			for _, d := range drawn {
				seen[d.spoke]++
				p, ok := plan[d.spoke]
				if !ok {
					t.Fatalf("a path for spoke %d, which the plan lacks", d.spoke)
				}
				if diff := angleDiff(d.hubAngle, p.HubHoleDeg); diff > 0.5 {
					t.Errorf("spoke %d: hub end drawn at %.3f°, plan %.3f° (%.3f° apart)", d.spoke, d.hubAngle, p.HubHoleDeg, diff)
				}
				if diff := angleDiff(d.rimAngle, p.RimHoleDeg); diff > 0.5 {
					t.Errorf("spoke %d: rim end drawn at %.3f°, plan %.3f° (%.3f° apart)", d.spoke, d.rimAngle, p.RimHoleDeg, diff)
				}
				if math.Abs(d.rimRadius-rimRadius) > 0.05 {
					t.Errorf("spoke %d: rim end %.2f from the centre, the rim is %.2f", d.spoke, d.rimRadius, rimRadius)
				}
				wantHub, wantWidth := farHubR, farWidth
				if p.Side == "right" {
					wantHub, wantWidth = nearHubR, nearWidth
				}
				if math.Abs(d.hubRadius-wantHub) > 0.05 || d.strokeWidth != wantWidth {
					t.Errorf("spoke %d (%s): hub end at radius %.2f, width %g; want %.2f and %g", d.spoke, p.Side, d.hubRadius, d.strokeWidth, wantHub, wantWidth)
				}
				if d.side != p.Side || d.head != p.Head || d.dir != p.Direction {
					t.Errorf("spoke %d drawn as %s/%s/%s, plan %s/%s/%s", d.spoke, d.side, d.head, d.dir, p.Side, p.Head, p.Direction)
				}
				if prev, ok := style[d.dir]; ok && prev != d.strokeDash {
					t.Errorf("%s spokes drawn with dashes %q and %q", d.dir, prev, d.strokeDash)
				}
				style[d.dir], colour[d.dir] = d.strokeDash, d.colour
			}
			for n := range plan {
				if seen[n] != 1 {
					t.Errorf("spoke %d drawn %d times", n, seen[n])
				}
			}
			dirs := []string{}
			for d := range style {
				dirs = append(dirs, d)
			}
			for i := range dirs {
				for j := i + 1; j < len(dirs); j++ {
					a, b := dirs[i], dirs[j]
					if style[a] == style[b] || colour[a] == colour[b] {
						t.Errorf("%s and %s spokes share a dash pattern (%q, %q) or a colour (%s, %s)", a, b, style[a], style[b], colour[a], colour[b])
					}
				}
			}
			text := string(svg)
			for n := range plan {
				if c := strings.Count(text, fmt.Sprintf(`class="spoke-no" data-spoke="%d"`, n)); c != 1 {
					t.Errorf("spoke number %d printed %d times", n, c)
				}
			}
			heads := map[string]int{}
			for _, s := range res.Lacing {
				heads[s.Head]++
			}
			for h, n := range heads {
				if c := strings.Count(text, `class="head-`+h+`"`); c != n {
					t.Errorf("%d head-%s marks for %d such spokes", c, h, n)
				}
			}
			for _, want := range []string{`class="valve"`, `class="key-ring"`, ">KEY<", fmt.Sprintf("KEY: spoke %d, lace first", res.KeySpoke)} {
				if !strings.Contains(text, want) {
					t.Errorf("the drawing lacks %s", want)
				}
			}
		})
	}
}

// TestLacingWithoutPlan: a build that keeps no plan gets a drawing that
// says so, with no spoke in it.
func TestLacingWithoutPlan(t *testing.T) {
	svg := LacingSVG(Lacing{Title: "REF-1"})
	_, _, _, drawn := readLacing(t, svg)
	if len(drawn) != 0 || !bytes.Contains(svg, []byte("No lacing plan is kept for this build.")) {
		t.Errorf("%d spokes drawn; text %q", len(drawn), svg)
	}
}

// TestLacingEscapesText: the title is text, never markup.
func TestLacingEscapesText(t *testing.T) {
	svg := LacingSVG(Lacing{Title: `<script>x</script> & "q"`})
	readLacing(t, append([]byte{}, svg...)) // parses as XML
	if bytes.Contains(svg, []byte("<script>")) {
		t.Error("the title was written as markup")
	}
}
