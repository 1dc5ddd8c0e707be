package fit

import (
	"math"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// Alpha is the significance level below which ResidualPattern calls a residual pattern
// systematic (common practice, no source).
const Alpha = 1e-3

// Pattern describes whether fit residuals look like noise or like a model that is wrong.
type Pattern struct {
	N int // residuals examined (zeros are left out of the runs test)

	// Runs is the number of runs of equal sign (Wald and Wolfowitz 1940): a systematic
	// misfit gives long runs, hence few of them. ExpectedRuns is 1 + 2·n₊·n₋/n, RunsZ
	// the normal score of Runs and RunsP the one-sided probability of so few runs if the
	// signs were random.
	Runs         int
	ExpectedRuns float64
	RunsZ        float64
	RunsP        float64

	Lag1 float64 // lag-1 autocorrelation of the residuals

	RMS     float64 // root-mean-square residual
	NoiseSD float64 // the noise level: as given, or from successive differences
	// Ratio is RMS/NoiseSD: about 1 for a good fit, well above 1 for a misfit.
	Ratio float64
	// ChiP is the probability of an RSS this large if the residuals were noise of
	// NoiseSD (χ² with N − Params degrees of freedom); NaN when no noise level was given.
	ChiP float64

	// Systematic is true when RunsP or ChiP is below Alpha.
	Systematic bool
}

// ResidualPattern tests residuals r (in time order) of a fit with params parameters
// for a systematic pattern.
//
// If noiseSD > 0 it is the known noise level of one sample (for example measured on a
// flat stretch) and the RSS is also compared with it by a χ² test. Otherwise the noise is
// estimated from successive differences, σ² ≈ Σ(r_{i+1} − r_i)²/(2(N−1)) (von Neumann
// 1941), which a smooth misfit does not inflate, and no χ² test is made.
//
// The runs test assumes independent noise. Residuals of smoothed or heavily
// oversampled data, and of signals quantised far below one ADC step of noise, are
// correlated by construction and will look systematic: pass the raw samples.
func ResidualPattern(r []float64, params int, noiseSD float64) Pattern {
	p := Pattern{N: len(r), ChiP: math.NaN()}
	if len(r) < 3 {
		p.RunsP, p.RunsZ, p.Lag1, p.Ratio = math.NaN(), math.NaN(), math.NaN(), math.NaN()
		return p
	}
	var np, nm float64
	last := 0
	for _, x := range r {
		s := 0
		switch {
		case x > 0:
			s, np = 1, np+1
		case x < 0:
			s, nm = -1, nm+1
		}
		if s != 0 && s != last {
			p.Runs++
			last = s
		}
	}
	n := np + nm
	p.RunsP, p.RunsZ = math.NaN(), math.NaN()
	if np > 0 && nm > 0 && n > 2 {
		p.ExpectedRuns = 1 + 2*np*nm/n
		v := 2 * np * nm * (2*np*nm - n) / (n * n * (n - 1))
		p.RunsZ = (float64(p.Runs) - p.ExpectedRuns) / math.Sqrt(v)
		p.RunsP = distuv.UnitNormal.CDF(p.RunsZ)
	}

	ss, sd, lag := 0.0, 0.0, 0.0
	for i, x := range r {
		ss += x * x
		if i > 0 {
			d := x - r[i-1]
			sd += d * d
			lag += x * r[i-1]
		}
	}
	p.RMS = math.Sqrt(ss / float64(len(r)))
	p.Lag1 = lag / ss
	if noiseSD > 0 {
		p.NoiseSD = noiseSD
		dof := float64(len(r) - params)
		if dof > 0 {
			p.ChiP = 1 - distuv.ChiSquared{K: dof}.CDF(ss/(noiseSD*noiseSD))
		}
	} else {
		p.NoiseSD = math.Sqrt(sd / (2 * float64(len(r)-1)))
	}
	p.Ratio = p.RMS / p.NoiseSD
	p.Systematic = p.RunsP < Alpha || p.ChiP < Alpha
	return p
}

// LocalTaus estimates the effective time constant at the start and at the end of an
// exponential approach: the curve v∞ + A·e^(−(t−tₛ)/τ) is fitted on the first and the
// last third of the time span, with v∞ held at the value of the whole fit full (fitted
// here when full is nil). For a resistive load both equal full.Tau; a motor, whose back
// EMF grows as it spins up, draws more at the start than at the end, so its start τ is
// shorter. The standard errors do not include the uncertainty of v∞.
func LocalTaus(t, v []float64, full *ExpFit) (start, end Value, err error) {
	if err := checkSeries(t, v, 9, "local taus"); err != nil {
		return Value{}, Value{}, err
	}
	if full == nil {
		full, err = ExpApproach(t, v)
		if err != nil {
			return Value{}, Value{}, err
		}
	}
	if !(full.Rate.Value > 0) {
		return Value{}, Value{}, errorf(ErrNotIdentifiable, "local taus: the whole fit has no asymptote")
	}
	span := t[len(t)-1] - t[0]
	lo, hi := t[0]+span/3, t[0]+2*span/3
	var i1, i2 int
	for i1 = 0; i1 < len(t) && t[i1] <= lo; i1++ {
	}
	for i2 = len(t) - 1; i2 > 0 && t[i2] >= hi; i2-- {
	}
	start, err = thirdTau(t[:i1], v[:i1], full)
	if err != nil {
		return Value{}, Value{}, err
	}
	end, err = thirdTau(t[i2+1:], v[i2+1:], full)
	return start, end, err
}

// thirdTau fits v = v∞ + A·exp(−k·(t − t₀)) with v∞ fixed, parameters (A, k).
func thirdTau(t, v []float64, full *ExpFit) (Value, error) {
	if len(t) < 3 {
		return Value{}, inputErrorf("local taus: %d points in a third, need at least 3", len(t))
	}
	vinf, t0 := full.VInf.Value, t[0]
	p := Problem{
		M: len(t),
		Func: func(dst, x []float64) {
			for i := range t {
				dst[i] = vinf + x[0]*math.Exp(-x[1]*(t[i]-t0)) - v[i]
			}
		},
		Jac: func(dst *mat.Dense, x []float64) {
			for i := range t {
				e := math.Exp(-x[1] * (t[i] - t0))
				dst.Set(i, 0, e)
				dst.Set(i, 1, -x[0]*(t[i]-t0)*e)
			}
		},
	}
	res, err := Solve(p, []float64{full.At(t0) - vinf, full.Rate.Value}, nil)
	if err != nil {
		return Value{}, err
	}
	k := res.X[1]
	if !(k > 0) {
		return Value{}, errorf(ErrNotIdentifiable, "local taus: no decay in a third (rate %.3g /s)", k)
	}
	return Value{1 / k, res.SE[1] / (k * k)}, nil
}

// Shape is the verdict on a discharge: is the load a resistor?
type Shape struct {
	Fit        *ExpFit
	Pattern    Pattern
	Start, End Value // local time constants (see LocalTaus)
	// Ratio is End.Tau/Start.Tau with its standard error.
	Ratio Value
	// Resistive is false when the residuals are systematic and the local time constants
	// differ by more than 5 % and by more than three standard errors (common practice,
	// no source): the load is not a resistor, typically a motor.
	Resistive bool
}

// LoadShape fits an exponential approach to a discharge (t, v), tests its residuals and
// compares the local time constants at the start and end; see Shape. noiseSD is the
// per-sample noise level if known, else 0.
func LoadShape(t, v []float64, noiseSD float64) (*Shape, error) {
	f, err := ExpApproach(t, v)
	if err != nil {
		return nil, err
	}
	s := &Shape{Fit: f, Pattern: ResidualPattern(f.Result.Residuals, 3, noiseSD), Resistive: true}
	s.Start, s.End, err = LocalTaus(t, v, f)
	if err != nil {
		return s, err
	}
	q := s.End.Value / s.Start.Value
	rs, re := s.Start.SD/s.Start.Value, s.End.SD/s.End.Value
	s.Ratio = Value{q, q * math.Hypot(rs, re)}
	if s.Pattern.Systematic && math.Abs(q-1) > 0.05 && math.Abs(q-1) > 3*s.Ratio.SD {
		s.Resistive = false
	}
	return s, nil
}
