package demo

import (
	"context"
	"errors"
	"fmt"
	"math"

	"wheelbench/service"
	"wheelbench/service/tension"
)

// demoToolParams is an INVENTED tensiometer: no real tool was measured.
// Its parameters are plausible values for a three-point tool (a span of
// about 5 cm, a plunger spring of a few tens of N/mm), and the demo's maker
// table is generated from the tool model with them.
var demoToolParams = tension.ToolParams{SpanMM: 48, PreloadN: 95, SpringNPerMM: 22, ZeroMM: 1.6, StretchPerMM: 1.2e-3}

// demoTable is the invented maker table of the demo tools: round stainless
// spokes of 1.5, 1.8, 2.0 and 2.3 mm × 400–1600 N in 100 N steps, readings
// rounded to whole dial units (0.01 mm) as a printed table has them. The
// demo's 13-gauge (2.3368 mm) and 2.6 mm spokes lie outside it, so their
// conversions are extrapolated and carry cautions.
func demoTable() ([]tension.Column, error) {
	var cols []tension.Column
	for _, d := range []float64{1.5, 1.8, 2.0, 2.3} {
		spec := tension.SpokeSpec{Profile: "round", DiameterMM: d, Material: "stainless_steel"}
		col := tension.Column{Spoke: spec}
		for tn := 400.0; tn <= 1600; tn += 100 {
			r, err := demoToolParams.Reading(spec, service.DefaultUnitMM, tn)
			if err != nil {
				return nil, err
			}
			col.Points = append(col.Points, tension.Point{TensionN: tn, Reading: math.Round(r)})
		}
		cols = append(cols, col)
	}
	return cols, nil
}

// demoTools adds one tensiometer per demo location and publishes the
// invented maker table as its first calibration version. Fixed ids make a
// second run change nothing.
func demoTools(ctx context.Context, svc *service.Service, p service.Principal) (tools, calibrations int, err error) {
	cols, err := demoTable()
	if err != nil {
		return 0, 0, err
	}
	for i, l := range Locations {
		toolID := demoID("tool/" + l.Code)
		if _, err := svc.GetTool(ctx, p, toolID); errors.Is(err, service.ErrNotFound) {
			_, err = svc.CreateTool(ctx, p, service.ToolInput{ID: toolID, LocationID: l.ID,
				Label: "Bench tensiometer " + l.Code, Serial: fmt.Sprintf("DEMO-TT-%03d", i+1),
				Notes: "Invented demo tool; its maker table covers 1.5–2.3 mm round stainless spokes only."})
			if err != nil && !errors.Is(err, service.ErrConflict) {
				return 0, 0, fmt.Errorf("demo tool %s: %w", l.Code, err)
			}
		} else if err != nil {
			return 0, 0, err
		}
		tools++
		calID := demoID("calibration/" + l.Code + "/1")
		if _, err := svc.GetCalibration(ctx, p, calID); errors.Is(err, service.ErrNotFound) {
			_, err = svc.PublishCalibration(ctx, p, toolID, service.CalibrationInput{ID: calID, Source: "maker_table",
				Columns: cols, Notes: "Invented maker table for the demo (generated from the tool model)."})
			if err != nil && !errors.Is(err, service.ErrConflict) {
				return 0, 0, fmt.Errorf("demo calibration %s: %w", l.Code, err)
			}
		} else if err != nil {
			return 0, 0, err
		}
		calibrations++
	}
	return tools, calibrations, nil
}
