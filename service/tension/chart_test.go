package tension

import (
	"bytes"
	"encoding/xml"
	"io"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
)

// TestChart: the SVG is well-formed XML with one dot per calibration point,
// a curve per column plus the requested section's, its band, axis labels
// and a legend entry per series.
func TestChart(t *testing.T) {
	m := synthModel(t)
	spec := steelRound(2.6)
	svg, err := m.Chart(&spec)
	if err != nil {
		t.Fatal(err)
	}
	counts := map[string]int{}
	dec := xml.NewDecoder(bytes.NewReader(svg))
	var texts []string
	inText := false
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("SVG is not well-formed XML: %v", err)
		}
		switch el := tok.(type) {
		case xml.StartElement:
			for _, a := range el.Attr {
				if a.Name.Local == "class" {
					counts[a.Value]++
				}
			}
			inText = el.Name.Local == "text"
		case xml.CharData:
			if inText {
				texts = append(texts, string(el))
			}
		case xml.EndElement:
			inText = false
		}
	}
	want := map[string]int{"point": 4 * 13, "curve": 5, "band": 1, "legend": 5}
	if diff := cmp.Diff(want, counts); diff != "" {
		t.Errorf("element counts (-want +got):\n%s", diff)
	}
	joined := strings.Join(texts, "|")
	for _, s := range []string{"tension (N)", "reading (dial units)", "round 2.6 mm", "95 % band"} {
		if !strings.Contains(joined, s) {
			t.Errorf("missing text %q", s)
		}
	}
	if bytes.Contains(svg, []byte("NaN")) || bytes.Contains(svg, []byte("Inf")) {
		t.Error("non-finite coordinates in the SVG")
	}
}

// TestChartEscapes: labels are escaped text (a blade profile name passes
// through describe; an e_gpa value cannot inject markup).
func TestChartEscapes(t *testing.T) {
	cal := synthCalibration(t)
	m, err := Fit(cal, Tool{})
	if err != nil {
		t.Fatal(err)
	}
	svg, err := m.Chart(nil)
	if err != nil {
		t.Fatal(err)
	}
	if err := xml.Unmarshal(svg, new(struct{})); err != nil {
		t.Errorf("not XML: %v", err)
	}
	if !bytes.Contains(svg, []byte("maker_table")) {
		t.Error("legend lacks the column source")
	}
}

// TestTicks: 1-2-5 steps covering the range; 1400/8 = 175 → the next 1-2-5 step is 200.
func TestTicks(t *testing.T) {
	if diff := cmp.Diff([]float64{400, 600, 800, 1000, 1200, 1400, 1600}, ticks(300, 1700)); diff != "" {
		t.Errorf("ticks (-want +got):\n%s", diff)
	}
	if got := ticks(1, 1); got != nil {
		t.Errorf("empty range ticks %v", got)
	}
}
