package api_test

import (
	"io"
	"math"
	"net/http"

	"github.com/getkin/kin-openapi/openapi3"
	"github.com/getkin/kin-openapi/openapi3filter"
	"github.com/google/uuid"

	"wheelbench/service"
	"wheelbench/service/tension"
)

func init() {
	// The chart answers image/svg+xml, specified as a string: the response
	// validator reads the body as one.
	openapi3filter.RegisterBodyDecoder("image/svg+xml", func(r io.Reader, _ http.Header, _ *openapi3.SchemaRef, _ openapi3filter.EncodingFn) (any, error) {
		b, err := io.ReadAll(r)
		return string(b), err
	})
}

// synthParams is a SYNTHETIC tensiometer made up for the tests: its tables
// are generated from the tool model with these known parameters (the same
// values as the tension package's own synthetic tool), so every expected
// tension below is the tension a reading was generated at.
var synthParams = tension.ToolParams{SpanMM: 50, PreloadN: 120, SpringNPerMM: 15, ZeroMM: 2.0, StretchPerMM: 1.5e-3}

func steel(d float64) tension.SpokeSpec {
	return tension.SpokeSpec{Profile: "round", DiameterMM: d, Material: "stainless_steel"}
}

// synthReading is the synthetic tool's exact reading (dial unit 0.01 mm).
func (e *env) synthReading(spec tension.SpokeSpec, tN float64) float64 {
	e.t.Helper()
	r, err := synthParams.Reading(spec, 0.01, tN)
	if err != nil {
		e.t.Fatal(err)
	}
	return r
}

// synthColumns is the synthetic tool's table for round steel spokes of the
// given diameters × 400…1600 N in 100 N steps, readings rounded to whole
// dial units as a printed table has them.
func (e *env) synthColumns(ds ...float64) []tension.Column {
	e.t.Helper()
	var cols []tension.Column
	for _, d := range ds {
		col := tension.Column{Spoke: steel(d)}
		for tn := 400.0; tn <= 1600; tn += 100 {
			col.Points = append(col.Points, tension.Point{TensionN: tn, Reading: math.Round(e.synthReading(steel(d), tn))})
		}
		cols = append(cols, col)
	}
	return cols
}

// newLocation creates a location of organisation A.
func (e *env) newLocation() uuid.UUID {
	e.t.Helper()
	var l struct{ ID uuid.UUID }
	e.want(e.do("POST", "/v1/locations", e.keyA[service.RoleAdmin], map[string]any{"name": "bench"}), 201).json(e.t, &l)
	return l.ID
}

// newTool creates a tensiometer of organisation A with the write key.
func (e *env) newTool() uuid.UUID {
	e.t.Helper()
	var tl struct{ ID uuid.UUID }
	e.want(e.do("POST", "/v1/tools", e.keyA[service.RoleWrite], map[string]any{
		"label": "bench tensiometer", "location_id": e.newLocation()}), 201).json(e.t, &tl)
	return tl.ID
}

type calibrationOut struct {
	ID      uuid.UUID `json:"id"`
	ToolID  uuid.UUID `json:"tool_id"`
	Version int       `json:"version"`
	Tool    struct {
		UnitMM float64 `json:"unit_mm"`
	} `json:"tool"`
	Model struct {
		Identified         bool    `json:"identified"`
		UnidentifiedReason string  `json:"unidentified_reason"`
		ResidualSDUnits    float64 `json:"residual_sd_units"`
		ConditionNumber    float64 `json:"condition_number"`
		Parameters         []struct {
			Name  string  `json:"name"`
			Value float64 `json:"value"`
			SE    float64 `json:"se"`
		} `json:"parameters"`
	} `json:"model"`
}

// publish publishes cols as tool's next calibration version.
func (e *env) publish(tool uuid.UUID, cols []tension.Column) calibrationOut {
	e.t.Helper()
	var c calibrationOut
	e.want(e.do("POST", "/v1/tools/"+tool.String()+"/calibrations", e.keyA[service.RoleWrite],
		map[string]any{"source": "maker_table", "columns": cols}), 201).json(e.t, &c)
	return c
}

func toolFixture(body any) fixture {
	return func(e *env) (uuid.UUID, any) { return e.newTool(), body }
}

func calibrationFixture(e *env) (uuid.UUID, any) {
	return e.publish(e.newTool(), e.synthColumns(1.8, 2.0)).ID, nil
}
