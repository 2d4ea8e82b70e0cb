package tension

import (
	"strings"
	"testing"
)

// TestChartSamplesAreTargets: every sample of a chart's curves is what
// Target gives at that tension (the second computation the chart must
// agree with: the same reading, interval and status), the sampled tensions
// run from 15 % of the calibrated range below it to 15 % above (400–1600 N
// ± 180 N, so 220–1780 N), and a section outside the table is
// extrapolated everywhere, with a caution that says so.
func TestChartSamplesAreTargets(t *testing.T) {
	m := synthModel(t)
	spec := steelRound(2.6)
	c, err := m.Chart(&spec)
	if err != nil {
		t.Fatal(err)
	}
	if c.FromN != 220 || c.ToN != 1780 || c.CalibratedN != [2]float64{400, 1600} || !c.ToolModel || len(c.Columns) != 4 {
		t.Fatalf("chart %v–%v N of %v, model %v, %d columns", c.FromN, c.ToN, c.CalibratedN, c.ToolModel, len(c.Columns))
	}
	check := func(name string, s SpokeSpec, cv ChartCurve) {
		n := 0
		for _, pc := range cv.Pieces {
			for _, q := range pc {
				tg, err := m.Target(s, q.TensionN)
				if err != nil {
					t.Fatalf("%s at %v N: %v", name, q.TensionN, err)
				}
				if q.Reading != tg.Reading || q.Low != tg.ReadingInterval[0] || q.High != tg.ReadingInterval[1] ||
					q.Extrapolated != (tg.Status == StatusExtrapolated) || q.Unreliable != !tg.Reliable {
					t.Fatalf("%s at %v N: sample %+v, Target %+v", name, q.TensionN, q, tg)
				}
				n++
			}
		}
		if n < chartSamples {
			t.Errorf("%s: %d samples, want at least %d", name, n, chartSamples)
		}
	}
	check("2.6 mm", spec, *c.Requested)
	check("2.0 mm column", steelRound(2.0), c.Columns[2])
	for _, pc := range c.Requested.Pieces {
		for _, q := range pc {
			if !q.Extrapolated {
				t.Fatalf("2.6 mm is outside the table, but its sample at %v N is not extrapolated", q.TensionN)
			}
		}
	}
	if len(c.Cautions) == 0 || !strings.Contains(c.Cautions[0], "extrapolated") {
		t.Errorf("cautions %q", c.Cautions)
	}
	// The interval under a tick is a conversion of the aim reading there.
	tg, _ := m.Target(spec, 1000)
	res, err := m.Convert(spec, tg.Reading)
	if err != nil {
		t.Fatal(err)
	}
	if got, iv, ok := c.TensionInterval(1000); !ok || got != res.TensionN || iv != res.IntervalN {
		t.Errorf("TensionInterval(1000) = %v %v %v, a conversion gives %v %v", got, iv, ok, res.TensionN, res.IntervalN)
	}
	if _, err := m.Chart(nil); err != nil {
		t.Fatal(err)
	}
}
