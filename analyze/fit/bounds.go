package fit

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// bounds holds box constraints lo ≤ x ≤ hi (infinite where absent).
type bounds struct {
	lo, hi []float64
	fixed  []bool
	aug    *mat.Dense
	qr     mat.QR
}

func bound(b []float64, k int, def float64) float64 {
	if b == nil {
		return def
	}
	return b[k]
}

// newBounds returns nil for an unbounded problem.
func newBounds(p Problem, n int) *bounds {
	if p.Lower == nil && p.Upper == nil {
		return nil
	}
	bd := &bounds{lo: make([]float64, n), hi: make([]float64, n), fixed: make([]bool, n)}
	for k := 0; k < n; k++ {
		bd.lo[k] = bound(p.Lower, k, math.Inf(-1))
		bd.hi[k] = bound(p.Upper, k, math.Inf(1))
	}
	return bd
}

// clamp projects x onto the box and reports whether anything moved.
func (bd *bounds) clamp(x []float64) bool {
	moved := false
	for k := range x {
		if c := math.Min(math.Max(x[k], bd.lo[k]), bd.hi[k]); c != x[k] {
			x[k], moved = c, true
		}
	}
	return moved
}

// freeze holds at their bounds the parameters that sit on a bound with a step pointing
// outwards, re-solving the damped problem for the others, until no free parameter
// points out of an active bound. It reports whether any parameter was held.
func (bd *bounds) freeze(s *stepper, x, delta, r, d []float64, lambda float64) bool {
	held := false
	for k := range bd.fixed {
		bd.fixed[k] = false
	}
	for {
		changed := false
		for k := range x {
			if !bd.fixed[k] && ((x[k] <= bd.lo[k] && delta[k] < 0) || (x[k] >= bd.hi[k] && delta[k] > 0)) {
				bd.fixed[k], changed, held = true, true, true
			}
		}
		if !changed {
			return held
		}
		bd.solveFree(s, delta, r, d, lambda)
	}
}

// solveFree solves min ‖J_F·δ_F + r‖² + λ‖D_F·δ_F‖² over the free parameters F by QR of
// the stacked matrix, with δ = 0 for the held ones.
func (bd *bounds) solveFree(s *stepper, delta, r, d []float64, lambda float64) {
	var free []int
	for k, f := range bd.fixed {
		if !f {
			free = append(free, k)
		}
		delta[k] = 0
	}
	nf := len(free)
	if nf == 0 {
		return
	}
	aug := mat.NewDense(s.m+nf, nf, nil)
	rhs := mat.NewDense(s.m+nf, 1, nil)
	for i := 0; i < s.m; i++ {
		for c, k := range free {
			aug.Set(i, c, s.j.At(i, k))
		}
		rhs.Set(i, 0, -r[i])
	}
	sl := math.Sqrt(lambda)
	for c, k := range free {
		aug.Set(s.m+c, c, sl*d[k])
	}
	bd.qr.Factorize(aug)
	var sol mat.Dense
	if err := bd.qr.SolveTo(&sol, false, rhs); err != nil {
		return
	}
	for c, k := range free {
		delta[k] = sol.At(c, 0)
	}
}
