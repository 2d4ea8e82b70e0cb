// Package sheet draws a build's bench sheet — the page a wheel builder
// holds while pulling parts, lacing, tensioning, checking and signing the
// wheel off — as one self-contained, print-ready HTML page, and the lacing
// diagram as SVG. They are views: drawn from what service.BuildSheet
// gathered (the build's stored snapshot, its location, parts, tensiometer
// and calibration), with no database or JSON work and no computation
// beyond rounding and wording what the snapshot holds.
//
// The page asks for nothing outside itself: inline CSS and SVG, system
// fonts, no script. It prints in black and white: every distinction made
// by colour is also made by line style, weight or words.
//
// It imports service and its pure packages for their types, and nothing
// from the HTTP layer; only api imports it.
package sheet

import (
	"bytes"
	_ "embed"
	"html/template"
	"io"

	"wheelbench/service"
)

//go:embed sheet.html
var pageSource string

var page = template.Must(template.New("sheet").Funcs(template.FuncMap{"add": func(a, b int) int { return a + b }}).Parse(pageSource))

// Render writes the build's bench sheet as HTML laid out for paper.
func Render(w io.Writer, s service.BuildSheet, paper Paper) error {
	var buf bytes.Buffer
	if err := page.Execute(&buf, buildView(s, paper)); err != nil {
		return err
	}
	_, err := w.Write(buf.Bytes())
	return err
}
