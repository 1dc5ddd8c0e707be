package report

import (
	"capcycle/analyze/analysis"
	"math"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// cellFigure draws the cell's traced I-V curve and the power curve P = V·I beside it,
// with the maximum-power point, the open-circuit voltage and the short-circuit current.
func cellFigure(r *analysis.Result, o *Options) (figure, string) {
	c := r.Fit.Cell
	if len(c.IV) < 2 {
		return figure{}, "The analysis carries no traced I-V curve for the cell (it needs the capacitance and a charging stretch that starts low)."
	}
	for _, n := range r.Notes {
		if strings.Contains(n, "no I-V curve") {
			return figure{}, "No I-V plot: as the note above says, the traced points are no I-V curve (the light changed while they were traced)."
		}
	}
	var v, i, p []float64
	for _, pt := range c.IV {
		if finite(pt[0]) && finite(pt[1]) {
			v = append(v, pt[0])
			i = append(i, pt[1])
			p = append(p, pt[0]*pt[1])
		}
	}
	v, i = MinMax(v, i, o.maxPoints())
	p = p[:0]
	for k := range v {
		p = append(p, v[k]*i[k])
	}
	_, imax := rangeOf(i)
	if c.IscA != nil {
		imax = math.Max(imax, c.IscA.Value)
	}
	_, pmax := rangeOf(p)
	if c.MppW != nil {
		pmax = math.Max(pmax, *c.MppW)
	}
	idiv, iu := siAxis(imax, "A")
	pdiv, pu := siAxis(pmax, "W")
	_, vmax := rangeOf(v)
	if c.VocV != nil {
		vmax = math.Max(vmax, c.VocV.Value)
	}

	piv := newPlot("cell voltage (V)", "cell current ("+iu+")")
	ppv := newPlot("cell voltage (V)", "cell power ("+pu+")")
	for _, q := range []*plot.Plot{piv, ppv} {
		q.X.Min, q.X.Max, q.Y.Min = 0, vmax*1.05, 0
	}
	piv.Y.Max = imax / idiv * 1.1
	ppv.Y.Max = pmax / pdiv * 1.15
	var legend []legendItem
	if l, err := line(v, scaled(i, idiv), colBlue, 1.3, nil); err == nil {
		piv.Add(l)
		legend = append(legend, legendItem{"traced from the charging curve (I = C dV/dt)", []plot.Thumbnailer{l}})
	}
	if l, err := line(v, scaled(p, pdiv), colGreen, 1.3, dashModel); err == nil {
		ppv.Add(l)
		legend = append(legend, legendItem{"power P = V·I", []plot.Thumbnailer{l}})
	}
	fitted := addDiodeCurve(piv, c, r.Declared, vmax, idiv)
	if fitted != nil {
		legend = append(legend, legendItem{"fitted single-diode model", []plot.Thumbnailer{fitted}})
	}
	legend = append(legend, cellMarks(piv, ppv, c, idiv, pdiv)...)
	caption := "Top: the cell's current against its voltage, traced while it charged the capacitor"
	if fitted != nil {
		caption += ", with the fitted single-diode model over it"
	}
	caption += ". Below: the power it delivers at each voltage"
	if c.MppV != nil && c.MppW != nil {
		caption += "; the square marks the maximum-power point"
	} else {
		caption += "; the analysis found no maximum-power point, so none is marked"
	}
	caption += "."
	alt := "Cell current and power against voltage"
	svg, err := renderSVG("cell", figW, vg.Points(350), alt, func(dc draw.Canvas) error {
		side(legendRows(dc, legend), []*plot.Plot{piv, ppv}, vg.Points(18))
		return nil
	})
	if err != nil {
		return figure{Err: err.Error()}, ""
	}
	return figure{SVG: svg, Alt: alt, Caption: caption}, ""
}

// addDiodeCurve draws the fitted single-diode model, I = Isc − I0 (exp((V + I Rs)/(n Vt))
// − 1) − (V + I Rs)/Rsh, over the traced points, when the fit gave Isc, I0 and n (Rs 0
// and Rsh infinite when not given); n is the ideality factor times the cells in series
// and Vt = kT/q at the declared cell temperature (298.15 K by default; k and q exact in
// the 2019 SI, CODATA 2018). It returns the line, or nil when the fit gave too little.
func addDiodeCurve(p *plot.Plot, c analysis.CellFit, d *analysis.Declared, vmax, idiv float64) *plotter.Line {
	if c.IscA == nil || c.I0A == nil || c.N == nil || !(c.I0A.Value > 0) || !(c.N.Value > 0) {
		return nil
	}
	tK := 298.15
	if d != nil && d.CellTempK > 0 {
		tK = d.CellTempK
	}
	const k, q = 1.380649e-23, 1.602176634e-19
	nvt := c.N.Value * k * tK / q
	rs, gsh := 0.0, 0.0
	if c.RsOhm != nil && c.RsOhm.Value > 0 {
		rs = c.RsOhm.Value
	}
	if c.RshOhm != nil && c.RshOhm.Value > 0 {
		gsh = 1 / c.RshOhm.Value
	}
	isc, i0 := c.IscA.Value, c.I0A.Value
	var xs, ys []float64
	for j := 0; j <= 120; j++ {
		v := vmax * 1.05 * float64(j) / 120
		// f(I) falls with I: bisect between a current far below and Isc itself.
		lo, hi := -10*isc-1e-3, isc
		for range 100 {
			m := (lo + hi) / 2
			vd := v + m*rs
			if isc-i0*math.Expm1(vd/nvt)-vd*gsh-m > 0 {
				lo = m
			} else {
				hi = m
			}
		}
		if i := (lo + hi) / 2; i >= 0 {
			xs, ys = append(xs, v), append(ys, i/idiv)
		}
	}
	l, err := line(xs, ys, colInk, 1.1, dashModel)
	if err != nil || len(xs) < 2 {
		return nil
	}
	p.Add(l)
	return l
}

// leakFigure draws the points the leakage fit used and the fitted curve over them.
func leakFigure(r *analysis.Result, o *Options) (figure, string) {
	if r.LeakTrace == nil || len(r.LeakTrace.TS) < 2 {
		return figure{}, "The analysis carries no dark-decay or plateau stretch, so the leakage fit cannot be drawn."
	}
	x, y := window(*r.LeakTrace, nil)
	x, y = MinMax(x, y, o.maxPoints())
	t0 := x[0]
	var mx, my []float64
	if r.LeakModel != nil {
		mx, my = window(*r.LeakModel, nil)
		mx, my = MinMax(mx, my, o.maxPoints())
		if len(mx) > 0 {
			t0 = math.Min(t0, mx[0])
		}
	}
	shift := func(v []float64) []float64 {
		out := make([]float64, len(v))
		for i := range v {
			out[i] = v[i] - t0
		}
		return out
	}
	_, thi := rangeOf(shift(x), shift(mx))
	div, tu := timeAxis(thi)
	p := newPlot("time from the start of the stretch ("+tu+")", "capacitor voltage (V)")
	var legend []legendItem
	if s, err := scatter(scaled(shift(x), div), y, draw.CircleGlyph{}, colBlue, 1.1); err == nil {
		p.Add(s)
		legend = append(legend, legendItem{"measured", []plot.Thumbnailer{s}})
	}
	if len(mx) > 1 {
		if l, err := line(scaled(shift(mx), div), my, colInk, 1.6, dashModel); err == nil {
			p.Add(l)
			legend = append(legend, legendItem{"fitted leakage model", []plot.Thumbnailer{l}})
		}
	}
	alt := "Voltage during the leakage stretch with the fitted curve"
	svg, err := renderSVG("leak", figW, vg.Points(190), alt, func(dc draw.Canvas) error {
		p.Draw(legendRows(dc, legend))
		return nil
	})
	if err != nil {
		return figure{Err: err.Error()}, ""
	}
	what := "dark decay"
	if r.Fit.Leak.Method == "plateau" {
		what = "approach to the plateau"
	}
	return figure{SVG: svg, Alt: alt,
		Caption: "The " + what + " the leakage fit used (dots) and the fitted curve (dashed)."}, ""
}

func addLabels(p *plot.Plot, x, y []float64, labels []string, off vg.Point) {
	l, err := plotter.NewLabels(plotter.XYLabels{XYs: xys(x, y), Labels: labels})
	if err != nil {
		return
	}
	for i := range l.TextStyle {
		l.TextStyle[i] = textStyle(fontTick, colInk, draw.XLeft, draw.YBottom)
	}
	l.Offset = off
	p.Add(l)
}

// cellMarks marks Voc and Isc on the I-V plot and the maximum-power point on both.
func cellMarks(piv, ppv *plot.Plot, c analysis.CellFit, idiv, pdiv float64) []legendItem {
	var legend []legendItem
	var lv, li []float64
	var ll []string
	if c.VocV != nil {
		lv, li, ll = append(lv, c.VocV.Value), append(li, 0), append(ll, "Voc")
	}
	if c.IscA != nil {
		lv, li, ll = append(lv, 0), append(li, c.IscA.Value), append(ll, "Isc")
	}
	if len(lv) > 0 {
		if s, err := scatter(lv, scaled(li, idiv), draw.PyramidGlyph{}, colInk, 3); err == nil {
			piv.Add(s)
			legend = append(legend, legendItem{"open-circuit voltage, short-circuit current", []plot.Thumbnailer{s}})
		}
		addLabels(piv, lv, scaled(li, idiv), ll, vg.Point{X: 5, Y: 5})
	}
	if c.MppV != nil && c.MppW != nil {
		mv, mw := *c.MppV, *c.MppW
		if s, err := scatter([]float64{mv}, []float64{mw / pdiv}, draw.BoxGlyph{}, colVermil, 3.2); err == nil {
			ppv.Add(s)
			legend = append(legend, legendItem{"maximum-power point", []plot.Thumbnailer{s}})
		}
		addLabels(ppv, []float64{mv}, []float64{mw / pdiv}, []string{num(mw, "W") + " at " + num(mv, "V")}, vg.Point{X: -10, Y: 7})
		if mv > 0 {
			if s, err := scatter([]float64{mv}, []float64{mw / mv / idiv}, draw.BoxGlyph{}, colVermil, 3.2); err == nil {
				piv.Add(s)
			}
		}
	}
	return legend
}
