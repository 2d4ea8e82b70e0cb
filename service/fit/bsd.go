package fit

import (
	"math"
	"strconv"
	"strings"
)

// BSDSize is one ISO 5775 bead seat diameter with the traditional names it
// goes by. Names are for messages only: several sizes share a name ("26-inch",
// "28-inch"), so the number is always the key.
type BSDSize struct {
	BSDMM int
	Names []string
	// Confidence of the table row: "A" (standard, encyclopedia or handbook),
	// "B" (general reference or trade page), "M" (from memory, unverified).
	Confidence string
}

// bsdSizes is the ISO 5775 bead seat diameter table the rules know, largest
// first. The official ISO 5775-2 table could not be read; the rows rest on
// general references (confidence per row) and are checked by a test against
// testdata/reference/iso5775_bsd.tsv.
var bsdSizes = []BSDSize{
	{635, []string{"28 x 1 1/2"}, "B"},
	{630, []string{"27-inch"}, "M"}, // BSD A/B, the name from memory
	{622, []string{"700C", "28-inch", "29-inch"}, "A"},
	{599, []string{"26 x 1.25", "26 x 1.375"}, "B"},
	{597, []string{"26 x 1 1/4", "26 x 1 3/8 (S-6)"}, "A"},
	{590, []string{"26 x 1 3/8 (E.A.3)", "650A"}, "B"},
	{587, []string{"700D"}, "B"},
	{584, []string{"650B", "26 x 1 1/2", "27.5-inch"}, "B"},
	{571, []string{"650C", "26 x 1"}, "B"},
	{559, []string{"26-inch (decimal)"}, "B"},
	{540, []string{"24 x 1 3/8 (600A)"}, "M"},
	{520, []string{"24 x 1", "24 x 1 1/8"}, "B"},
	{507, []string{"24-inch (decimal)"}, "B"},
	{457, []string{"22-inch (decimal)"}, "B"},
	{451, []string{"20 x 1 1/8", "20 x 1 1/4", "20 x 1 3/8"}, "B"},
	{406, []string{"20-inch (decimal)"}, "B"},
	{369, []string{"17 x 1 1/4"}, "B"},
	{355, []string{"18-inch (decimal)"}, "B"},
	{349, []string{"16 x 1 3/8"}, "M"},
	{337, []string{"16 x 1 3/8"}, "B"},
	{305, []string{"16-inch (decimal)"}, "B"},
	{203, []string{"12 1/2-inch"}, "M"},
}

// LookupBSD returns the table row for a bead seat diameter within tolMM.
func LookupBSD(bsdMM, tolMM float64) (BSDSize, bool) {
	for _, s := range bsdSizes {
		if math.Abs(float64(s.BSDMM)-bsdMM) <= tolMM {
			return s, true
		}
	}
	return BSDSize{}, false
}

// describeBSD renders "622 mm (700C, 28-inch, 29-inch)" or "612 mm (not in
// the ISO 5775 table)".
func describeBSD(bsdMM, tolMM float64) string {
	n := strconv.FormatFloat(bsdMM, 'f', -1, 64) + " mm"
	if s, ok := LookupBSD(bsdMM, tolMM); ok {
		return n + " (" + strings.Join(s.Names, ", ") + ")"
	}
	return n + " (not in the ISO 5775 table)"
}
