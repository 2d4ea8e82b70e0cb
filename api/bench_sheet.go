package api

import (
	"bytes"
	"net/http"

	"github.com/labstack/echo/v4"

	"wheelbench/api/sheet"
	"wheelbench/service/field"
)

// sheetCSP holds a bench sheet to itself: inline CSS and SVG, no script,
// nothing fetched from anywhere.
const sheetCSP = "default-src 'none'; style-src 'unsafe-inline'; img-src data:; base-uri 'none'; form-action 'none'"

// getBuildSheet answers a build's bench sheet as one self-contained HTML
// page, laid out for ?paper= or the location's default paper.
func (s *Server) getBuildSheet(c echo.Context) error {
	id := pathID(c)
	var paper sheet.Paper
	if v, ok := c.QueryParams()["paper"]; ok && len(v) > 0 {
		var err error
		if paper, err = sheet.ParsePaper(v[0]); err != nil {
			return field.Invalid("query:paper", "%s", err.Error())
		}
	}
	bs, err := s.svc.BuildSheet(c.Request().Context(), principal(c), id)
	if err != nil {
		return err
	}
	if paper == "" {
		paper = sheet.DefaultPaper(bs.Location.Timezone)
	}
	var buf bytes.Buffer
	if err := sheet.Render(&buf, bs, paper); err != nil {
		return err
	}
	h := c.Response().Header()
	h.Set("Content-Security-Policy", sheetCSP)
	h.Set("Cache-Control", "private, no-cache")
	return c.HTMLBlob(http.StatusOK, buf.Bytes())
}

// getBuildLacing answers a build's lacing diagram as SVG, drawn from the
// lacing plan its snapshot keeps.
func (s *Server) getBuildLacing(c echo.Context) error {
	id := pathID(c)
	b, err := s.svc.GetBuild(c.Request().Context(), principal(c), id)
	if err != nil {
		return err
	}
	geo := b.Snapshot.Compatibility.Geometry
	title := b.ExternalRef
	if title == "" {
		title = "Build " + b.ID.String()
	}
	svg := sheet.LacingSVG(sheet.Lacing{Plan: geo.Lacing, KeySpoke: geo.KeySpoke, Title: title})
	c.Response().Header().Set("Cache-Control", "private, max-age=86400")
	return c.Blob(http.StatusOK, "image/svg+xml", svg)
}
