package analyze

import (
	"fmt"
	"math"
	"sort"

	"capcycle/analyze/stats"
)

// ivLine is a straight line I = isc + slope V through traced I-V points.
type ivLine struct {
	ok           bool
	isc, iscSD   float64
	slope        float64
	vLo, vHi     float64 // the voltages it rests on
	iHi          float64 // the traced current at the highest traced voltage
	meanI        float64 // the mean traced current of all the points
	changing     bool    // the current rises with the voltage: the light changed
	iLo          float64 // with changing: the current at vLo
	lowerOnly    bool    // the upper third bent away and was left out
	points, used int
}

// lineIsc fits a robust straight line to the traced points (volts, current) and takes its
// value at 0 V as Isc, with the SE of the intercept. Well below Voc a cell's curve is
// nearly straight (the shunt's slope); when the line through the lower two thirds of the
// points (by voltage) disagrees with the one through all of them by more than 3 combined
// SEs, the curve bends towards Voc in the upper third, and the lower line is used.
func lineIsc(v, i []float64) ivLine {
	n := len(v)
	out := ivLine{points: n}
	if n < 3 {
		return out
	}
	idx := make([]int, n)
	for k := range idx {
		idx[k] = k
	}
	sort.Slice(idx, func(a, b int) bool { return v[idx[a]] < v[idx[b]] })
	sub := func(m int) ([]float64, []float64) {
		xs, ys := make([]float64, m), make([]float64, m)
		for k := 0; k < m; k++ {
			xs[k], ys[k] = v[idx[k]], i[idx[k]]
		}
		return xs, ys
	}
	xs, ys := sub(n)
	if k, lo, hi := risingCurrent(ys); k >= 0 {
		out.changing, out.vLo, out.vHi, out.iLo, out.iHi = true, xs[1], xs[k], lo, hi
		return out
	}
	l := fitLine(xs, ys)
	if !l.ok {
		return out
	}
	m := n
	if lo := (2*n + 2) / 3; lo >= 4 && lo < n {
		xl, yl := sub(lo)
		if l2 := fitLine(xl, yl); l2.ok && math.Abs(l2.a-l.a) > 3*math.Hypot(l.aSD, l2.aSD) {
			l, m, out.lowerOnly = l2, lo, true
		}
	}
	if math.IsNaN(l.a) || math.IsNaN(l.aSD) {
		return out
	}
	out.ok, out.isc, out.iscSD, out.slope, out.used = true, l.a, l.aSD, l.b, m
	out.vLo, out.vHi = xs[0], xs[m-1]
	out.iHi = i[idx[n-1]] // the traced current at the highest voltage
	out.meanI = stats.Mean(i)
	return out
}

// risingCurrent looks, in currents ordered by voltage, for a 3-point running mean more
// than 10 % above the first one (the lowest voltages): a cell under steady light gives
// less current at a higher voltage, never more, so such a rise was traced while the light
// grew (a slow charge through a morning). It returns the centre of the highest running
// mean and the two means, or k = -1 when the currents do not rise.
func risingCurrent(i []float64) (k int, first, top float64) {
	if len(i) < 6 {
		return -1, 0, 0
	}
	run := func(c int) float64 { return (i[c-1] + i[c] + i[c+1]) / 3 }
	first, top, k = run(1), run(1), 1
	for c := 2; c+1 < len(i); c++ {
		if m := run(c); m > top {
			top, k = m, c
		}
	}
	if !(first > 0) || top <= 1.1*first {
		return -1, 0, 0
	}
	return k, first, top
}

// note says what the line determines and what it does not.
func (l ivLine) note(amps bool) string {
	what := "Isc"
	if !amps {
		what = "Isc/C"
	}
	if l.changing {
		return fmt.Sprintf("the traced current rises with the voltage (%.3g to %.3g from %.3g to %.3g V): the light grew while the rise was traced, so its points are no I-V curve; Isc, Voc and the diode parameters are not determined, and each cycle's light level is its mean charging current", l.iLo, l.iHi, l.vLo, l.vHi)
	}
	if !l.ok {
		return "the traced I-V points do not determine the single-diode model, nor a straight line to 0 V: Isc and Voc are not determined"
	}
	s := fmt.Sprintf("the traced I-V points (%.3g to %.3g V) do not determine the single-diode model: %s is the current of a straight line through %d of them extrapolated to 0 V", l.vLo, l.vHi, what, l.used)
	if l.lowerOnly {
		s += " (the lower two thirds; the curve bends above)"
	}
	s += "; Voc, the maximum power point and the diode parameters (I0, n, Rs, Rsh) are not determined"
	if l.isc > 0 && l.iHi > 0.8*l.isc {
		s += ": the traced voltages never go near open circuit (the current at the top of the trace is still within 20 % of Isc)"
	}
	return s
}

// ivEnds extends a straight line through the first three traced points (in order of
// voltage) to V = 0 for Isc, finds Voc from the exponential rise of the diode current
// (a straight line in ln(Isc - I)), and the traced point of most power.
func ivEnds(v, i []float64) (isc, voc, vmp, pmp float64) {
	n := len(v)
	isc, voc = math.NaN(), math.NaN()
	if n < 3 {
		return
	}
	line := func(a, b int) (slope, at0 float64) {
		x, y := v[a:b], i[a:b]
		mx, my := stats.Mean(x), stats.Mean(y)
		var sxy, sxx float64
		for k := range x {
			sxy += (x[k] - mx) * (y[k] - my)
			sxx += (x[k] - mx) * (x[k] - mx)
		}
		if sxx == 0 {
			return math.NaN(), math.NaN()
		}
		slope = sxy / sxx
		return slope, my - slope*mx
	}
	_, isc = line(0, 3)
	// Near-ideal diode: Isc - I = I0 exp(V/a), so ln(Isc - I) is a straight line in V;
	// Voc is where it reaches ln(Isc). Points where the diode takes over 5 % of Isc.
	var xs, ys []float64
	for k := range v {
		if d := isc - i[k]; d > 0.05*isc {
			xs = append(xs, v[k])
			ys = append(ys, math.Log(d))
		}
	}
	if len(xs) >= 3 {
		mx, my := stats.Mean(xs), stats.Mean(ys)
		var sxy, sxx float64
		for k := range xs {
			sxy += (xs[k] - mx) * (ys[k] - my)
			sxx += (xs[k] - mx) * (xs[k] - mx)
		}
		if sxx > 0 && sxy > 0 {
			slope := sxy / sxx
			voc = mx + (math.Log(isc)-my)/slope
		}
	}
	for k := range v {
		if p := v[k] * i[k]; p > pmp {
			vmp, pmp = v[k], p
		}
	}
	return
}
