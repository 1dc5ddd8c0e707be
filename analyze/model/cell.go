package model

import (
	"math"

	"capcycle/analyze/lambertw"
)

// Cell is a solar cell or a string of identical cells in series, in the single-diode model
//
//	I = Iph - I0 (exp((V + I Rs)/(n Ns Vt)) - 1) - (V + I Rs)/Rsh,   Vt = k T / q,
//
// with I > 0 the current the cell delivers (generator convention). Rs and Rsh are those of
// the whole string. The photocurrent scales linearly with irradiance: Iph(G) = IphA G/RefWm2.
type Cell struct {
	IphA   float64 // photocurrent at the reference irradiance, amperes
	I0A    float64 // diode saturation current, amperes (0: no diode)
	N      float64 // diode ideality factor (0 means 1)
	RsOhm  float64 // series resistance, ohms (0: none)
	RshOhm float64 // shunt resistance, ohms (0: no shunt path, i.e. infinite)
	Cells  int     // cells in series (0 means 1)
	TempK  float64 // cell temperature, kelvin (0 means DefaultTempK, 25 °C)
	RefWm2 float64 // irradiance at which IphA holds, W/m² (0 means RefIrradianceWm2)
}

// cellEval holds the constants of Current for one Cell, so that the hot path does no
// division or logarithm that does not depend on V or G.
type cellEval struct {
	iphPerG float64 // Iph per W/m²
	i0      float64
	a       float64 // modified ideality n Ns Vt, volts
	rs, rsh float64 // rsh = +Inf for no shunt
	kind    int     // 0: Rs = 0 (direct), 1: Rs > 0 with shunt, 2: Rs > 0 without shunt
	aOverRs float64
	lnPre   float64 // ln of the constant factor of the Lambert W argument
	kV      float64 // d(ln θ)/dV
	rsum    float64 // Rs + Rsh
}

func (c *Cell) eval() cellEval {
	n := c.N
	if n == 0 {
		n = 1
	}
	ns := c.Cells
	if ns == 0 {
		ns = 1
	}
	tk := c.TempK
	if tk == 0 {
		tk = DefaultTempK
	}
	ref := c.RefWm2
	if ref == 0 {
		ref = RefIrradianceWm2
	}
	e := cellEval{
		iphPerG: c.IphA / ref,
		i0:      c.I0A,
		a:       n * float64(ns) * ThermalVoltage(tk),
		rs:      c.RsOhm,
		rsh:     c.RshOhm,
	}
	if e.rsh == 0 {
		e.rsh = math.Inf(1)
	}
	switch {
	case e.rs == 0:
		e.kind = 0
	case math.IsInf(e.rsh, 1):
		e.kind = 2
		e.aOverRs = e.a / e.rs
		e.lnPre = math.Log(e.rs * e.i0 / e.a)
		e.kV = 1 / e.a
	default:
		e.kind = 1
		e.aOverRs = e.a / e.rs
		e.rsum = e.rs + e.rsh
		e.lnPre = math.Log(e.rs * e.rsh * e.i0 / (e.a * e.rsum))
		e.kV = e.rsh / (e.a * e.rsum)
	}
	return e
}

// current returns the cell current at terminal voltage v and irradiance g.
func (e *cellEval) current(v, g float64) float64 {
	iph := e.iphPerG * g
	switch e.kind {
	case 0:
		return iph - e.i0*math.Expm1(v/e.a) - v/e.rsh
	case 2:
		// Rsh -> Inf limit of Jain and Kapoor (2004), eq. (4).
		l := e.lnPre + e.kV*(e.rs*(iph+e.i0)+v)
		return iph + e.i0 - e.aOverRs*lambertw.W0Exp(l)
	}
	// Jain and Kapoor (2004), Solar Energy Materials & Solar Cells 81, 269-277, eq. (4):
	// I = (Rsh (Iph + I0) - V)/(Rs + Rsh) - (a/Rs) W(θ),
	// θ = Rs Rsh I0 / (a (Rs + Rsh)) exp(Rsh (Rs (Iph + I0) + V) / (a (Rs + Rsh))).
	// W is taken from ln θ, so a large exponent cannot overflow.
	l := e.lnPre + e.kV*(e.rs*(iph+e.i0)+v)
	return (e.rsh*(iph+e.i0)-v)/e.rsum - e.aOverRs*lambertw.W0Exp(l)
}

// Current returns the current the cell delivers at terminal voltage v (volts) and
// irradiance g (W/m²), solved explicitly with the Lambert W function (Jain and Kapoor,
// 2004). It is negative beyond open circuit and in the dark at v > 0 (the cell then draws
// current through its diode and shunt).
func (c *Cell) Current(v, g float64) float64 {
	e := c.eval()
	return e.current(v, g)
}

// OpenCircuitV returns the voltage at which Current(v, g) = 0 (found by bisection on the
// explicit current), or 0 when g <= 0.
func (c *Cell) OpenCircuitV(g float64) float64 {
	e := c.eval()
	if e.iphPerG*g <= 0 {
		return 0
	}
	lo, hi := 0.0, 1.0
	for e.current(hi, g) > 0 && hi < 1e4 {
		hi *= 2
	}
	for range 200 {
		mid := 0.5 * (lo + hi)
		if e.current(mid, g) > 0 {
			lo = mid
		} else {
			hi = mid
		}
		if hi-lo <= 1e-15*hi {
			break
		}
	}
	return 0.5 * (lo + hi)
}

// ImplicitResidual returns f(V, I) = Iph - I0 (exp((V+I Rs)/(n Ns Vt)) - 1) - (V + I Rs)/Rsh - I
// at the reference irradiance scaled to g: the residual of the single-diode equation at a
// measured point, which is how the cell-parameter literature usually defines its RMSE.
func (c *Cell) ImplicitResidual(v, i, g float64) float64 {
	e := c.eval()
	vd := v + i*e.rs
	return e.iphPerG*g - e.i0*math.Expm1(vd/e.a) - vd/e.rsh - i
}
