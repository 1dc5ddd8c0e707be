package fit

import (
	"math"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

const eps = 0x1p-52 // float64 machine epsilon

// Solve minimises the weighted sum of squared residuals of p from the starting point x0
// by the Levenberg-Marquardt method with Moré's scaling, and returns the solution with
// its covariance, standard errors and confidence intervals. A nil s means the default
// Settings.
//
// Each iteration solves the damped, scaled linear least-squares problem
//
//	min ‖J·δ + r‖² + λ‖D·δ‖²
//
// through a QR factorisation of the stacked matrix [J; √λ·D] (never the normal
// equations), where D_j is the largest Euclidean norm that column j of the Jacobian has
// had so far (Moré 1978, "The Levenberg-Marquardt algorithm: implementation and theory",
// Lecture Notes in Mathematics 630, section 6). The step is accepted when the gain ratio
// ρ = (actual reduction)/(predicted reduction) exceeds 1e-4, and λ follows the gain
// ratio: λ·max(1/3, 1−(2ρ−1)³) on success, λ·ν with ν doubling on failure (Nielsen 1999,
// "Damping parameter in Marquardt's method", IMM-REP-1999-05). The predicted reduction is
// ‖J·δ‖² + 2λ‖D·δ‖², which follows from the step equations and never cancels.
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
		gnorm := gradientCosine(lm.j, r, cn, f2)
		if gnorm <= set.GTol {
			status = GTolReached
			break
		}
		for {
			if ev.evals >= set.MaxFuncEvals {
				status = FuncEvalLimit
				break outer
			}
			lm.step(delta, r, d, lambda)
			dx := scaledNorm(d, delta)
			xn := scaledNorm(d, x)
			mat.NewVecDense(p.M, jd).MulVec(lm.j, mat.NewVecDense(n, delta))
			pred := floats.Dot(jd, jd) + 2*lambda*dx*dx
			rho := -1.0
			accelOK := true
			if !set.NoAccel {
				accelOK = lm.accelerate(ev, delta, accel, x, r, jd, d, lambda)
			}
			if accelOK {
				floats.AddTo(xt, x, delta)
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
				if gnorm <= math.Sqrt(eps) {
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

// gradientCosine returns max_j |J_jᵀ r| / (‖J_j‖·‖r‖) over the non-zero columns.
func gradientCosine(j *mat.Dense, r, cn []float64, f2 float64) float64 {
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

// stepper solves the damped subproblem; it owns the Jacobian and the work matrices.
type stepper struct {
	m, n int
	j    *mat.Dense // the weighted Jacobian at the current point
	aug  *mat.Dense // [J; √λ·D]
	rhs  *mat.Dense // [−r; 0]
	sol  *mat.Dense
	qr   mat.QR
}

func newStepper(m, n int) *stepper {
	return &stepper{
		m: m, n: n,
		j:   mat.NewDense(m, n, nil),
		aug: mat.NewDense(m+n, n, nil),
		rhs: mat.NewDense(m+n, 1, nil),
		sol: mat.NewDense(n, 1, nil),
	}
}

// accelerate adds half the geodesic acceleration to the velocity v (in place), following
// Transtrum and Sethna (2012, "Improvements to the Levenberg-Marquardt algorithm for
// nonlinear least-squares minimization", arXiv:1201.5885): a solves the damped problem
// with the directional second derivative r_vv in place of r, estimated by
// r_vv ≈ (2/h)·((r(x + h·v) − r(x))/h − J·v) with h = 0.1. It reports false, leaving v
// untouched, when 2‖D·a‖/‖D·v‖ exceeds 0.75: the step runs into a region where the
// linear model is poor, and the caller raises the damping instead.
func (s *stepper) accelerate(ev *evaluator, v, a, x, r, jv, d []float64, lambda float64) bool {
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
		s.rhs.Set(i, 0, -(2/h)*((ev.rp[i]-r[i])/h-jv[i]))
	}
	for i := 0; i < s.n; i++ {
		s.rhs.Set(s.m+i, 0, 0)
	}
	if err := s.qr.SolveTo(s.sol, false, s.rhs); err != nil {
		return false
	}
	for i := range a {
		a[i] = s.sol.At(i, 0)
	}
	vn := scaledNorm(d, v)
	if vn == 0 || 2*scaledNorm(d, a) > alpha*vn {
		return false
	}
	for i := range v {
		v[i] += a[i] / 2
	}
	return true
}

// step writes into delta the minimiser of ‖J·δ + r‖² + λ‖D·δ‖².
func (s *stepper) step(delta, r, d []float64, lambda float64) {
	s.aug.Slice(0, s.m, 0, s.n).(*mat.Dense).Copy(s.j)
	sl := math.Sqrt(lambda)
	for i := 0; i < s.n; i++ {
		for c := 0; c < s.n; c++ {
			s.aug.Set(s.m+i, c, 0)
		}
		s.aug.Set(s.m+i, i, sl*d[i])
		s.rhs.Set(s.m+i, 0, 0)
	}
	for i := 0; i < s.m; i++ {
		s.rhs.Set(i, 0, -r[i])
	}
	s.qr.Factorize(s.aug)
	if err := s.qr.SolveTo(s.sol, false, s.rhs); err != nil {
		// Only possible if λ·D² underflows; a zero step makes the caller raise λ.
		for i := range delta {
			delta[i] = 0
		}
		return
	}
	for i := range delta {
		delta[i] = s.sol.At(i, 0)
	}
}
