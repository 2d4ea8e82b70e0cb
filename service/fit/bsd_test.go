package fit

import (
	"strconv"
	"strings"
	"testing"
	"wheelbench/service/reftest"

	"github.com/google/go-cmp/cmp"
)

// TestBSDTable checks the Go table row by row against
// testdata/reference/iso5775_bsd.tsv (ISO 5775 sizes with their sources and
// confidence).
func TestBSDTable(t *testing.T) {
	var want []BSDSize
	for _, r := range reftest.Rows(t, "iso5775_bsd.tsv") {
		n, err := strconv.Atoi(r[0])
		if err != nil {
			t.Fatal(err)
		}
		var names []string
		for _, s := range strings.Split(r[1], ";") {
			names = append(names, strings.TrimSpace(s))
		}
		want = append(want, BSDSize{BSDMM: n, Names: names, Confidence: r[2]})
	}
	if diff := cmp.Diff(want, bsdSizes); diff != "" {
		t.Errorf("BSD table differs from the reference (-tsv +go):\n%s", diff)
	}
}

// TestBSDKeyedOnNumber: names are shared between sizes, so lookups go by the
// number (ISO 5775: "16 x 1 3/8" is both 337 and 349; "28-inch" is 622, and
// 635 is "28 x 1 1/2").
func TestBSDKeyedOnNumber(t *testing.T) {
	for _, bsd := range []float64{337, 349} {
		s, ok := LookupBSD(bsd, 1)
		if !ok || s.BSDMM != int(bsd) {
			t.Errorf("LookupBSD(%v) = %+v, %v", bsd, s, ok)
		}
	}
	// 587 and 584 are the closest listed pair, 3 mm apart: a 1 mm tolerance
	// keeps them distinct.
	if s, _ := LookupBSD(585, 1); s.BSDMM != 584 {
		t.Errorf("585 → %d, want 584", s.BSDMM)
	}
	if _, ok := LookupBSD(612, 1); ok {
		t.Error("612 is not an ISO 5775 size in the table")
	}
}
