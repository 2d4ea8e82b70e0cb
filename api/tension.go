package api

import (
	"bytes"
	"net/http"
	"strconv"
	"strings"

	"github.com/google/uuid"
	"github.com/labstack/echo/v4"

	"wheelbench/api/chart"
	"wheelbench/api/strictjson"
	"wheelbench/service"
	"wheelbench/service/field"
	"wheelbench/service/tension"
)

// utcTool is a tool as answered: its times in UTC.
func utcTool(t service.Tool) service.Tool {
	t.CreatedAt, t.UpdatedAt = t.CreatedAt.UTC(), t.UpdatedAt.UTC()
	return t
}

func (s *Server) listTools(c echo.Context) error {
	p, err := page(c)
	if err != nil {
		return err
	}
	ts, err := s.svc.ListTools(c.Request().Context(), principal(c), p)
	if err != nil {
		return err
	}
	return writePage(c, ts, p, func(t service.Tool) uuid.UUID { return t.ID }, utcTool)
}

func (s *Server) createTool(c echo.Context) error {
	var in service.ToolInput
	if err := decode(c, &in); err != nil {
		return err
	}
	t, err := s.svc.CreateTool(c.Request().Context(), principal(c), in)
	if err != nil {
		return err
	}
	c.Response().Header().Set("ETag", t.ETag())
	c.Response().Header().Set("Location", "/v1/tools/"+t.ID.String())
	return c.JSON(http.StatusCreated, utcTool(t))
}

func (s *Server) getTool(c echo.Context) error {
	id := pathID(c)
	t, err := s.svc.GetTool(c.Request().Context(), principal(c), id)
	if err != nil {
		return err
	}
	c.Response().Header().Set("ETag", t.ETag())
	return c.JSON(http.StatusOK, utcTool(t))
}

// nullableFloat tells an absent field (Set false) from null (Set, Value
// nil): the one member whose null the spec allows (it removes the value).
type nullableFloat struct {
	Set   bool
	Value *float64
}

// JSONNullable lets null through the strict decoder to UnmarshalJSON.
func (n *nullableFloat) JSONNullable() {}

func (n *nullableFloat) UnmarshalJSON(b []byte) error {
	n.Set = true
	if bytes.Equal(b, []byte("null")) {
		return nil
	}
	return strictjson.Unmarshal(b, &n.Value)
}

type toolPatchJSON struct {
	LocationID     *uuid.UUID    `json:"location_id"`
	Label          *string       `json:"label"`
	Serial         *string       `json:"serial"`
	UnitMM         *float64      `json:"unit_mm"`
	MeasuredSpanMM nullableFloat `json:"measured_span_mm"`
	Notes          *string       `json:"notes"`
}

func (s *Server) updateTool(c echo.Context) error {
	id := pathID(c)
	var in toolPatchJSON
	if err := decode(c, &in); err != nil {
		return err
	}
	t, err := s.svc.UpdateTool(c.Request().Context(), principal(c), id, c.Request().Header.Get("If-Match"),
		service.ToolPatch{LocationID: in.LocationID, Label: in.Label, Serial: in.Serial, UnitMM: in.UnitMM,
			MeasuredSpanMM: in.MeasuredSpanMM.Value, ClearMeasuredSpan: in.MeasuredSpanMM.Set && in.MeasuredSpanMM.Value == nil,
			Notes: in.Notes})
	if err != nil {
		return err
	}
	c.Response().Header().Set("ETag", t.ETag())
	return c.JSON(http.StatusOK, utcTool(t))
}

type modelParamJSON struct {
	Name  string  `json:"name"`
	Value float64 `json:"value"`
	SE    float64 `json:"se"`
}

type calibrationModelJSON struct {
	Identified         bool              `json:"identified"`
	UnidentifiedReason string            `json:"unidentified_reason,omitempty"`
	ModelVersion       int               `json:"model_version"`
	UnitMM             float64           `json:"unit_mm"`
	MeasuredSpanMM     *float64          `json:"measured_span_mm,omitempty"`
	TensionRangeN      [2]float64        `json:"tension_range_n"`
	Parameters         []modelParamJSON  `json:"parameters,omitempty"`
	ResidualSDUnits    *float64          `json:"residual_sd_units,omitempty"`
	Points             *int              `json:"points,omitempty"`
	DoF                *int              `json:"dof,omitempty"`
	T975               *float64          `json:"t_975,omitempty"`
	ConditionNumber    *float64          `json:"condition_number,omitempty"`
	Iterations         *int              `json:"iterations,omitempty"`
	Warnings           []tension.Warning `json:"warnings"`
}

// calibrationJSON is a calibration version with its model described.
type calibrationJSON struct {
	service.Calibration
	Model calibrationModelJSON `json:"model"`
}

func toCalibrationJSON(cal service.Calibration) calibrationJSON {
	cal.CreatedAt = cal.CreatedAt.UTC()
	out := calibrationJSON{Calibration: cal}
	if m := cal.Model; m != nil {
		mj := calibrationModelJSON{ModelVersion: m.Version, UnitMM: m.UnitMM, MeasuredSpanMM: m.MeasuredSpanMM,
			TensionRangeN: m.TensionRangeN, UnidentifiedReason: m.Unidentified, Warnings: m.Warnings}
		if mj.Warnings == nil {
			mj.Warnings = []tension.Warning{}
		}
		if ph := m.Physical; ph != nil {
			mj.Identified = true
			for i, name := range ph.ParamNames {
				mj.Parameters = append(mj.Parameters, modelParamJSON{Name: name, Value: ph.Params[i], SE: ph.SE[i]})
			}
			mj.ResidualSDUnits, mj.Points, mj.DoF = &ph.ResidualSDUnits, &ph.Points, &ph.DoF
			mj.T975, mj.ConditionNumber, mj.Iterations = &ph.T975, &ph.ConditionNumber, &ph.Iterations
		}
		out.Model = mj
	}
	return out
}

func (s *Server) publishCalibration(c echo.Context) error {
	toolID := pathID(c)
	var in service.CalibrationInput
	if err := decode(c, &in); err != nil {
		return err
	}
	cal, err := s.svc.PublishCalibration(c.Request().Context(), principal(c), toolID, in)
	if err != nil {
		return err
	}
	c.Response().Header().Set("Location", "/v1/calibrations/"+cal.ID.String())
	return c.JSON(http.StatusCreated, toCalibrationJSON(cal))
}

func (s *Server) listCalibrations(c echo.Context) error {
	toolID := pathID(c)
	p, err := page(c)
	if err != nil {
		return err
	}
	cs, err := s.svc.ListCalibrations(c.Request().Context(), principal(c), toolID, p)
	if err != nil {
		return err
	}
	return writePage(c, cs, p, func(cal service.Calibration) uuid.UUID { return cal.ID }, toCalibrationJSON)
}

func (s *Server) getCalibration(c echo.Context) error {
	id := pathID(c)
	cal, err := s.svc.GetCalibration(c.Request().Context(), principal(c), id)
	if err != nil {
		return err
	}
	return c.JSON(http.StatusOK, toCalibrationJSON(cal))
}

func (s *Server) getCalibrationChart(c echo.Context) error {
	id := pathID(c)
	var spec *tension.SpokeSpec
	num := func(name string) (float64, error) {
		v := c.QueryParam(name)
		if v == "" {
			return 0, nil
		}
		f, err := strconv.ParseFloat(v, 64)
		if err != nil {
			return 0, field.Invalid("query:"+name, "%s must be a number", name)
		}
		return f, nil
	}
	d, err1 := num("diameter_mm")
	w, err2 := num("width_mm")
	t, err3 := num("thickness_mm")
	e, err4 := num("e_gpa")
	for _, err := range []error{err1, err2, err3, err4} {
		if err != nil {
			return err
		}
	}
	if d != 0 || w != 0 || t != 0 || c.QueryParam("profile") != "" {
		spec = &tension.SpokeSpec{Profile: c.QueryParam("profile"), DiameterMM: d, WidthMM: w, ThicknessMM: t,
			Material: c.QueryParam("material")}
		if c.QueryParam("e_gpa") != "" {
			spec.EGPa = &e
		} else if spec.Material == "" {
			spec.Material = "stainless_steel"
		}
	}
	cc, err := s.svc.CalibrationChart(c.Request().Context(), principal(c), id, spec)
	if err != nil {
		return field.Map(err, queryPointer) // the section came as query parameters
	}
	svg := chart.SVG(cc.Chart, chart.Heading{ToolLabel: cc.Tool.Label, ToolSerial: cc.Tool.Serial,
		CalibrationVersion: cc.Calibration.Version, Source: cc.Calibration.Source, Published: cc.Calibration.CreatedAt})
	c.Response().Header().Set("Cache-Control", "private, max-age=86400")
	return c.Blob(http.StatusOK, "image/svg+xml", svg)
}

// queryPointer names the chart's query parameter for a pointer into the
// section it was given ("/spoke/width_mm" → "query:width_mm").
func queryPointer(p string) string {
	name := strings.TrimPrefix(strings.TrimPrefix(p, "/spoke"), "/")
	if name == "" {
		name = "diameter_mm"
	}
	return "query:" + name
}

// calibrationRefJSON names the calibration a computation uses: a stored
// version by id, or one sent inline.
type calibrationRefJSON struct {
	CalibrationID *uuid.UUID                 `json:"calibration_id"`
	Calibration   *service.InlineCalibration `json:"calibration"`
}

func (r calibrationRefJSON) ref() service.CalibrationRef {
	return service.CalibrationRef{ID: r.CalibrationID, Inline: r.Calibration}
}

type calibrationUsedJSON struct {
	ID      uuid.UUID `json:"id"`
	ToolID  uuid.UUID `json:"tool_id"`
	Version int       `json:"version"`
}

func toCalibrationUsed(cal *service.Calibration) *calibrationUsedJSON {
	if cal == nil {
		return nil
	}
	return &calibrationUsedJSON{ID: cal.ID, ToolID: cal.ToolID, Version: cal.Version}
}

type conversionJSON struct {
	calibrationRefJSON        `json:",inline"`
	tension.ConversionRequest `json:",inline"`
}

func (s *Server) convertTension(c echo.Context) error {
	var in conversionJSON
	if err := decode(c, &in); err != nil {
		return err
	}
	out, err := s.svc.ConvertTension(c.Request().Context(), principal(c), in.ref(), in.ConversionRequest)
	if err != nil {
		return err
	}
	return c.JSON(http.StatusOK, struct {
		Calibration *calibrationUsedJSON `json:"calibration,omitempty"`
		tension.ConversionResponse
	}{toCalibrationUsed(out.Calibration), out.ConversionResponse})
}

type auditJSON struct {
	calibrationRefJSON   `json:",inline"`
	tension.AuditRequest `json:",inline"`
}

func (s *Server) auditTension(c echo.Context) error {
	var in auditJSON
	if err := decode(c, &in); err != nil {
		return err
	}
	out, err := s.svc.AuditTension(c.Request().Context(), principal(c), in.ref(), in.AuditRequest)
	if err != nil {
		return err
	}
	if out.Spokes == nil {
		out.Spokes = []tension.SpokeVerdict{}
	}
	return c.JSON(http.StatusOK, struct {
		Calibration *calibrationUsedJSON `json:"calibration,omitempty"`
		tension.AuditResult
	}{toCalibrationUsed(out.Calibration), out.AuditResult})
}
