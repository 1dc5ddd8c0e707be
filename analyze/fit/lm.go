package fit

import (
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/lapack/lapack64"
	"gonum.org/v1/gonum/mat"
)

const eps = 0x1p-52 // float64 machine epsilon

// stuckCosine is the largest gradient cosine (see Settings.GTol) at which the FTol and
// XTol tests may end the fit. At a minimum the cosine is at rounding level (about 1e-8
// with finite differences); a point where the steps are merely damped to nothing has a
// cosine of order one (common practice, no source).
const stuckCosine = 1e-4

// Solve minimises the weighted sum of squared residuals of p from the starting point x0
// by the Levenberg-Marquardt method with Moré's scaling, and returns the solution with
// its covariance, standard errors and confidence intervals. A nil s means the default
// Settings.
//
// Each iteration solves the damped, scaled linear least-squares problem
//
//	min ‖J·δ + r‖² + λ‖D·δ‖²
//
// through QR factorisations (never the normal equations): J = Q·R once per iteration,
// then [R; √λ·D] for each trial λ, as MINPACK does. D_j is the largest Euclidean norm
// that column j of the Jacobian has had so far (Moré 1978, "The Levenberg-Marquardt
// algorithm: implementation and theory", Lecture Notes in Mathematics 630, section 6). The step is accepted when the gain ratio
// ρ = (actual reduction)/(predicted reduction) exceeds 1e-4, and λ follows the gain
// ratio: λ·max(1/3, 1−(2ρ−1)³) on success, λ·ν with ν doubling on failure (Nielsen 1999,
// "Damping parameter in Marquardt's method", IMM-REP-1999-05; report number from
// memory). The predicted reduction is
// ‖J·δ‖² + 2λ‖D·δ‖², which follows from the step equations and never cancels.
//
// Unless Settings.NoAccel is set, each step also gets half the geodesic acceleration
// (Transtrum and Sethna 2012), and a step whose acceleration is large against its
// velocity is refused as leaving the region where the linear model holds. This is what
// brings the fit home from poor starting points such as NIST's first BoxBOD start, where
// the plain method runs off along a flat direction.
//
// With bounds (Problem.Lower, Upper) a parameter that sits on a bound while the step
// points outwards is held there and the step re-solved for the others; a step that
// crosses a bound is projected back onto the box, and its predicted reduction is then
// taken from the linear model for the projected step.
//
// Solve returns an error wrapping ErrInput (and a nil Result) for a malformed problem or
// a non-finite start. When the solver stops without meeting a convergence test it
// returns the best point found together with a *StatusError (errors.Is ErrNotConverged).
func Solve(p Problem, x0 []float64, s *Settings) (*Result, error) {
	n := len(x0)
	if err := checkProblem(p, x0); err != nil {
		return nil, err
	}
	set := defaults(s, n, p.Jac != nil)
	ev := newEvaluator(p, n, set)
	bd := newBounds(p, n)

	x := append([]float64(nil), x0...)
	r := make([]float64, p.M)
	ev.eval(r, x)
	if !allFinite(r) {
		return nil, inputErrorf("residuals are not finite at the starting point")
	}
	f2 := floats.Dot(r, r)
	f2start := f2

	res := &Result{Level: set.Level}
	lm := newStepper(p.M, n)
	d := make([]float64, n)
	cn := make([]float64, n)
	delta := make([]float64, n)
	xt := make([]float64, n)
	rt := make([]float64, p.M)
	jd := make([]float64, p.M)
	accel := make([]float64, n)
	lambda := set.InitialLambda
	nu := 2.0
	// The gradient cosine reachable in floating point: √ε with an analytic Jacobian,
	// larger with finite differences (common practice, no source).
	mpCosine := math.Sqrt(eps)
	if p.Jac == nil {
		mpCosine = 1e-6
	}
	status := NotTerminated

outer:
	for {
		if res.Iterations >= set.MaxIterations {
			status = IterationLimit
			break
		}
		res.Iterations++
		ev.jacobian(lm.j, x, r, !set.Forward)
		if !allFinite(lm.j.RawMatrix().Data) {
			status = NonFinite
			break
		}
		for jj := 0; jj < n; jj++ {
			cn[jj] = floats.Norm(mat.Col(nil, jj, lm.j), 2)
			d[jj] = math.Max(d[jj], cn[jj])
		}
		if f2 == 0 || f2 <= eps*eps*f2start {
			status = ZeroResidual
			break
		}
		gnorm := gradientCosine(lm.j, r, cn, f2, x, bd)
		lm.factor(r)
		if gnorm <= set.GTol {
			status = GTolReached
			break
		}
		for {
			if ev.evals >= set.MaxFuncEvals {
				status = FuncEvalLimit
				break outer
			}
			lm.step(delta, d, lambda)
			frozen := bd != nil && bd.freeze(lm, x, delta, r, d, lambda)
			dx := scaledNorm(d, delta)
			xn := scaledNorm(d, x)
			jdv := mat.NewVecDense(p.M, jd)
			jdv.MulVec(lm.j, mat.NewVecDense(n, delta))
			pred := floats.Dot(jd, jd) + 2*lambda*dx*dx
			rho := -1.0
			accelOK := true
			if !set.NoAccel && !frozen {
				accelOK = lm.accelerate(ev, delta, accel, x, r, jd, d)
			}
			if accelOK {
				floats.AddTo(xt, x, delta)
				if bd != nil && bd.clamp(xt) {
					// A projected step: predict from the linear model for the step taken.
					floats.SubTo(delta, xt, x)
					dx = scaledNorm(d, delta)
					jdv.MulVec(lm.j, mat.NewVecDense(n, delta))
					floats.Add(jd, r)
					pred = f2 - floats.Dot(jd, jd)
				}
				ev.eval(rt, xt)
				ft2 := floats.Dot(rt, rt)
				if !math.IsNaN(ft2) && !math.IsInf(ft2, 0) && pred > 0 {
					rho = (f2 - ft2) / pred
				}
			}
			if rho > 1e-4 {
				ft2 := floats.Dot(rt, rt)
				actRel := (f2 - ft2) / f2
				predRel := pred / f2
				copy(x, xt)
				copy(r, rt)
				f2 = ft2
				lambda *= math.Max(1.0/3, 1-math.Pow(2*rho-1, 3))
				nu = 2
				switch {
				case f2 == 0 || f2 <= eps*eps*f2start:
					status = ZeroResidual
				case gnorm > stuckCosine && f2 > eps*f2start:
					// Tiny steps far from a stationary point mean heavy damping, not
					// convergence: keep going. (When the residuals have fallen to
					// rounding level, their direction means nothing.)
				case math.Abs(actRel) <= set.FTol && predRel <= set.FTol && rho <= 2:
					status = FTolReached
				case dx <= set.XTol*xn:
					status = XTolReached
				}
				if status != NotTerminated {
					break outer
				}
				continue outer
			}
			// Rejected: increase the damping. Stop when the step no longer moves x.
			if dx <= eps*xn || lambda > 1e300/nu {
				if gnorm <= mpCosine {
					status = MachinePrecision
				} else {
					status = NoProgress
				}
				break outer
			}
			lambda *= nu
			nu *= 2
		}
	}

	res.Status = status
	res.X = x
	res.RSS = f2
	res.DoF = p.M - n
	res.FuncEvals = ev.evals
	res.Residuals = make([]float64, p.M)
	ev.raw(res.Residuals, x)
	res.AtBound = make([]bool, n)
	if bd != nil {
		for k := range x {
			res.AtBound[k] = x[k] <= bd.lo[k] || x[k] >= bd.hi[k]
		}
	}
	covariance(res, ev, lm.j, r, set)
	return res, status.Err()
}

func checkProblem(p Problem, x0 []float64) error {
	n := len(x0)
	switch {
	case p.Func == nil:
		return inputErrorf("Problem.Func is nil")
	case n == 0:
		return inputErrorf("no parameters")
	case p.M < n:
		return inputErrorf("%d residuals for %d parameters", p.M, n)
	case p.Weights != nil && len(p.Weights) != p.M:
		return inputErrorf("%d weights for %d residuals", len(p.Weights), p.M)
	}
	if !allFinite(x0) {
		return inputErrorf("starting point is not finite: %v", x0)
	}
	for name, b := range map[string][]float64{"Lower": p.Lower, "Upper": p.Upper} {
		if b != nil && len(b) != n {
			return inputErrorf("Problem.%s has %d entries for %d parameters", name, len(b), n)
		}
	}
	for k := range x0 {
		lo, hi := bound(p.Lower, k, math.Inf(-1)), bound(p.Upper, k, math.Inf(1))
		if math.IsNaN(lo) || math.IsNaN(hi) || lo > hi {
			return inputErrorf("bounds of parameter %d are [%v, %v]", k, lo, hi)
		}
		if x0[k] < lo || x0[k] > hi {
			return inputErrorf("starting value %v of parameter %d is outside [%v, %v]", x0[k], k, lo, hi)
		}
	}
	for i, w := range p.Weights {
		if !(w >= 0) || math.IsInf(w, 0) {
			return inputErrorf("weight %d is %v, want finite and >= 0", i, w)
		}
	}
	return nil
}

func defaults(s *Settings, n int, analytic bool) Settings {
	var set Settings
	if s != nil {
		set = *s
	}
	if set.MaxIterations <= 0 {
		set.MaxIterations = 200 * (n + 1)
	}
	if set.MaxFuncEvals <= 0 {
		set.MaxFuncEvals = 1000 * (n + 1)
	}
	if set.FTol <= 0 {
		set.FTol = 1e-14
	}
	if set.XTol <= 0 {
		set.XTol = 1e-10
	}
	if set.GTol <= 0 {
		set.GTol = 1e-12
	}
	if set.InitialLambda <= 0 {
		set.InitialLambda = 1e-3
	}
	if set.RankTol <= 0 {
		set.RankTol = 1e-8
		if analytic {
			set.RankTol = 1e-12
		}
	}
	if set.Level <= 0 || set.Level >= 1 {
		set.Level = 0.95
	}
	return set
}

// gradientCosine returns max_j |J_jᵀ r| / (‖J_j‖·‖r‖) over the non-zero columns,
// leaving out parameters held at a bound by a gradient that pushes them outwards.
func gradientCosine(j *mat.Dense, r, cn []float64, f2 float64, x []float64, bd *bounds) float64 {
	m, n := j.Dims()
	fn := math.Sqrt(f2)
	g := 0.0
	for c := 0; c < n; c++ {
		if cn[c] == 0 {
			continue
		}
		s := 0.0
		for i := 0; i < m; i++ {
			s += j.At(i, c) * r[i]
		}
		// The descent direction for x_c is −s.
		if bd != nil && ((x[c] <= bd.lo[c] && s > 0) || (x[c] >= bd.hi[c] && s < 0)) {
			continue
		}
		g = math.Max(g, math.Abs(s)/(cn[c]*fn))
	}
	return g
}

func scaledNorm(d, v []float64) float64 {
	s := 0.0
	for i, di := range d {
		s = math.Hypot(s, di*v[i])
	}
	return s
}

func allFinite(v []float64) bool {
	for _, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return false
		}
	}
	return true
}

// stepper solves the damped subproblem. The Jacobian is factorised once per iteration,
// J = Q·R (Householder QR, LAPACK dgeqrf), and each trial λ then solves only the small
// 2N×N problem [R; √λ·D]·δ ≈ [−(Qᵀr)₁..N; 0], as in MINPACK's lmpar/qrsolv (Moré 1978).
type stepper struct {
	m, n  int
	j     *mat.Dense // the weighted Jacobian at the current point
	qr    blas64.General
	tau   []float64
	work  []float64
	c     blas64.General // m×1 work vector for Qᵀ·b
	qtr   []float64      // (Qᵀr)₁..N
	qb    []float64      // (Qᵀ·r_vv)₁..N for accelerate
	small *mat.Dense     // [R; √λ·D]
	srhs  *mat.Dense
	sol   *mat.Dense
	sqr   mat.QR
}

func newStepper(m, n int) *stepper {
	s := &stepper{
		m: m, n: n,
		j:     mat.NewDense(m, n, nil),
		qr:    blas64.General{Rows: m, Cols: n, Stride: n, Data: make([]float64, m*n)},
		tau:   make([]float64, n),
		c:     blas64.General{Rows: m, Cols: 1, Stride: 1, Data: make([]float64, m)},
		qtr:   make([]float64, n),
		qb:    make([]float64, n),
		small: mat.NewDense(2*n, n, nil),
		srhs:  mat.NewDense(2*n, 1, nil),
		sol:   mat.NewDense(n, 1, nil),
	}
	var q [1]float64
	lapack64.Geqrf(s.qr, s.tau, q[:], -1)
	lw := int(q[0])
	lapack64.Ormqr(blas.Left, blas.Trans, s.qr, s.tau, s.c, q[:], -1)
	s.work = make([]float64, max(lw, int(q[0]), 1))
	return s
}

// factor factorises the current Jacobian and forms Qᵀr.
func (s *stepper) factor(r []float64) {
	copy(s.qr.Data, s.j.RawMatrix().Data)
	lapack64.Geqrf(s.qr, s.tau, s.work, len(s.work))
	s.qt(s.qtr, r)
}

// qt writes the first N entries of Qᵀ·b into dst.
func (s *stepper) qt(dst, b []float64) {
	copy(s.c.Data, b)
	lapack64.Ormqr(blas.Left, blas.Trans, s.qr, s.tau, s.c, s.work, len(s.work))
	copy(dst, s.c.Data[:s.n])
}

// step writes into delta the minimiser of ‖J·δ + r‖² + λ‖D·δ‖², and leaves the small
// factorisation in place for accelerate.
func (s *stepper) step(delta, d []float64, lambda float64) {
	n := s.n
	sl := math.Sqrt(lambda)
	for i := 0; i < n; i++ {
		for c := 0; c < n; c++ {
			rv := 0.0
			if c >= i {
				rv = s.qr.Data[i*s.qr.Stride+c]
			}
			s.small.Set(i, c, rv)
			s.small.Set(n+i, c, 0)
		}
		s.small.Set(n+i, i, sl*d[i])
	}
	s.sqr.Factorize(s.small)
	s.solve(delta, s.qtr)
}

// solve writes into dst the least-squares solution of [R; √λ·D]·x ≈ [−qb; 0].
func (s *stepper) solve(dst, qb []float64) {
	n := s.n
	for i := 0; i < n; i++ {
		s.srhs.Set(i, 0, -qb[i])
		s.srhs.Set(n+i, 0, 0)
	}
	if err := s.sqr.SolveTo(s.sol, false, s.srhs); err != nil {
		// Only possible if λ·D² underflows; a zero step makes the caller raise λ.
		for i := range dst {
			dst[i] = 0
		}
		return
	}
	for i := range dst {
		dst[i] = s.sol.At(i, 0)
	}
}

// accelerate adds half the geodesic acceleration to the velocity v (in place), following
// Transtrum and Sethna (2012, "Improvements to the Levenberg-Marquardt algorithm for
// nonlinear least-squares minimization", arXiv:1201.5885; identifier from memory): a
// solves the damped problem with the directional second derivative r_vv in place of r,
// estimated by
// r_vv ≈ (2/h)·((r(x + h·v) − r(x))/h − J·v) with h = 0.1. It reports false, leaving v
// untouched, when 2‖D·a‖/‖D·v‖ exceeds 0.75: the step runs into a region where the
// linear model is poor, and the caller raises the damping instead.
func (s *stepper) accelerate(ev *evaluator, v, a, x, r, jv, d []float64) bool {
	const h, alpha = 0.1, 0.75
	xh := ev.xh
	for i := range x {
		xh[i] = x[i] + h*v[i]
	}
	ev.eval(ev.rp, xh)
	if !allFinite(ev.rp) {
		return false
	}
	for i := range r {
		ev.rp[i] = (2 / h) * ((ev.rp[i]-r[i])/h - jv[i])
	}
	s.qt(s.qb, ev.rp)
	s.solve(a, s.qb)
	vn := scaledNorm(d, v)
	if vn == 0 || 2*scaledNorm(d, a) > alpha*vn {
		return false
	}
	for i := range v {
		v[i] += a[i] / 2
	}
	return true
}
