package fit

import (
	"strconv"
	"testing"
	"wheelbench/service/reftest"
)

// TestWidthGuidance checks the tyre/rim width constants and default bands
// against testdata/reference/rim_tyre_width.tsv (ISO 5775 article, A; CTC
// guidance, B).
func TestWidthGuidance(t *testing.T) {
	ref := map[string]float64{}
	for _, r := range reftest.Rows(t, "rim_tyre_width.tsv") {
		v, err := strconv.ParseFloat(r[1], 64)
		if err != nil {
			t.Fatal(err)
		}
		ref[r[0]] = v
	}
	o := DefaultOptions()
	got := map[string]float64{
		"narrow_tyre_rim_fraction": narrowTyreRimFraction,
		"wide_tyre_rim_fraction":   wideTyreRimFraction,
		"narrow_tyre_limit_mm":     narrowTyreLimitMM,
		"ratio_acceptable_min":     o.TyreRimRatioRecommended[0],
		"ratio_acceptable_max":     o.TyreRimRatioRecommended[1],
	}
	for k, v := range got {
		if ref[k] != v {
			t.Errorf("%s = %v, reference %v", k, v, ref[k])
		}
	}
	// The ideal 1.8 lies inside the band (CTC guidance).
	if r := ref["ratio_ideal"]; r < o.TyreRimRatioRecommended[0] || r > o.TyreRimRatioRecommended[1] {
		t.Errorf("ideal ratio %v outside the band", r)
	}
	if err := o.validate(); err != nil {
		t.Errorf("defaults invalid: %v", err)
	}
}
