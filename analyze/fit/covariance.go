package fit

import (
	"math"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// nullShare is the smallest component a parameter must have in a null-space direction
// of the scaled Jacobian to count as not identifiable (common practice, no source).
const nullShare = 0.05

// covariance fills the uncertainty fields of res from the Jacobian at res.X. j is work
// space; r holds the weighted residuals at res.X.
func covariance(res *Result, ev *evaluator, j *mat.Dense, r []float64, set Settings) {
	m, n := j.Dims()
	ev.jacobian(j, res.X, r, true)
	for k, at := range res.AtBound {
		if at {
			for i := 0; i < m; i++ {
				j.Set(i, k, 0) // held on its bound: not estimated
			}
		}
	}
	res.SD = math.NaN()
	if res.DoF > 0 {
		res.SD = math.Sqrt(res.RSS / float64(res.DoF))
	}
	res.SE = make([]float64, n)
	res.Lo = make([]float64, n)
	res.Hi = make([]float64, n)
	res.Identifiable = make([]bool, n)
	res.Cov = mat.NewSymDense(n, nil)
	nan := func() {
		for i := 0; i < n; i++ {
			res.SE[i], res.Lo[i], res.Hi[i] = math.NaN(), math.NaN(), math.NaN()
			for k := 0; k < n; k++ {
				res.Cov.SetSym(i, k, math.NaN())
			}
		}
		res.Cond = math.Inf(1)
	}
	if !allFinite(j.RawMatrix().Data) {
		nan()
		return
	}

	// Scale the columns to unit norm so the rank decision does not depend on units.
	scale := make([]float64, n)
	js := mat.NewDense(m, n, nil)
	js.Copy(j)
	for c := 0; c < n; c++ {
		nc := mat.Norm(js.ColView(c), 2)
		scale[c] = nc
		if nc > 0 {
			for i := 0; i < m; i++ {
				js.Set(i, c, js.At(i, c)/nc)
			}
		}
	}
	var svd mat.SVD
	if !svd.Factorize(js, mat.SVDThin) {
		nan()
		return
	}
	sv := svd.Values(nil)
	var v mat.Dense
	svd.VTo(&v)
	rank := 0
	for _, s := range sv {
		if s > set.RankTol*sv[0] {
			rank++
		}
	}
	res.Rank = rank
	res.Cond = math.Inf(1)
	if sv[len(sv)-1] > 0 {
		res.Cond = sv[0] / sv[len(sv)-1]
	}
	for c := 0; c < n; c++ {
		res.Identifiable[c] = scale[c] > 0
		for k := rank; k < len(sv); k++ {
			if math.Abs(v.At(c, k)) > nullShare {
				res.Identifiable[c] = false
			}
		}
	}
	s2 := math.NaN()
	switch {
	case set.AbsoluteWeights:
		s2 = 1
	case res.DoF > 0:
		s2 = res.RSS / float64(res.DoF)
	}
	tq := math.NaN()
	if res.DoF > 0 {
		tq = distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(res.DoF)}.Quantile(0.5 + set.Level/2)
	}
	for a := 0; a < n; a++ {
		for b := a; b < n; b++ {
			c := math.NaN()
			if res.Identifiable[a] && res.Identifiable[b] {
				sum := 0.0
				for k := 0; k < rank; k++ {
					sum += v.At(a, k) * v.At(b, k) / (sv[k] * sv[k])
				}
				c = s2 * sum / (scale[a] * scale[b])
			}
			res.Cov.SetSym(a, b, c)
		}
	}
	for a := 0; a < n; a++ {
		res.SE[a] = math.Sqrt(res.Cov.At(a, a))
		res.Lo[a] = res.X[a] - tq*res.SE[a]
		res.Hi[a] = res.X[a] + tq*res.SE[a]
	}
}

// Interval returns the two-sided Student-t confidence interval of parameter j at the
// given level (for example 0.99), using the result's degrees of freedom.
func (r *Result) Interval(j int, level float64) (lo, hi float64) {
	if r.DoF <= 0 || !(level > 0 && level < 1) {
		return math.NaN(), math.NaN()
	}
	tq := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(r.DoF)}.Quantile(0.5 + level/2)
	return r.X[j] - tq*r.SE[j], r.X[j] + tq*r.SE[j]
}

// Corr returns the correlation between parameters a and b at the solution.
func (r *Result) Corr(a, b int) float64 {
	return r.Cov.At(a, b) / (r.SE[a] * r.SE[b])
}
