package sheet

import (
	"fmt"
	"html/template"
	"math"
	"strconv"
	"strings"
	"time"

	"wheelbench/service"
	"wheelbench/service/fit"
	"wheelbench/service/geometry"
	"wheelbench/service/spoke"
	"wheelbench/service/tension"
)

// view is what the template prints: every figure already rounded and
// worded, every unknown already said in words.
type view struct {
	CSSPage   string
	Ref       string
	BuildID   string
	Status    string
	Location  string
	Code      string
	Address   string
	Computed  string
	TimeZone  string
	Verdict   string
	VerdictNo bool

	Cautions []string
	Findings []string

	Parts     []partRow
	Pull      []pullRow
	StockNote string
	Spoke     string
	Nipples   string
	Washers   []string
	Drilling  []string
	Other     []string

	Crosses  []string
	KeySpoke string
	Rim      []string
	Diagram  template.HTML

	Tool     []string
	ToolNone string
	Section  string
	Aims     []aimView
	Tables   []sideTable
	Rounds   []string
	Groups   bool
	Checks   []string
	Footnote string
}

type partRow struct {
	Role, SKU, Name, From string
}

type pullRow struct {
	Side, Group, Count, Pull, CutTo, End string
	NoStock                              bool
}

type aimView struct {
	Side     string
	Reading  string // the aim, rounded to the dial unit; "" when there is none
	Interval string
	Tension  string
	Status   string
	Unsure   bool // extrapolated or not reliable: the number is qualified
	Refused  string
	Notes    []string
}

type sideTable struct {
	Side string
	Aim  string
	Rows []spokeRow
}

type spokeRow struct {
	No, Head, Dir, Group string
	Key                  bool
}

// sideNames are the two sides in the order the sheet lists them: the
// right (drive) side first, as the lacing plan numbers it.
var sideNames = []string{"right", "left"}

func title(side string) string { return strings.ToUpper(side[:1]) + side[1:] }

// mm formats a length to at most the given decimals, trailing zeros
// dropped ("286 mm", "286.4 mm").
func mm(v float64, decimals int) string {
	p := math.Pow(10, float64(decimals))
	return strconv.FormatFloat(math.Round(v*p)/p+0, 'f', -1, 64) + " mm"
}

// dial rounds a reading to the tool's dial unit: readings are counted in
// dial units, so to a whole one.
func dial(r float64) string { return strconv.FormatFloat(math.Round(r)+0, 'f', 0, 64) }

// buildView turns what the service read into what the sheet prints.
func buildView(s service.BuildSheet, paper Paper) view {
	b, snap := s.Build, s.Build.Snapshot
	rep := snap.Compatibility
	geo := rep.Geometry
	v := view{CSSPage: paper.cssSize(), Ref: b.ExternalRef, BuildID: b.ID.String(), Status: strings.ReplaceAll(string(b.Status), "_", " "),
		Location: s.Location.Name, Code: s.Location.Code, Address: s.Location.Address, TimeZone: s.Location.Timezone,
		Rounds: []string{"1", "2", "3", "final"}}
	if v.Ref == "" {
		v.Ref = "(no reference)"
	}
	tz, err := time.LoadLocation(s.Location.Timezone)
	if err != nil || s.Location.Timezone == "" {
		tz, v.TimeZone = time.UTC, "UTC"
	}
	v.Computed = b.CreatedAt.In(tz).Format("2006-01-02 15:04")

	switch rep.Verdict {
	case fit.Fits:
		v.Verdict = "The parts fit as specified."
	case fit.FitsWithChanges:
		v.Verdict = "The parts fit with the changes in step 1 (drilling, washers or others): make every one of them."
	default:
		v.Verdict = "DOES NOT FIT: the parts do not make this wheel as specified. Do not build it until the findings below are resolved."
		v.VerdictNo = true
	}

	// Cautions: the snapshot's, then what the sheet itself cannot give.
	v.Cautions = append(v.Cautions, snap.Cautions...)
	for _, f := range rep.Findings {
		if f.Severity == fit.Info {
			continue
		}
		line := title(string(f.Severity))
		if f.Side != "" {
			line += " (" + f.Side + ")"
		}
		line += ": " + f.Message
		if f.Severity == fit.Error {
			if f.FixedByChange {
				line += " Fixed by a change in step 1."
			} else {
				line += " NOT FIXED by any change: " + f.Remedy
			}
		}
		v.Findings = append(v.Findings, line)
	}

	v.Parts = partRows(s)
	sides := map[string]geometry.SideResult{"left": geo.Left, "right": geo.Right}
	multi := false
	for _, side := range sideNames {
		groups := sides[side].LengthGroups
		if len(groups) > 1 {
			multi = true
		}
	}
	v.Groups = multi
	for _, side := range sideNames {
		sr := sides[side]
		groups := sr.LengthGroups
		if len(groups) == 0 {
			groups = []geometry.LengthGroup{{LengthMM: sr.LengthMM, Count: sr.Spokes, OrderLengthMM: sr.OrderLengthMM,
				StockLengthMM: sr.StockLengthMM, SpokeEndMM: sr.SpokeEndMM}}
		}
		for i, g := range groups {
			row := pullRow{Side: title(side), Count: strconv.Itoa(g.Count)}
			if multi {
				row.Group = groupName(i)
			}
			if g.StockLengthMM != nil {
				row.Pull = mm(*g.StockLengthMM, 1)
			} else {
				row.Pull = "no stock length"
				row.NoStock = true
			}
			if g.OrderLengthMM != nil {
				row.CutTo = mm(*g.OrderLengthMM, 1)
			} else {
				row.CutTo = mm(g.LengthMM, 1) + " (stretch unknown: measure)"
			}
			row.End = spokeEnd(g.SpokeEndMM, g.StockLengthMM != nil)
			v.Pull = append(v.Pull, row)
			if row.NoStock {
				v.Cautions = append(v.Cautions, fmt.Sprintf("No stock length is known for the %s side's %d spokes%s: cut them to %s from longer stock, or order them; check one in the wheel before cutting the rest.",
					side, g.Count, groupSuffix(multi, i), row.CutTo))
			}
		}
	}
	switch snap.StockSource {
	case "location_stock":
		v.StockNote = "Stock lengths: this location's stock when the build was computed."
	case "spec":
		v.StockNote = "Stock lengths: those the build's spec listed."
	default:
		v.StockNote = "No stock lengths were known: cut or order every spoke."
	}
	v.StockNote += " Cut-to is the unloaded length that stretches to fit at tension."

	in := snap.Resolved
	v.Spoke = describeSpoke(in.Spoke)
	v.Nipples = describeNipple(in.Nipple, in.SpokeCount)
	v.Washers, v.Drilling, v.Other = describeChanges(rep.Changes, s.ChangeParts, geo.NippleWasherMM)

	v.Crosses = []string{
		fmt.Sprintf("Right: %d spokes, %s.", geo.Right.Spokes, crossWords(geo.Crosses.Right)),
		fmt.Sprintf("Left: %d spokes, %s.", geo.Left.Spokes, crossWords(geo.Crosses.Left)),
	}
	planBySpoke := map[int]geometry.LacingSpoke{}
	for _, sp := range geo.Lacing {
		planBySpoke[sp.Spoke] = sp
	}
	if k, ok := planBySpoke[geo.KeySpoke]; ok {
		v.KeySpoke = fmt.Sprintf("Key spoke %d first (%s side, %s, head %s), in the hole clockwise of the valve; the two spokes beside the valve run parallel.",
			k.Spoke, k.Side, k.Direction, k.Head)
	}
	v.Rim = rimOrientation(in.Rim)
	if len(geo.Lacing) > 0 {
		v.Diagram = template.HTML(LacingSVG(Lacing{Plan: geo.Lacing, KeySpoke: geo.KeySpoke, IDPrefix: "sheet-"}))
	} else {
		v.Cautions = append(v.Cautions, "This build's snapshot keeps no lacing plan, so the sheet has no diagram and no per-spoke heads or directions: lace from the crosses above.")
	}

	aimsAndTool(&v, s, snap, sides)
	v.Tables = tables(geo, sides, multi, v.Aims)
	v.Checks = []string{"Dish", "Lateral true", "Radial true"}
	for _, m := range s.Missing {
		v.Cautions = append(v.Cautions, "Not on this sheet: "+m+".")
	}
	v.Footnote = "Printed from the build's stored snapshot, computed " + v.Computed + " (" + v.TimeZone + "); nothing on it is recomputed. " +
		"These are a competent builder's guide, not a guarantee: measure the parts, and check length, fit and tension on the wheel itself. Component makers' limits come first."
	return v
}

func groupName(i int) string { return string(rune('A' + i)) }

func groupSuffix(multi bool, i int) string {
	if !multi {
		return ""
	}
	return " of length group " + groupName(i)
}

func locationName(l service.Location) string {
	if l.Code != "" {
		return l.Name + " (" + l.Code + ")"
	}
	return l.Name
}

// spokeEnd words where a pulled spoke ends against the nipple head at
// tension.
func spokeEnd(end *float64, stock bool) string {
	if !stock {
		return "—"
	}
	if end == nil {
		return "not known"
	}
	e := math.Round(*end*10) / 10
	switch {
	case e > 0:
		return mm(e, 1) + " past"
	case e < 0:
		return mm(-e, 1) + " short"
	}
	return "flush"
}

func crossWords(n int) string {
	if n == 0 {
		return "radial"
	}
	return strconv.Itoa(n) + "-cross"
}

// partRows lists the parts with where each comes from.
func partRows(s service.BuildSheet) []partRow {
	names := map[service.PartKind]string{service.PartHub: "Hub", service.PartRim: "Rim", service.PartSpoke: "Spokes",
		service.PartNipple: "Nipples", service.PartWasher: "Washers", service.PartTyre: "Tyre"}
	var out []partRow
	for _, p := range s.Parts {
		row := partRow{Role: names[p.Role]}
		switch {
		case p.Part != nil:
			row.SKU, row.Name = p.Part.SKU, p.Part.Name
			row.From = "stock"
			if s.Location.Code != "" {
				row.From = s.Location.Code + " stock"
			}
		case p.CatalogID != nil:
			row.SKU, row.Name, row.From = "—", "catalog part no longer in the catalog", "check"
		default:
			row.SKU, row.Name, row.From = "—", "described inline in the build", "customer"
		}
		out = append(out, row)
	}
	return out
}

func num1(v float64) string { return strconv.FormatFloat(math.Round(v*100)/100+0, 'f', -1, 64) }

// describeSpoke names the spoke as the builder picks it: end size,
// butting, material.
func describeSpoke(sp spoke.Spec) string {
	r, _ := sp.Resolve(false)
	var parts []string
	switch {
	case r.Gauge > 0:
		parts = append(parts, fmt.Sprintf("%d gauge (%s)", r.Gauge, mm(r.EndMM, 2)))
	case r.EndMM > 0:
		parts = append(parts, mm(r.EndMM, 2)+" ends")
	}
	if len(r.Butts) > 0 {
		var bs []string
		for _, s := range r.Butts {
			bs = append(bs, sectionWords(s))
		}
		parts = append(parts, "butted to "+strings.Join(bs, ", "))
	} else if r.Body.Profile != "" && r.Body.Profile != spoke.Round {
		parts = append(parts, sectionWords(r.Body))
	}
	mat := strings.ReplaceAll(sp.Material, "_", " ")
	if mat == "" {
		mat = "material not given (stainless steel assumed)"
	}
	parts = append(parts, mat)
	return strings.Join(parts, ", ")
}

func sectionWords(s spoke.Section) string {
	if s.Profile == "" || s.Profile == spoke.Round {
		return "round " + mm(s.DiameterMM, 2)
	}
	return fmt.Sprintf("%s %s × %s", s.Profile, num1(s.WidthMM), mm(s.ThicknessMM, 2))
}

func describeNipple(n fit.Nipple, count int) string {
	out := fmt.Sprintf("%d nipples, %s long", count, mm(n.LengthMM, 1))
	if n.Material != "" {
		out += ", " + strings.ReplaceAll(n.Material, "_", " ")
	} else {
		out += ", material not given"
	}
	th := n.Thread
	if size := th.Size(); size > 0 {
		out += ", thread for " + mm(size, 2) + " spokes"
	} else if th.DiameterMM != nil {
		out += ", thread " + mm(*th.DiameterMM, 2)
	}
	if th.TPI != nil {
		out += " × " + num1(*th.TPI) + " TPI"
	}
	return out + "."
}

// describeChanges words the snapshot's changes: washers, drilling, others.
func describeChanges(cs []fit.Change, parts map[string]service.Part, nippleWasherMM float64) (washers, drilling, other []string) {
	rimWasher := false
	for _, c := range cs {
		side := c.Side
		if side == "both" || side == "" {
			side = "both sides"
		} else {
			side += " side"
		}
		switch c.Kind {
		case fit.ChangeAddWashers:
			where := "under each spoke head, against the hub flange"
			switch c.Where {
			case fit.AtRim:
				where, rimWasher = "under each nipple head, against the rim", true
			case "":
				where = "where they fit (the change names no place: ask before fitting)"
			}
			w := fmt.Sprintf("%d washers, %d per spoke %s (%s)", c.Count, c.PerSpoke, where, side)
			if c.ThicknessMM != nil {
				w += ", each " + mm(*c.ThicknessMM, 2) + " thick"
			}
			if c.InnerDiameterMM != nil && c.OuterDiameterMM != nil {
				w += fmt.Sprintf(", bore %s, outside %s", num1(*c.InnerDiameterMM), mm(*c.OuterDiameterMM, 2))
			}
			if c.StackMM != nil {
				w += "; stack " + mm(*c.StackMM, 2)
			}
			switch p, ok := parts[c.PartID]; {
			case ok:
				w += "; catalog washer " + p.SKU + " (" + p.Name + ")"
			case c.FromGiven:
				w += "; from the washers given with the build"
			default:
				w += "; a standard washer to buy"
			}
			washers = append(washers, w+".")
		case fit.ChangeDrillRimHoles:
			d := fmt.Sprintf("Drill %d rim spoke holes", c.Count)
			if c.DiameterMM != nil {
				d += " to " + mm(*c.DiameterMM, 2)
			}
			d += " and deburr them"
			if c.Reason != "" {
				d += " (" + c.Reason + ")"
			}
			drilling = append(drilling, d+".")
		default:
			o := strings.ReplaceAll(c.Kind, "_", " ")
			if c.Part != "" {
				o += " (" + c.Part + ")"
			}
			if c.ToMM != nil {
				o += ": use " + mm(*c.ToMM, 1)
			}
			if c.Reason != "" {
				o += ": " + c.Reason
			}
			if c.Suggestion != "" {
				o += "; " + c.Suggestion
			}
			other = append(other, o+".")
		}
	}
	if nippleWasherMM > 0 && !rimWasher {
		washers = append(washers, "A "+mm(nippleWasherMM, 2)+" washer under each nipple head, against the rim (the lengths include it).")
	}
	return washers, drilling, other
}

// rimOrientation says which way round the rim goes, from its offset and
// stagger (the lengths assume exactly this).
func rimOrientation(r geometry.Rim) []string {
	var out []string
	switch o := r.SpokeHoleOffsetMM; {
	case o > 0:
		out = append(out, fmt.Sprintf("Spoke-hole offset: the hole line sits %s toward the LEFT flange. Mount the rim with its offset toward the left; the lengths assume it.", mm(o, 2)))
	case o < 0:
		out = append(out, fmt.Sprintf("Spoke-hole offset: the hole line sits %s toward the RIGHT flange. Mount the rim with its offset toward the right; the lengths assume it.", mm(-o, 2)))
	default:
		out = append(out, "Spoke holes on the centre line: either way round suits the lengths.")
	}
	if r.StaggerMM.Left != 0 || r.StaggerMM.Right != 0 {
		out = append(out, "Staggered holes: spoke 1, the first hole clockwise of the valve seen from the right, is a right-side spoke and must use a hole of the row toward the right flange.")
	}
	out = append(out, "Labels (common practice, not needed by the lengths): rim label read from the right, hub label seen through the valve hole.")
	return out
}

// aimsAndTool fills the tensiometer lines and each side's aim.
func aimsAndTool(v *view, s service.BuildSheet, snap service.BuildSnapshot, sides map[string]geometry.SideResult) {
	targets := map[string]float64{"left": snap.TargetTensionsN.Left, "right": snap.TargetTensionsN.Right}
	tensionWords := func(n float64) string {
		return fmt.Sprintf("%s N (%s kgf)", strconv.FormatFloat(math.Round(n), 'f', 0, 64),
			strconv.FormatFloat(math.Round(n/tension.NewtonsPerKgf*10)/10, 'f', 1, 64))
	}
	tr := snap.TargetReadings
	if tr == nil {
		v.ToolNone = "No calibrated tensiometer at " + locationName(s.Location) + " when this build was computed: this sheet has no aim readings."
		v.Cautions = append(v.Cautions, "No aim readings: there was no calibrated tensiometer at this location when the build was computed. Tension to the target tensions below with a calibrated tool, or add one and create the build again.")
		for _, side := range sideNames {
			v.Aims = append(v.Aims, aimView{Side: title(side), Tension: tensionWords(targets[side]), Refused: "no tensiometer"})
		}
		return
	}
	if t := s.Tool; t != nil {
		line := "Tensiometer: " + t.Label
		if t.Serial != "" {
			line += ", serial " + t.Serial
		}
		v.Tool = append(v.Tool, line+".")
		v.Tool = append(v.Tool, fmt.Sprintf("Dial unit %s mm: readings are in whole dial units.", num1(t.UnitMM)))
		if t.LocationID != s.Build.LocationID {
			v.Tool = append(v.Tool, "This tool has since moved to another location: use it, or recompute the build for the tool at this bench.")
			v.Cautions = append(v.Cautions, "The tensiometer these aim readings were computed for has since moved to another location: aim readings are for that one tool only.")
		}
	} else {
		v.Tool = append(v.Tool, "Tensiometer "+tr.ToolID.String()+" (its record can no longer be read).")
	}
	if c := s.Calibration; c != nil {
		src := strings.ReplaceAll(c.Source, "_", " ")
		v.Tool = append(v.Tool, fmt.Sprintf("Calibration version %d (%s, published %s). Use these aims only with this version.", c.Version, src, c.CreatedAt.UTC().Format("2006-01-02")))
	} else {
		v.Tool = append(v.Tool, "Calibration "+tr.CalibrationID.String()+" (its record can no longer be read).")
	}
	ms := tr.MeasuredSection
	where := "the spoke's body"
	if strings.HasPrefix(ms.Name, "section_") {
		where = "butted section " + strings.TrimPrefix(ms.Name, "section_")
	}
	sec := spoke.Section{Profile: spoke.Profile(ms.Profile), DiameterMM: ms.DiameterMM, WidthMM: ms.WidthMM, ThicknessMM: ms.ThicknessMM}
	v.Section = "Measure on " + where + ", " + sectionWords(sec) + "."

	aims := map[string]service.Aim{"left": tr.Left, "right": tr.Right}
	for _, side := range sideNames {
		a := aims[side]
		av := aimView{Side: title(side), Tension: tensionWords(targets[side])}
		switch {
		case a.Target == nil:
			av.Refused = a.Refused
			if av.Refused == "" {
				av.Refused = "no aim reading was stored"
			}
		default:
			t := a.Target
			av.Reading = dial(t.Reading)
			av.Interval = dial(t.ReadingInterval[0]) + "–" + dial(t.ReadingInterval[1])
			av.Tension = tensionWords(t.TensionN)
			switch t.Status {
			case tension.StatusCalibrated:
				av.Status = "on a calibrated column"
			case tension.StatusInterpolated:
				av.Status = "interpolated within the calibration"
			default:
				av.Status = "EXTRAPOLATED beyond the calibration"
				av.Unsure = true
			}
			if !t.Reliable {
				av.Unsure = true
				av.Status = "NOT RELIABLE (" + t.Status + "): do not tension to this number alone; read the cautions"
			}
			for _, w := range t.Warnings {
				if w.Severity != "info" {
					av.Notes = append(av.Notes, w.Message)
				}
			}
		}
		v.Aims = append(v.Aims, av)
	}
}

// tables are the fill-in rows, one table per side, in spoke order.
func tables(geo fit.Geometry, sides map[string]geometry.SideResult, multi bool, aims []aimView) []sideTable {
	var out []sideTable
	for i, side := range sideNames {
		t := sideTable{Side: title(side)}
		a := aims[i]
		switch {
		case a.Reading != "" && !a.Unsure:
			t.Aim = "aim " + a.Reading + " (" + a.Interval + ")"
		case a.Reading != "":
			t.Aim = "estimate " + a.Reading + " (" + a.Interval + "), not a sure aim"
		default:
			t.Aim = "no aim reading: " + a.Tension
		}
		groups := sides[side].LengthGroups
		for _, sp := range geo.Lacing {
			if sp.Side != side {
				continue
			}
			row := spokeRow{No: strconv.Itoa(sp.Spoke), Head: sp.Head, Dir: sp.Direction, Key: sp.Spoke == geo.KeySpoke}
			if sp.Direction == "trailing" {
				row.Dir = "trail"
			} else if sp.Direction == "leading" {
				row.Dir = "lead"
			}
			if multi {
				best := -1
				for gi, g := range groups {
					if best < 0 || math.Abs(g.LengthMM-sp.LengthMM) < math.Abs(groups[best].LengthMM-sp.LengthMM) {
						best = gi
					}
				}
				if best >= 0 {
					row.Group = groupName(best)
				}
			}
			t.Rows = append(t.Rows, row)
		}
		out = append(out, t)
	}
	return out
}
