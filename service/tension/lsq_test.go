package tension

import (
	"math"
	"os"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// nistDataset reads a NIST StRD linear least-squares file: the certified
// estimates and their SDs (lines "B0 value sd"), the certified residual SD,
// and the data (y x), which start on line 61 (testdata/nist/SOURCE.txt).
func nistDataset(t *testing.T, name string) (coef, sd []float64, resSD float64, ys, xs []float64) {
	t.Helper()
	raw := readLines(t, "../../testdata/nist/"+name)
	for i, line := range raw {
		f := strings.Fields(line)
		switch {
		case i >= 60 && len(f) == 2:
			ys = append(ys, num(t, f[0]))
			xs = append(xs, num(t, f[1]))
		case len(f) == 3 && strings.HasPrefix(f[0], "B"):
			coef = append(coef, num(t, f[1]))
			sd = append(sd, num(t, f[2]))
		case len(f) == 3 && f[0] == "Standard" && f[1] == "Deviation":
			resSD = num(t, f[2])
		}
	}
	return
}

func readLines(t *testing.T, path string) []string {
	t.Helper()
	rows := []string{}
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	rows = append(rows, strings.Split(strings.ReplaceAll(string(b), "\r\n", "\n"), "\n")...)
	return rows
}

// TestWeightedLSNIST fits NIST StRD Norris (straight line) and Pontius
// (quadratic) and compares the coefficients, their SDs and the residual SD
// with the certified values (15 significant digits in the certificates).
func TestWeightedLSNIST(t *testing.T) {
	cases := []struct {
		file   string
		degree int
		tol    float64 // relative; what float64 SVD reaches here
	}{
		{"Norris.dat", 1, 1e-12},
		{"Pontius.dat", 2, 1e-12},
	}
	for _, c := range cases {
		coef, sd, resSD, ys, xs := nistDataset(t, c.file)
		if len(coef) != c.degree+1 || len(ys) == 0 || resSD == 0 {
			t.Fatalf("%s: parsed %d coefficients, %d rows, residual SD %v", c.file, len(coef), len(ys), resSD)
		}
		x := mat.NewDense(len(xs), c.degree+1, nil)
		for i, xi := range xs {
			v := 1.0
			for j := 0; j <= c.degree; j++ {
				x.Set(i, j, v)
				v *= xi
			}
		}
		fit, err := weightedLS(x, ys, nil)
		if err != nil {
			t.Fatal(err)
		}
		se := fit.SE()
		worst := 0.0
		for j := range coef {
			worst = math.Max(worst, relErr(fit.Coef[j], coef[j]))
			worst = math.Max(worst, relErr(se[j], sd[j]))
		}
		worst = math.Max(worst, relErr(math.Sqrt(fit.S2), resSD))
		t.Logf("%s: worst relative error against the certificate %.2g (cond %.3g)", c.file, worst, fit.Cond)
		if worst > c.tol {
			t.Errorf("%s: relative error %.3g exceeds %.1g", c.file, worst, c.tol)
		}
	}
}

// TestWeightedLSWeights: weights w = k² on duplicated rows equal a fit of the
// rows repeated k² times (definition of weighted least squares).
func TestWeightedLSWeights(t *testing.T) {
	xs := []float64{1, 2, 3, 4, 5}
	ys := []float64{1.1, 1.9, 3.2, 3.9, 5.3}
	x := mat.NewDense(5, 2, nil)
	for i, v := range xs {
		x.Set(i, 0, 1)
		x.Set(i, 1, v)
	}
	w := []float64{1, 4, 1, 1, 1}
	fw, err := weightedLS(x, ys, w)
	if err != nil {
		t.Fatal(err)
	}
	xr := mat.NewDense(8, 2, nil)
	yr := []float64{}
	row := 0
	for i, v := range xs {
		for k := 0; k < int(w[i]); k++ {
			xr.Set(row, 0, 1)
			xr.Set(row, 1, v)
			yr = append(yr, ys[i])
			row++
		}
	}
	fr, err := weightedLS(xr, yr, nil)
	if err != nil {
		t.Fatal(err)
	}
	for j := range fw.Coef {
		if relErr(fw.Coef[j], fr.Coef[j]) > 1e-13 {
			t.Errorf("coef %d: weighted %v, repeated %v", j, fw.Coef[j], fr.Coef[j])
		}
	}
	if relErr(fw.RSS, fr.RSS) > 1e-12 {
		t.Errorf("RSS weighted %v, repeated %v", fw.RSS, fr.RSS)
	}
	// A repeated column is rank deficient and must be refused.
	bad := mat.NewDense(5, 2, nil)
	for i := range xs {
		bad.Set(i, 0, xs[i])
		bad.Set(i, 1, 2*xs[i])
	}
	if _, err := weightedLS(bad, ys, nil); err == nil {
		t.Error("rank-deficient design accepted")
	}
}

// TestStudentTQuantiles checks gonum's Student t quantile, which the
// intervals use, against REFERENCE.md §7 (12-digit values from inverting the
// regularised incomplete beta with mpmath; 3-dp NIST/SEMATECH table).
func TestStudentTQuantiles(t *testing.T) {
	want := map[float64]float64{
		1: 12.7062047362, 2: 4.30265272975, 3: 3.18244630528, 4: 2.77644510520,
		5: 2.57058183564, 6: 2.44691185114, 7: 2.36462425159, 8: 2.30600413520,
		9: 2.26215716280, 10: 2.22813885199, 20: 2.08596344727, 30: 2.04227245630,
	}
	for nu, w := range want {
		got := tQuantile975(int(nu))
		if relErr(got, w) > 1e-10 {
			t.Errorf("t0.975(%v) = %.12g, reference %.12g", nu, got, w)
		}
	}
	// ν → ∞ tends to the normal 1.959963985 (table row ∞: 1.960).
	if got := (distuv.Normal{Mu: 0, Sigma: 1}).Quantile(0.975); math.Abs(got-1.959963985) > 1e-9 {
		t.Errorf("normal 0.975 quantile %v", got)
	}
}
