package fit

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// evaluator wraps a Problem: it applies the square roots of the weights, counts the
// residual evaluations and forms the Jacobian analytically or by finite differences.
type evaluator struct {
	p     Problem
	n     int
	sw    []float64 // √w_i, nil when unweighted
	step  float64   // relative step for forward differences
	cstep float64   // relative step for central differences
	evals int
	xh    []float64
	rp    []float64
	rm    []float64
}

func newEvaluator(p Problem, n int, set Settings) *evaluator {
	ev := &evaluator{
		p: p, n: n,
		step:  math.Sqrt(eps),
		cstep: math.Cbrt(eps),
		xh:    make([]float64, n),
		rp:    make([]float64, p.M),
		rm:    make([]float64, p.M),
	}
	if set.Step > 0 {
		ev.step = set.Step
		ev.cstep = set.Step
	}
	if p.Weights != nil {
		ev.sw = make([]float64, p.M)
		for i, w := range p.Weights {
			ev.sw[i] = math.Sqrt(w)
		}
	}
	return ev
}

// raw writes the unweighted residuals.
func (ev *evaluator) raw(dst, x []float64) {
	ev.evals++
	ev.p.Func(dst, x)
}

// eval writes the weighted residuals √w_i·r_i.
func (ev *evaluator) eval(dst, x []float64) {
	ev.raw(dst, x)
	if ev.sw != nil {
		for i, s := range ev.sw {
			dst[i] *= s
		}
	}
}

// jacobian writes the weighted Jacobian at x, where r holds the weighted residuals at x.
func (ev *evaluator) jacobian(dst *mat.Dense, x, r []float64, central bool) {
	if ev.p.Jac != nil {
		ev.p.Jac(dst, x)
		if ev.sw != nil {
			for i, s := range ev.sw {
				row := dst.RawRowView(i)
				for c := range row {
					row[c] *= s
				}
			}
		}
		return
	}
	for c := 0; c < ev.n; c++ {
		if central {
			ev.centralColumn(dst, x, c)
		} else {
			ev.forwardColumn(dst, x, r, c)
		}
	}
}

func relStep(x, rel float64) float64 {
	if x == 0 {
		return rel
	}
	return rel * math.Abs(x)
}

// forwardColumn sets column c to (r(x + h·e_c) − r(x))/h, stepping backwards if the
// forward point is outside the model's domain.
func (ev *evaluator) forwardColumn(dst *mat.Dense, x, r []float64, c int) {
	copy(ev.xh, x)
	h := relStep(x[c], ev.step)
	for _, sign := range [2]float64{1, -1} {
		ev.xh[c] = x[c] + sign*h
		hh := ev.xh[c] - x[c] // the step actually representable
		ev.eval(ev.rp, ev.xh)
		if allFinite(ev.rp) {
			for i := range r {
				dst.Set(i, c, (ev.rp[i]-r[i])/hh)
			}
			return
		}
	}
	for i := range r {
		dst.Set(i, c, math.NaN())
	}
}

// centralColumn sets column c to (r(x + h·e_c) − r(x − h·e_c))/(2h).
func (ev *evaluator) centralColumn(dst *mat.Dense, x []float64, c int) {
	copy(ev.xh, x)
	h := relStep(x[c], ev.cstep)
	ev.xh[c] = x[c] + h
	hp := ev.xh[c] - x[c]
	ev.eval(ev.rp, ev.xh)
	ev.xh[c] = x[c] - h
	hm := x[c] - ev.xh[c]
	ev.eval(ev.rm, ev.xh)
	for i := range ev.rp {
		dst.Set(i, c, (ev.rp[i]-ev.rm[i])/(hp+hm))
	}
}
