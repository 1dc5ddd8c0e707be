package report

import (
	"capcycle/analyze/analysis"
	"fmt"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// stallModel is what the settling-voltage plot rests on: the declared cell at its rating,
// the light of the capture as a fraction of that rating, and the drains on the node.
type stallModel struct {
	iscRated, vocRated float64 // the declared cell, A and V
	nvt                float64 // ideality × cells in series × kT/q, V
	gNow               float64 // the capture's light over the rated light
	gDrain, iq         float64 // the drains: conductance (S) and constant current (A)
	onV                float64 // the trigger
	idealityAssumed    bool
}

// idealityAssumed is the cell's ideality factor when the fit gave none: 1.5, midway in
// the usual 1 to 2 of silicon cells (common practice, no source).
const idealityAssumed = 1.5

// stallOf gathers the model from r, or says what is missing.
func stallOf(r *analysis.Result) (stallModel, string) {
	d, f := r.Declared, r.Fit
	var m stallModel
	switch {
	case d == nil || d.IscA <= 0 || d.VocV <= 0:
		return m, "it needs the cell's declared rating (Isc and Voc)"
	case f.Cell.IscA == nil || !(f.Cell.IscA.Value > 0):
		return m, "it needs the cell's short-circuit current at the capture's light"
	case f.Leak.Ohm == nil && f.Leak.QuiescentA == nil:
		return m, "it needs the fitted leakage"
	}
	m.onV = d.OnV
	if m.onV <= 0 && f.Trigger.OnV != nil {
		m.onV = f.Trigger.OnV.Value
	}
	if m.onV <= 0 {
		return m, "it needs the trigger voltage"
	}
	ns := float64(max(1, d.CellSeries))
	tK := 298.15
	if d.CellTempK > 0 {
		tK = d.CellTempK
	}
	n := idealityAssumed
	m.idealityAssumed = true
	if f.Cell.N != nil && f.Cell.N.Value > 0 {
		n, m.idealityAssumed, ns = f.Cell.N.Value, false, 1 // the fit's n already counts the cells
	}
	m.nvt = n * ns * 1.380649e-23 * tK / 1.602176634e-19
	m.iscRated, m.vocRated = d.IscA, d.VocV
	m.gNow = f.Cell.IscA.Value / d.IscA
	if f.Leak.Ohm != nil && f.Leak.Ohm.Value > 0 {
		m.gDrain += 1 / f.Leak.Ohm.Value
	}
	if f.Leak.ProbeOhm != nil && f.Leak.ProbeOhm.Value > 0 {
		m.gDrain += 1 / f.Leak.ProbeOhm.Value
	} else if d.ProbeOhm > 0 {
		m.gDrain += 1 / d.ProbeOhm
	}
	if f.Leak.QuiescentA != nil {
		m.iq = math.Max(0, f.Leak.QuiescentA.Value)
	}
	return m, ""
}

// settle is the voltage at which the cell's current at light g (× the rating) equals the
// drains: I_cell(V) = g Isc − I0 (exp(V/nVt) − 1), I0 = Isc/(exp(Voc/nVt) − 1) from the
// rating, against G V + Iq. Both sides are monotone in V, so bisection finds it.
func (m stallModel) settle(g float64) float64 {
	i0 := m.iscRated / math.Expm1(m.vocRated/m.nvt)
	lo, hi := 0.0, m.vocRated+m.nvt*math.Log(math.Max(g, 1e-9))+1
	if hi <= 0 {
		return 0
	}
	for range 100 {
		v := (lo + hi) / 2
		if g*m.iscRated-i0*math.Expm1(v/m.nvt)-m.gDrain*v-m.iq > 0 {
			lo = v
		} else {
			hi = v
		}
	}
	return (lo + hi) / 2
}

// lightToFire is the light (× the capture's) at which the settling voltage reaches the
// trigger; 0 when even a hundred times the light would not do.
func (m stallModel) lightToFire() float64 {
	lo, hi := 1e-3, 100.0
	if m.settle(hi*m.gNow) < m.onV {
		return 0
	}
	for range 80 {
		x := math.Sqrt(lo * hi)
		if m.settle(x*m.gNow) < m.onV {
			lo = x
		} else {
			hi = x
		}
	}
	return hi
}

// stallFigure plots where the voltage settles against the light, with the trigger line:
// how much light it takes to fire.
func stallFigure(r *analysis.Result) (figure, string) {
	m, missing := stallOf(r)
	if missing != "" {
		return figure{}, "The settling voltage cannot be drawn against the light: " + missing + "."
	}
	var xs, ys []float64
	for j := 0; j <= 100; j++ {
		x := math.Pow(10, -1+3*float64(j)/100) // 0.1 to 100 × the capture's light
		xs, ys = append(xs, x), append(ys, m.settle(x*m.gNow))
	}
	p := newPlot("light, × the capture's", "settling voltage (V)")
	p.X.Scale, p.X.Tick.Marker = plot.LogScale{}, ticks125{}
	p.X.Min, p.X.Max, p.Y.Min = 0.1, 100, 0
	var legend []legendItem
	if l, err := line(xs, ys, colBlue, 1.5, nil); err == nil {
		p.Add(l)
		legend = append(legend, legendItem{"settling voltage (model)", []plot.Thumbnailer{l}})
	}
	if l, err := line([]float64{0.1, 100}, []float64{m.onV, m.onV}, colVermil, 1, dashTrig); err == nil {
		p.Add(l)
		legend = append(legend, legendItem{"trigger " + num(m.onV, "V"), []plot.Thumbnailer{l}})
	}
	if r.EquilibriumV != nil {
		if s, err := scatter([]float64{1}, []float64{r.EquilibriumV.Value}, draw.BoxGlyph{}, colInk, 3); err == nil {
			p.Add(s)
			legend = append(legend, legendItem{"measured settling voltage", []plot.Thumbnailer{s}})
		}
	}
	need := m.lightToFire()
	caption := "Where the voltage would settle, at more or less light than the capture saw, from the declared cell (its rated Isc and Voc) and the fitted drains (leakage, probe, quiescent current)"
	if m.idealityAssumed {
		caption += fmt.Sprintf("; the cell's ideality factor is taken as %.1f per cell (common practice, no source), as the fit gave none", idealityAssumed)
	}
	caption += ". Where the curve crosses the trigger line the circuit starts to fire"
	if need > 0 {
		caption += fmt.Sprintf(": at about %s× the capture's light.", plainSig(need, 2))
		p.Add(vline(need, colMuted))
	} else {
		caption += ": it does not within a hundred times the capture's light."
	}
	alt := "Settling voltage against light, with the trigger voltage"
	svg, err := renderSVG("stall", figW, vg.Points(230), alt, func(dc draw.Canvas) error {
		p.Draw(legendRows(dc, legend))
		return nil
	})
	if err != nil {
		return figure{Err: err.Error()}, ""
	}
	return figure{SVG: svg, Alt: alt, Caption: caption}, ""
}
