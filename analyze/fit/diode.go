package fit

import (
	"math"
	"sort"

	"capcycle/analyze/lambertw"

	"gonum.org/v1/gonum/mat"
)

// Exact SI defining constants (CODATA 2018; the 2019 SI).
const (
	Boltzmann = 1.380649e-23    // J/K
	Charge    = 1.602176634e-19 // C
)

// ThermalVoltage returns k·T/q in volts for the temperature tK in kelvin.
func ThermalVoltage(tK float64) float64 { return Boltzmann * tK / Charge }

// DiodeParams are the five parameters of the single-diode model of a solar cell (or of
// Ns identical cells in series):
//
//	I = Iph − I0·(exp((V + I·Rs)/(N·Vt)) − 1) − (V + I·Rs)/Rsh
//
// with Vt = Ns·k·T/q the string's thermal voltage. I > 0 is current delivered by the cell.
type DiodeParams struct {
	Iph float64 `json:"iph_a"`   // photocurrent, amperes
	I0  float64 `json:"i0_a"`    // diode saturation current, amperes
	N   float64 `json:"n"`       // diode ideality factor
	Rs  float64 `json:"rs_ohm"`  // series resistance, ohms
	Rsh float64 `json:"rsh_ohm"` // shunt resistance, ohms
}

// Current returns the terminal current at voltage v, solved explicitly with the Lambert
// W function (Jain and Kapoor 2004, "Exact analytical solutions of the parameters of
// real solar cells using Lambert W-function", Solar Energy Materials and Solar Cells 81,
// 269-277, eq. 2; journal details from memory):
//
//	I = (Rsh·(Iph + I0) − V)/(Rs + Rsh) − (a/Rs)·W(θ),
//	θ = Rs·Rsh·I0/(a·(Rs + Rsh)) · exp(Rsh·(Rs·(Iph + I0) + V)/(a·(Rs + Rsh))),
//
// with a = N·vt. W is evaluated from ln θ, so θ never overflows. Rs = 0 uses the
// closed form directly.
func (p DiodeParams) Current(v, vt float64) float64 {
	a := p.N * vt
	if p.Rs == 0 {
		return p.Iph - p.I0*math.Expm1(v/a) - v/p.Rsh
	}
	g := p.Rs + p.Rsh
	l := math.Log(p.Rs*p.Rsh*p.I0/(a*g)) + p.Rsh*(p.Rs*(p.Iph+p.I0)+v)/(a*g)
	return (p.Rsh*(p.Iph+p.I0)-v)/g - a/p.Rs*lambertw.W0Exp(l)
}

// Implicit returns the residual of the model equation at a measured point (v, i):
// Iph − I0·(exp((v + i·Rs)/a) − 1) − (v + i·Rs)/Rsh − i, zero on the curve.
func (p DiodeParams) Implicit(v, i, vt float64) float64 {
	u := v + i*p.Rs
	return p.Iph - p.I0*math.Expm1(u/(p.N*vt)) - u/p.Rsh - i
}

// Isc returns the short-circuit current I(0).
func (p DiodeParams) Isc(vt float64) float64 { return p.Current(0, vt) }

// Voc returns the open-circuit voltage, where I = 0, in closed form:
// Voc = Rsh·(Iph + I0) − a·W(I0·Rsh/a · exp(Rsh·(Iph + I0)/a)).
func (p DiodeParams) Voc(vt float64) float64 {
	a := p.N * vt
	s := p.Iph + p.I0
	return p.Rsh*s - a*lambertw.W0Exp(math.Log(p.I0*p.Rsh/a)+p.Rsh*s/a)
}

// MaxPower returns the maximum power point (Vmp, Imp, Pmp = Vmp·Imp) on [0, Voc],
// located by golden-section search on V·I(V) to a relative 1e-12 in V.
func (p DiodeParams) MaxPower(vt float64) (vmp, imp, pmp float64) {
	lo, hi := 0.0, p.Voc(vt)
	if !(hi > 0) {
		return math.NaN(), math.NaN(), math.NaN()
	}
	pw := func(v float64) float64 { return v * p.Current(v, vt) }
	const gr = 0.6180339887498949 // (√5 − 1)/2
	x1, x2 := hi-gr*(hi-lo), lo+gr*(hi-lo)
	f1, f2 := pw(x1), pw(x2)
	for hi-lo > 1e-12*hi {
		if f1 < f2 {
			lo, x1, f1 = x1, x2, f2
			x2 = lo + gr*(hi-lo)
			f2 = pw(x2)
		} else {
			hi, x2, f2 = x2, x1, f1
			x1 = hi - gr*(hi-lo)
			f1 = pw(x1)
		}
	}
	vmp = (lo + hi) / 2
	imp = p.Current(vmp, vt)
	return vmp, imp, vmp * imp
}

// DiodeSettings adjust SingleDiodeWith. The zero value and nil mean the defaults.
type DiodeSettings struct {
	// Implicit fits the residual of the model equation at the measured points (see
	// DiodeParams.Implicit), as much of the parameter-extraction literature does,
	// instead of the current error I(V_m) − I_m. Default false: current error.
	Implicit bool
	// Boltzmann and Charge override the constants in Vt = k·T/q, for reproducing
	// results computed with older values. Default: the exact CODATA 2018 values.
	Boltzmann, Charge float64
	// Fit are the solver settings. Default nil: the solver's defaults.
	Fit *Settings
}

// DiodeFit is a fitted single-diode model.
type DiodeFit struct {
	Params DiodeParams
	// SD holds the standard errors of Params. I0, Rs and Rsh are fitted as logarithms;
	// their errors are I0·SE(ln I0), Rs·SE(ln Rs) and Rsh·SE(ln Rsh).
	SD DiodeParams
	// Vt is the string thermal voltage Ns·k·T/q used, volts.
	Vt float64
	// RMSE is √(mean residual²) in amperes, of the residual that was fitted (current
	// error, or the implicit residual when DiodeSettings.Implicit).
	RMSE     float64
	Implicit bool
	// The operating points of the fitted curve.
	Voc, Isc, Vmp, Imp, Pmp float64
	// Result is the solver result in the parameters (Iph, ln I0, N, ln Rs, ln Rsh).
	Result *Result
}

// Current returns the fitted curve's current at v.
func (f *DiodeFit) Current(v float64) float64 { return f.Params.Current(v, f.Vt) }

// SingleDiode fits the single-diode model to the I-V points (v, i) of ns cells in series
// at temperature tK (kelvin), minimising the current error I(V_m) − I_m with the
// explicit Lambert W current (see DiodeParams.Current) and analytic derivatives from
// implicit differentiation of the model equation. I0, Rs and Rsh are fitted as
// logarithms, which keeps them positive and makes their steps relative.
//
// A nil start lets SingleDiode choose its own: Isc and Voc interpolated from the data,
// Rsh from the slope near short circuit, Rs from the slope near open circuit, I0 from
// Voc, each tried with ideality factors 1, 1.5 and 2; the best converged fit wins. At
// least 6 points are needed, with currents on both sides of the knee.
func SingleDiode(v, i []float64, ns int, tK float64, start *DiodeParams) (*DiodeFit, error) {
	return SingleDiodeWith(v, i, ns, tK, start, nil)
}

// SingleDiodeWith is SingleDiode with settings; a nil s means the defaults.
func SingleDiodeWith(v, i []float64, ns int, tK float64, start *DiodeParams, s *DiodeSettings) (*DiodeFit, error) {
	var set DiodeSettings
	if s != nil {
		set = *s
	}
	if set.Boltzmann <= 0 {
		set.Boltzmann = Boltzmann
	}
	if set.Charge <= 0 {
		set.Charge = Charge
	}
	switch {
	case len(v) != len(i):
		return nil, inputErrorf("single diode: %d voltages, %d currents", len(v), len(i))
	case len(v) < 6:
		return nil, inputErrorf("single diode: %d points, need at least 6", len(v))
	case ns < 1:
		return nil, inputErrorf("single diode: %d cells in series", ns)
	case !(tK > 0) || math.IsInf(tK, 0):
		return nil, inputErrorf("single diode: temperature %g K", tK)
	case !allFinite(v) || !allFinite(i):
		return nil, inputErrorf("single diode: non-finite input")
	}
	vt := float64(ns) * set.Boltzmann * tK / set.Charge
	p := diodeProblem(v, i, vt, set.Implicit)

	var starts []DiodeParams
	if start != nil {
		starts = []DiodeParams{*start}
	} else {
		for _, n := range []float64{1.5, 1, 2} {
			st, err := diodeStart(v, i, vt, n)
			if err != nil {
				return nil, err
			}
			starts = append(starts, st)
		}
	}
	var best *Result
	var bestErr error
	for _, st := range starts {
		if !(st.I0 > 0 && st.Rsh > 0 && st.N > 0 && st.Rs > 0) {
			return nil, inputErrorf("single diode: start %+v needs I0, Rs, Rsh and N > 0", st)
		}
		x0 := []float64{st.Iph, math.Log(st.I0), st.N, math.Log(st.Rs), math.Log(st.Rsh)}
		res, err := Solve(p, x0, set.Fit)
		if res == nil {
			bestErr = err
			continue
		}
		if best == nil || (err == nil && bestErr != nil) || ((err == nil) == (bestErr == nil) && res.RSS < best.RSS) {
			best, bestErr = res, err
		}
	}
	if best == nil {
		return nil, bestErr
	}
	x, se := best.X, best.SE
	f := &DiodeFit{
		Params:   diodeParams(x),
		Vt:       vt,
		RMSE:     math.Sqrt(best.RSS / float64(len(v))),
		Implicit: set.Implicit,
		Result:   best,
	}
	f.SD = DiodeParams{Iph: se[0], I0: f.Params.I0 * se[1], N: se[2], Rs: f.Params.Rs * se[3], Rsh: f.Params.Rsh * se[4]}
	f.Voc = f.Params.Voc(vt)
	f.Isc = f.Params.Isc(vt)
	f.Vmp, f.Imp, f.Pmp = f.Params.MaxPower(vt)
	return f, bestErr
}

func diodeParams(x []float64) DiodeParams {
	return DiodeParams{Iph: x[0], I0: math.Exp(x[1]), N: x[2], Rs: math.Exp(x[3]), Rsh: math.Exp(x[4])}
}

func diodeProblem(v, i []float64, vt float64, implicit bool) Problem {
	// The model currents at the last point Func saw, reused by Jac: the solver asks for
	// the Jacobian at the point it has just accepted, so W is evaluated once, not twice.
	cur := make([]float64, len(v))
	var curX [5]float64
	curOK := false
	return Problem{
		M: len(v),
		Func: func(dst, x []float64) {
			p := diodeParams(x)
			for k := range v {
				if implicit {
					dst[k] = p.Implicit(v[k], i[k], vt)
				} else {
					cur[k] = p.Current(v[k], vt)
					dst[k] = cur[k] - i[k]
				}
			}
			copy(curX[:], x)
			curOK = !implicit
		},
		Jac: func(dst *mat.Dense, x []float64) {
			p := diodeParams(x)
			a := p.N * vt
			cached := curOK && [5]float64(x) == curX
			for k := range v {
				ik := i[k]
				switch {
				case implicit:
				case cached:
					ik = cur[k]
				default:
					ik = p.Current(v[k], vt)
				}
				u := v[k] + ik*p.Rs
				e := math.Exp(u / a)
				// Partial derivatives of F(I, V) = Iph − I0(e − 1) − u/Rsh − I in the
				// fitted parameters (Iph, ln I0, N, ln Rs, ln Rsh).
				row := dst.RawRowView(k)
				row[0] = 1
				row[1] = -p.I0 * math.Expm1(u/a)
				row[2] = p.I0 * e * u / (a * p.N)
				row[3] = (-p.I0*e*ik/a - ik/p.Rsh) * p.Rs
				row[4] = u / p.Rsh
				if !implicit {
					// dI/dp = −F_p/F_I.
					fi := -p.I0*e*p.Rs/a - p.Rs/p.Rsh - 1
					for c := range row {
						row[c] /= -fi
					}
				}
			}
		},
	}
}

// diodeStart derives a starting point from the shape of the curve.
func diodeStart(v, i []float64, vt, n float64) (DiodeParams, error) {
	idx := make([]int, len(v))
	for k := range idx {
		idx[k] = k
	}
	sort.Slice(idx, func(a, b int) bool { return v[idx[a]] < v[idx[b]] })
	vs := make([]float64, len(v))
	is := make([]float64, len(v))
	for k, j := range idx {
		vs[k], is[k] = v[j], i[j]
	}
	m := len(vs)
	isc := interpAt(vs, is, 0)
	// Voc: the first sign change of I, else extrapolate the last two points.
	voc := math.NaN()
	for k := 1; k < m; k++ {
		if is[k-1] > 0 && is[k] <= 0 {
			voc = vs[k-1] + (vs[k]-vs[k-1])*is[k-1]/(is[k-1]-is[k])
			break
		}
	}
	if math.IsNaN(voc) && is[m-1] != is[m-2] {
		voc = vs[m-1] - is[m-1]*(vs[m-1]-vs[m-2])/(is[m-1]-is[m-2])
	}
	if !(isc > 0) || !(voc > 0) {
		return DiodeParams{}, inputErrorf("single diode: cannot find Isc (%.3g A) and Voc (%.3g V) in the data", isc, voc)
	}
	// Rsh from the points below half of Voc.
	var lv, li []float64
	for k := range vs {
		if vs[k] <= voc/2 {
			lv, li = append(lv, vs[k]), append(li, is[k])
		}
	}
	rsh := 100 * voc / isc
	if l, err := Line(lv, li, nil); err == nil && l.Slope.Value < 0 {
		rsh = math.Min(-1/l.Slope.Value, 1e4*voc/isc)
	}
	// Rs from the slope −dV/dI at Voc ≈ Rs + a/Isc.
	a := n * vt
	rs := 1e-3 * voc / isc
	for k := 1; k < m; k++ {
		if vs[k] >= voc || k == m-1 {
			if di := is[k] - is[k-1]; di < 0 {
				rs = math.Max(rs, -(vs[k]-vs[k-1])/di-a/isc)
			}
			break
		}
	}
	i0 := (isc - voc/rsh) * math.Exp(-voc/a)
	if !(i0 > 0) {
		i0 = isc * math.Exp(-voc/a)
	}
	return DiodeParams{Iph: isc * (1 + rs/rsh), I0: i0, N: n, Rs: rs, Rsh: rsh}, nil
}

// interpAt returns y at x = x0 by linear interpolation (or extrapolation from the two
// nearest ends) over x sorted ascending.
func interpAt(x, y []float64, x0 float64) float64 {
	k := sort.SearchFloat64s(x, x0)
	switch {
	case k == 0:
		k = 1
	case k >= len(x):
		k = len(x) - 1
	}
	if x[k] == x[k-1] {
		return (y[k] + y[k-1]) / 2
	}
	return y[k-1] + (y[k]-y[k-1])*(x0-x[k-1])/(x[k]-x[k-1])
}
