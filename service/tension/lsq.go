package tension

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// lsFit is a weighted linear least-squares solution with its covariance.
type lsFit struct {
	Coef []float64
	// CovUnscaled is (XᵀWX)⁻¹; the parameter covariance is S2·CovUnscaled.
	CovUnscaled *mat.SymDense
	RSS         float64 // Σ wᵢ(yᵢ − xᵢβ)²
	DoF         int     // n − p
	S2          float64 // RSS/DoF (0 when DoF = 0)
	// Cond is the condition number σmax/σmin of the column-scaled design.
	Cond float64
}

// SE returns each coefficient's standard error √(s²·[(XᵀWX)⁻¹]ᵢᵢ).
func (f lsFit) SE() []float64 {
	se := make([]float64, len(f.Coef))
	for i := range se {
		se[i] = math.Sqrt(math.Max(0, f.S2*f.CovUnscaled.At(i, i)))
	}
	return se
}

var errSingular = errors.New("least squares: the design matrix is rank deficient")

// maxCond is the largest scaled condition number accepted as full rank.
const maxCond = 1e12

// weightedLS solves min Σ wᵢ(yᵢ − xᵢβ)² by the singular value decomposition
// of the row-weighted, column-scaled design (each column divided by its norm,
// so the condition number reflects the problem and not its units). w nil
// means unit weights. It fails on a rank-deficient design.
//
// The same routine solves the Levenberg–Marquardt steps and gives the fitted
// model's covariance; it is checked against NIST StRD certified values.
func weightedLS(x *mat.Dense, y, w []float64) (lsFit, error) {
	n, p := x.Dims()
	if n < p || p == 0 || len(y) != n || (w != nil && len(w) != n) {
		return lsFit{}, errSingular
	}
	xs := mat.NewDense(n, p, nil)
	ys := make([]float64, n)
	for i := 0; i < n; i++ {
		sw := 1.0
		if w != nil {
			sw = math.Sqrt(w[i])
		}
		ys[i] = sw * y[i]
		for j := 0; j < p; j++ {
			xs.Set(i, j, sw*x.At(i, j))
		}
	}
	scale := make([]float64, p)
	for j := 0; j < p; j++ {
		var s float64
		for i := 0; i < n; i++ {
			v := xs.At(i, j)
			s += v * v
		}
		s = math.Sqrt(s)
		if s == 0 || math.IsNaN(s) || math.IsInf(s, 0) {
			return lsFit{}, errSingular
		}
		scale[j] = s
		for i := 0; i < n; i++ {
			xs.Set(i, j, xs.At(i, j)/s)
		}
	}
	var svd mat.SVD
	if !svd.Factorize(xs, mat.SVDThin) {
		return lsFit{}, errSingular
	}
	sv := svd.Values(nil)
	if sv[p-1] <= 0 || sv[0]/sv[p-1] > maxCond {
		return lsFit{}, errSingular
	}
	var u, v mat.Dense
	svd.UTo(&u)
	svd.VTo(&v)
	// β_scaled = V Σ⁻¹ Uᵀ y
	uty := make([]float64, p)
	for k := 0; k < p; k++ {
		var s float64
		for i := 0; i < n; i++ {
			s += u.At(i, k) * ys[i]
		}
		uty[k] = s / sv[k]
	}
	coef := make([]float64, p)
	for j := 0; j < p; j++ {
		var s float64
		for k := 0; k < p; k++ {
			s += v.At(j, k) * uty[k]
		}
		coef[j] = s / scale[j]
	}
	// (XᵀWX)⁻¹ = D⁻¹ V Σ⁻² Vᵀ D⁻¹
	cov := mat.NewSymDense(p, nil)
	for a := 0; a < p; a++ {
		for b := a; b < p; b++ {
			var s float64
			for k := 0; k < p; k++ {
				s += v.At(a, k) * v.At(b, k) / (sv[k] * sv[k])
			}
			cov.SetSym(a, b, s/(scale[a]*scale[b]))
		}
	}
	var rss float64
	for i := 0; i < n; i++ {
		r := y[i]
		for j := 0; j < p; j++ {
			r -= x.At(i, j) * coef[j]
		}
		wi := 1.0
		if w != nil {
			wi = w[i]
		}
		rss += wi * r * r
	}
	f := lsFit{Coef: coef, CovUnscaled: cov, RSS: rss, DoF: n - p, Cond: sv[0] / sv[p-1]}
	if f.DoF > 0 {
		f.S2 = rss / float64(f.DoF)
	}
	return f, nil
}

// tQuantile975 is the two-sided 95 % Student t critical value t₀.₉₇₅,ν.
func tQuantile975(dof int) float64 {
	if dof < 1 {
		dof = 1
	}
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(dof)}.Quantile(0.975)
}
