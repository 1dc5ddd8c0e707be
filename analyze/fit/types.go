package fit

import (
	"math"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// Problem is a nonlinear least-squares problem: find the parameters x that minimise
//
//	S(x) = Σ_i w_i r_i(x)²
//
// over the M residuals r_i computed by Func.
type Problem struct {
	// M is the number of residuals. It must be at least the number of parameters.
	M int

	// Func writes the M residuals at x into dst (len(dst) == M). The sign convention is
	// free (data − model or model − data) but Jac must use the same one. A non-finite
	// residual marks x as outside the model's domain: the solver rejects that trial step
	// and shortens the next one.
	Func func(dst, x []float64)

	// Jac, if not nil, writes the M×N Jacobian ∂r_i/∂x_j at x into dst. When it is nil
	// the solver uses finite differences (see Settings.Step and Settings.Forward).
	Jac func(dst *mat.Dense, x []float64)

	// Weights, if not nil, holds the M weights w_i ≥ 0 (typically 1/σ_i²). Nil means all
	// weights are 1.
	Weights []float64

	// Lower and Upper, if not nil, hold N bounds Lower_j ≤ x_j ≤ Upper_j (use ±Inf for
	// a free side). The solver then takes projected steps, holding a parameter on its
	// bound while the gradient pushes it outwards (a projected Levenberg-Marquardt
	// method). Nil means unbounded. The starting point must lie inside the box.
	Lower, Upper []float64
}

// Settings control the solver. The zero value, and a nil *Settings, mean the defaults
// documented on each field.
type Settings struct {
	// MaxIterations bounds the number of Jacobian evaluations (outer iterations).
	// Default 200·(N+1).
	MaxIterations int

	// MaxFuncEvals bounds the number of residual evaluations, including those spent on
	// finite differences. Default 1000·(N+1).
	MaxFuncEvals int

	// FTol ends the fit when both the actual and the predicted relative reduction of the
	// sum of squares in a step are at most FTol. Default 1e-12.
	FTol float64

	// XTol ends the fit when a step's scaled length ‖D·δ‖ is at most XTol·‖D·x‖.
	// Default 1e-10.
	XTol float64

	// GTol ends the fit when the cosine of the angle between the residual vector and
	// every Jacobian column is at most GTol (the gradient is orthogonal to the residual).
	// Default 1e-12.
	GTol float64

	// InitialLambda is the damping at the first iteration, relative to the scaled
	// curvature (the scaled JᵀJ has a unit diagonal). Default 1e-3.
	InitialLambda float64

	// Step is the relative finite-difference step: h_j = Step·|x_j| (Step when x_j is 0).
	// Default ε^(1/3) ≈ 6.1e-6 for central differences and √ε ≈ 1.5e-8 for forward ones.
	// Unused when Problem.Jac is set.
	Step float64

	// Forward selects forward differences (N residual evaluations per Jacobian instead
	// of 2N, but only about half the digits; ill-conditioned problems then stop short
	// of the minimum). The covariance at the solution always uses central differences
	// when Problem.Jac is nil. Default false: central differences.
	Forward bool

	// RankTol is the relative singular-value threshold below which a direction of the
	// column-scaled Jacobian counts as not identifiable. Default 1e-12 with an analytic
	// Jacobian and 1e-8 with finite differences.
	RankTol float64

	// AbsoluteWeights says that Problem.Weights are 1/σ_i² for known measurement
	// errors σ_i: the covariance is then (JᵀWJ)⁻¹, not rescaled by s² = RSS/DoF.
	// Default false: weights are relative and the residual scatter sets the scale.
	AbsoluteWeights bool

	// NoAccel turns off the geodesic acceleration (see Solve), saving one residual
	// evaluation per trial step. Default false: acceleration on.
	NoAccel bool

	// Level is the confidence level of Result.Lo and Result.Hi. Default 0.95.
	Level float64
}

// Status says why the solver stopped.
type Status int

// Solver statuses. The first group are successful terminations; see Status.Converged.
const (
	NotTerminated Status = iota
	// FTolReached: the relative reduction of the sum of squares fell below FTol.
	FTolReached
	// XTolReached: the relative step fell below XTol.
	XTolReached
	// GTolReached: the residual vector is orthogonal to the Jacobian columns within GTol.
	GTolReached
	// ZeroResidual: the model fits the data exactly (to rounding).
	ZeroResidual
	// MachinePrecision: no step could reduce the sum of squares further and the gradient
	// test is met to √ε (1e-6 with finite differences): the solution is as good as
	// floating point allows.
	MachinePrecision

	// IterationLimit: Settings.MaxIterations was reached first.
	IterationLimit
	// FuncEvalLimit: Settings.MaxFuncEvals was reached first.
	FuncEvalLimit
	// NoProgress: the damping grew without bound and the gradient test is not met.
	NoProgress
	// NonFinite: the residuals or the Jacobian at the accepted point are not finite.
	NonFinite
)

var statusNames = [...]string{
	NotTerminated:    "not terminated",
	FTolReached:      "sum of squares converged (ftol)",
	XTolReached:      "parameters converged (xtol)",
	GTolReached:      "gradient orthogonal to residuals (gtol)",
	ZeroResidual:     "zero residual",
	MachinePrecision: "converged to machine precision",
	IterationLimit:   "iteration limit reached",
	FuncEvalLimit:    "function evaluation limit reached",
	NoProgress:       "no progress (damping unbounded)",
	NonFinite:        "non-finite residuals or Jacobian",
}

// String returns a short English description of s.
func (s Status) String() string {
	if s >= 0 && int(s) < len(statusNames) {
		return statusNames[s]
	}
	return "unknown status"
}

// Converged reports whether s is a successful termination.
func (s Status) Converged() bool {
	return s >= FTolReached && s <= MachinePrecision
}

// Err returns nil for a successful status and a *StatusError wrapping ErrNotConverged
// otherwise.
func (s Status) Err() error {
	if s.Converged() {
		return nil
	}
	return &StatusError{Status: s}
}

// Result is the solution of a Problem with its uncertainty.
//
// The covariance is s²·(JᵀWJ)⁻¹ at the solution, with s² = RSS/DoF (or 1 with
// Settings.AbsoluteWeights), computed from the singular value decomposition of the
// column-scaled Jacobian so that an ill-conditioned problem gives honest (large) errors
// instead of garbage. Lo and Hi use Student's t with DoF degrees of freedom in both cases
// (slightly conservative when the weights are absolute). A parameter that lies in the
// numerical null space of the Jacobian is not identifiable from the data: its
// Identifiable entry is false and its SE, Lo and Hi, and its row and column of Cov, are NaN.
type Result struct {
	X            []float64 // the parameters at the solution
	Residuals    []float64 // the unweighted residuals r_i at X
	RSS          float64   // Σ w_i r_i² at X
	DoF          int       // M − N: residual degrees of freedom
	SD           float64   // residual standard deviation √(RSS/DoF); NaN when DoF is 0
	Cov          *mat.SymDense
	SE           []float64 // standard errors √Cov_jj
	Lo, Hi       []float64 // X ∓ t(DoF)·SE: two-sided Student-t interval at Settings.Level
	Level        float64   // the confidence level of Lo and Hi
	Rank         int       // numerical rank of the Jacobian at X
	Identifiable []bool    // per parameter: false when it lies in the Jacobian's null space
	Cond         float64   // condition number of the column-scaled Jacobian at X
	// AtBound marks parameters that end on a bound of Problem.Lower or Upper. Their
	// SE, Lo, Hi and covariance are NaN, and the other parameters' covariance is the
	// one with them held fixed.
	AtBound []bool

	Iterations int // Jacobian evaluations
	FuncEvals  int // residual evaluations, finite differences included
	Status     Status
}

// Value is a number with its standard error. It encodes to JSON as
// {"value": ..., "sd": ...}, with null for a NaN (undetermined) number.
type Value struct {
	Value float64 `json:"value"`
	SD    float64 `json:"sd"`
}

// Interval returns the two-sided Student-t confidence interval Value ∓ t·SD at the
// given level (for example 0.95) with dof degrees of freedom (Result.DoF of the fit
// the value came from). NaN when dof < 1 or the level is outside (0, 1).
func (v Value) Interval(dof int, level float64) (lo, hi float64) {
	if dof < 1 || !(level > 0 && level < 1) {
		return math.NaN(), math.NaN()
	}
	q := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(dof)}.Quantile(0.5 + level/2)
	return v.Value - q*v.SD, v.Value + q*v.SD
}
