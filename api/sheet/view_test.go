package sheet

import (
	"bytes"
	"encoding/xml"
	"io"
	"regexp"
	"strings"
	"testing"
	"time"

	"github.com/google/uuid"

	"wheelbench/service"
	"wheelbench/service/fit"
	"wheelbench/service/geometry"
	"wheelbench/service/spoke"
	"wheelbench/service/tension"
)

// pageText is the page's text as a reader sees it: the character data
// outside <style>, <title> and the inline SVG, one line per block.
func pageText(t *testing.T, page []byte) string {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(page))
	dec.Strict = false
	dec.AutoClose = xml.HTMLAutoClose
	dec.Entity = xml.HTMLEntity
	var b strings.Builder
	skip := 0
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("the page does not parse: %v", err)
		}
		switch el := tok.(type) {
		case xml.StartElement:
			switch el.Name.Local {
			case "style", "title", "svg":
				skip++
			case "p", "div", "li", "tr", "h1", "h2", "h3", "footer", "section", "table":
				b.WriteString("\n")
			case "td", "th":
				b.WriteString(" | ")
			}
		case xml.EndElement:
			switch el.Name.Local {
			case "style", "title", "svg":
				skip--
			}
		case xml.CharData:
			if skip == 0 {
				b.WriteString(spaces.ReplaceAllString(string(el), " "))
			}
		}
	}
	var lines []string
	for _, l := range strings.Split(b.String(), "\n") {
		if l = strings.TrimSpace(spaces.ReplaceAllString(l, " ")); l != "" {
			lines = append(lines, l)
		}
	}
	return strings.Join(lines, "\n")
}

// wheel is an inline 32-spoke rear wheel, every part given in the spec.
func wheel(stock *geometry.Stock) fit.Input {
	three := 3
	d2 := 2.0
	jb := func(c2f float64) geometry.Flange {
		return geometry.Flange{PCDMM: 45, CenterToFlangeMM: c2f, HoleDiameterMM: fp(2.6), ThicknessMM: fp(3)}
	}
	tpi := 56.0
	return fit.Input{SpokeCount: 32,
		Hub:     geometry.Hub{Holes: 32, Driven: true, Left: jb(36), Right: jb(18.5)},
		Rim:     geometry.Rim{Holes: 32, ERDMM: 599, BSDMM: 622, InnerWidthMM: 21, HoleDiameterMM: 4.2, SpokeHoleOffsetMM: 2},
		Spoke:   spoke.Spec{DiameterMM: &d2, Material: "stainless_steel", ElbowLengthMM: fp(3), HeadDiameterMM: fp(4)},
		Nipple:  fit.Nipple{Thread: spoke.Thread{SizeMM: &d2, TPI: &tpi}, ShankDiameterMM: 3.9, HeadDiameterMM: 5.6, LengthMM: 12, Material: "brass"},
		Crosses: geometry.Cross{Left: &three, Right: &three}, TargetTensionN: 1100, Stock: stock, IncludeLacing: true}
}

// sideAims are the aim readings of both sides of a test build.
type sideAims struct{ Left, Right service.Aim }

// sheetFor checks the wheel with the fit rules, as a build does, and
// wraps the report as the service would read it for the sheet.
func sheetFor(t *testing.T, in fit.Input, source string, aims *sideAims) service.BuildSheet {
	t.Helper()
	rep, err := fit.Check(in, fit.DefaultOptions())
	if err != nil {
		t.Fatal(err)
	}
	loc := service.Location{ID: uuid.New(), Name: "Back bench (test)", Code: "BB", Timezone: "Europe/Lisbon"}
	snap := service.BuildSnapshot{Resolved: in, StockSource: source, Compatibility: rep,
		TargetTensionsN: service.Sides{Left: rep.Left.TensionN, Right: rep.Right.TensionN}, Cautions: rep.Cautions}
	s := service.BuildSheet{Location: loc,
		Build: service.Build{ID: uuid.New(), LocationID: loc.ID, ExternalRef: "ORDER-17", Status: service.BuildDraft, Snapshot: snap,
			CreatedAt: time.Date(2026, 3, 4, 9, 30, 0, 0, time.UTC)}}
	for _, role := range []service.PartKind{service.PartHub, service.PartRim, service.PartSpoke, service.PartNipple} {
		s.Parts = append(s.Parts, service.SheetPart{Role: role})
	}
	if aims != nil {
		snap.TargetReadings = &service.TargetReadings{ToolID: uuid.New(), CalibrationID: uuid.New(),
			MeasuredSection: service.MeasuredSection{Name: "body", Profile: "round", DiameterMM: 2}, Left: aims.Left, Right: aims.Right}
		s.Build.Snapshot = snap
		s.Tool = &service.Tool{Label: "Test tensiometer", Serial: "T-9", UnitMM: 0.01, LocationID: loc.ID}
		s.Calibration = &service.Calibration{Version: 3, Source: "maker_table", CreatedAt: time.Date(2026, 1, 2, 0, 0, 0, 0, time.UTC)}
	}
	return s
}

func render(t *testing.T, s service.BuildSheet, paper Paper) (page []byte, text string) {
	t.Helper()
	var b bytes.Buffer
	if err := Render(&b, s, paper); err != nil {
		t.Fatal(err)
	}
	return b.Bytes(), pageText(t, b.Bytes())
}

var (
	aimNumber = regexp.MustCompile(`\baim \d`)
	spaces    = regexp.MustCompile(`\s+`)
)

// TestSheetWithoutTensiometer: a build computed where no tensiometer was
// calibrated prints no aim number, says so in words on both sides and in
// the cautions, and still gives each side's target tension (1100 N /
// 9.80665 N per kgf, the kgf's definition = 112.17 → 112.2 kgf).
func TestSheetWithoutTensiometer(t *testing.T) {
	s := sheetFor(t, wheel(&geometry.Stock{IncrementMM: fp(2)}), "spec", nil)
	_, text := render(t, s, A4)
	if aimNumber.MatchString(text) {
		t.Errorf("an aim number is printed without a tensiometer:\n%s", text)
	}
	if c := strings.Count(text, "NO AIM READING"); c != 2 {
		t.Errorf("NO AIM READING %d times, want once per side", c)
	}
	for _, want := range []string{"No calibrated tensiometer at Back bench (test) (BB)", "No aim readings: there was no calibrated tensiometer",
		"target 1100 N (112.2 kgf)"} {
		if !strings.Contains(text, want) {
			t.Errorf("the sheet lacks %q:\n%s", want, text)
		}
	}
}

// TestSheetAims: a reliable aim is printed rounded to the dial unit with
// its interval; an extrapolated, unreliable one only as an estimate with
// the words NOT RELIABLE; a refused one not at all, with the reason.
// Expected figures by hand: 287.62 → 288 and [286.4, 288.81] → 286–289
// dial units (to the whole unit); 1100 N / 9.80665 N per kgf (the kgf's
// definition, CGPM 1901) = 112.17 → 112.2 kgf.
func TestSheetAims(t *testing.T) {
	ok := &tension.Target{TensionN: 1100, TensionKgf: 1100 / tension.NewtonsPerKgf, Reading: 287.62, ReadingInterval: [2]float64{286.4, 288.81},
		Reliable: true, Status: tension.StatusInterpolated}
	shaky := &tension.Target{TensionN: 652.3, TensionKgf: 652.3 / tension.NewtonsPerKgf, Reading: 266.49, ReadingInterval: [2]float64{264.2, 268.7},
		Reliable: false, Status: tension.StatusExtrapolated,
		Warnings: []tension.Warning{{Code: "result_unreliable", Severity: "warning", Message: "the 95 % interval is ±40 N (6.1 % of the tension, beyond 5 %)"}}}
	s := sheetFor(t, wheel(&geometry.Stock{IncrementMM: fp(2)}), "spec", &sideAims{Right: service.Aim{Target: ok}, Left: service.Aim{Target: shaky}})
	_, text := render(t, s, A4)
	for _, want := range []string{
		"aim 288 dial units", "expect 286–289 (95 % interval)", "target 1100 N (112.2 kgf)", "interpolated within the calibration",
		"estimate 266 dial units", "expect 264–269 (95 % interval)", "NOT RELIABLE (extrapolated)", "the 95 % interval is ±40 N",
		"Right spokes: aim 288 (286–289)", "Left spokes: estimate 266 (264–269), not a sure aim",
		"Tensiometer: Test tensiometer, serial T-9.", "Calibration version 3 (maker table, published 2026-01-02)",
		"Measure on the spoke's body, round 2 mm.", "Dial unit 0.01 mm",
	} {
		if !strings.Contains(text, want) {
			t.Errorf("the sheet lacks %q:\n%s", want, text)
		}
	}
	if strings.Contains(text, "aim 266") {
		t.Error("the unreliable reading is printed as an aim")
	}

	s.Build.Snapshot.TargetReadings.Left = service.Aim{Refused: "the calibration has no column of this material"}
	_, text = render(t, s, A4)
	if c := strings.Count(text, "NO AIM READING"); c != 1 || !strings.Contains(text, "the calibration has no column of this material") {
		t.Errorf("a refused side: NO AIM READING %d times, reason missing?\n%s", c, text)
	}
}

// TestSheetWithoutStock: with no stock lengths every group says "no stock
// length", gives the length to cut to, and a caution says what to do.
func TestSheetWithoutStock(t *testing.T) {
	in := wheel(nil)
	s := sheetFor(t, in, "none", nil)
	_, text := render(t, s, A4)
	geo := s.Build.Snapshot.Compatibility.Geometry
	for _, side := range []geometry.SideResult{geo.Right, geo.Left} {
		if side.StockLengthMM != nil || side.OrderLengthMM == nil {
			t.Fatalf("the check chose a stock length with no stock (%v) or no order length", side.StockLengthMM)
		}
	}
	if c := strings.Count(text, "no stock length"); c != 2 {
		t.Errorf(`"no stock length" %d times, want once per side:\n%s`, c, text)
	}
	cut := mm(*geo.Right.OrderLengthMM, 1)
	for _, want := range []string{"No stock length is known for the right side's 16 spokes: cut them to " + cut, "No stock lengths were known"} {
		if !strings.Contains(text, want) {
			t.Errorf("the sheet lacks %q:\n%s", want, text)
		}
	}
}

// TestSheetStockAndParts: with stock, each side's row has its count and the
// stock length the snapshot chose; inline parts are the customer's; the
// rim's offset direction is said; a build that does not fit says so first.
func TestSheetStockAndParts(t *testing.T) {
	s := sheetFor(t, wheel(&geometry.Stock{IncrementMM: fp(2)}), "spec", nil)
	page, text := render(t, s, Letter)
	geo := s.Build.Snapshot.Compatibility.Geometry
	for _, c := range []struct {
		side string
		res  geometry.SideResult
	}{{"Right", geo.Right}, {"Left", geo.Left}} {
		row := "| " + c.side + " | 16 | " + mm(*c.res.StockLengthMM, 1) + " | " + mm(*c.res.OrderLengthMM, 1) + " |"
		if !strings.Contains(text, row) {
			t.Errorf("no pull row %q:\n%s", row, text)
		}
	}
	for _, want := range []string{"| Hub | — | described inline in the build | customer", "2 mm toward the LEFT flange",
		"32 nipples, 12 mm long, brass, thread for 2 mm spokes × 56 TPI."} {
		if !strings.Contains(text, want) {
			t.Errorf("the sheet lacks %q:\n%s", want, text)
		}
	}
	if !bytes.Contains(page, []byte("size: letter portrait")) {
		t.Error("a Letter sheet does not set its @page size")
	}

	in := wheel(&geometry.Stock{IncrementMM: fp(2)})
	in.Rim.Holes = 36 // the hole counts disagree: no change fixes it
	s = sheetFor(t, in, "spec", nil)
	_, text = render(t, s, A4)
	if !strings.HasPrefix(text[strings.Index(text, "Status"):], "Status draft\nDOES NOT FIT") {
		t.Errorf("a build that does not fit does not say so under the header:\n%s", text)
	}
}

// TestSheetRecordsThatMoved: a tensiometer that has since moved to another
// location and a catalog part that is gone are said plainly, in the
// cautions; a catalog washer a change proposes is named by SKU.
func TestSheetRecordsThatMoved(t *testing.T) {
	ok := &tension.Target{TensionN: 1100, Reading: 287.62, ReadingInterval: [2]float64{286.4, 288.81}, Reliable: true, Status: tension.StatusCalibrated}
	s := sheetFor(t, wheel(&geometry.Stock{IncrementMM: fp(2)}), "spec", &sideAims{Right: service.Aim{Target: ok}, Left: service.Aim{Target: ok}})
	s.Tool.LocationID = uuid.New()
	gone := uuid.New()
	s.Parts[0] = service.SheetPart{Role: service.PartHub, CatalogID: &gone}
	s.Missing = append(s.Missing, "catalog part "+gone.String()+" is no longer in the catalog")
	washer := uuid.New()
	s.Build.Snapshot.Compatibility.Changes = append(s.Build.Snapshot.Compatibility.Changes, fit.Change{Kind: fit.ChangeAddWashers, Where: fit.AtHub,
		Side: "left", PerSpoke: 1, Count: 16, ThicknessMM: fp(0.5), PartID: washer.String()})
	s.ChangeParts = map[string]service.Part{washer.String(): {SKU: "WSH-05", Name: "Washer 0.5 mm (test)"}}
	_, text := render(t, s, A4)
	for _, want := range []string{
		"The tensiometer these aim readings were computed for has since moved to another location",
		"Not on this sheet: catalog part " + gone.String() + " is no longer in the catalog.",
		"| Hub | — | catalog part no longer in the catalog | check",
		"16 washers, 1 per spoke under each spoke head, against the hub flange (left side), each 0.5 mm thick; catalog washer WSH-05 (Washer 0.5 mm (test)).",
		"on a calibrated column",
	} {
		if !strings.Contains(text, want) {
			t.Errorf("the sheet lacks %q:\n%s", want, text)
		}
	}
}
