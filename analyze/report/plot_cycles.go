package report

import (
	"capcycle/analyze/analysis"
	"fmt"
	"image/color"
	"math"
	"slices"
	"sort"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// traceSet is a group of traces drawn in one style, for one capture.
type traceSet struct {
	name   string // "" for a single capture, else the capture's label
	traces []analysis.Trace
	model  *analysis.Trace
	col    color.Color
	dash   []vg.Length
}

// cyclesFigure overlays the measured cycles, aligned at the fire (t = 0), with the fitted
// model's cycle drawn over them; beside it, a zoom on the discharge pulse.
func cyclesFigure(id string, sets []traceSet, pulseS float64, o *Options) (figure, string) {
	nTraces, dropped := thinSets(sets)
	if nTraces == 0 {
		return figure{}, "The analysis carries no cycle traces, so the cycles cannot be overlaid."
	}
	var all [][]float64
	for _, s := range sets {
		for _, t := range s.traces {
			all = append(all, t.TS)
		}
		if s.model != nil {
			all = append(all, s.model.TS)
		}
	}
	tlo, thi := rangeOf(all...)
	div, tu := timeAxis(math.Max(math.Abs(tlo), math.Abs(thi)))

	full := newPlot("time from the fire ("+tu+")", "capacitor voltage (V)")
	var legend []legendItem
	perPoints := max(200, o.maxPoints()/max(1, nTraces))
	addSet := func(p *plot.Plot, s traceSet, d float64, win func(float64) bool, named bool) {
		var first plot.Thumbnailer
		for _, t := range s.traces {
			x, y := window(t, win)
			x, y = MinMax(x, y, perPoints)
			l, err := line(scaled(x, d), y, s.col, 0.7, s.dash)
			if err != nil {
				continue
			}
			p.Add(l)
			if first == nil {
				first = l
			}
		}
		var mod plot.Thumbnailer
		if s.model != nil {
			x, y := window(*s.model, win)
			x, y = MinMax(x, y, o.maxPoints())
			if l, err := line(scaled(x, d), y, colInk, 1.8, modelDash(s.dash)); err == nil {
				p.Add(l)
				mod = l
			}
		}
		if !named {
			return
		}
		prefix := ""
		if s.name != "" {
			prefix = s.name + ": "
		}
		if first != nil {
			legend = append(legend, legendItem{fmt.Sprintf("%smeasured, %d cycles", prefix, len(s.traces)), []plot.Thumbnailer{first}})
		}
		if mod != nil {
			legend = append(legend, legendItem{prefix + "fitted model", []plot.Thumbnailer{mod}})
		}
	}
	for _, s := range sets {
		addSet(full, s, div, nil, true)
	}
	markFire(full)

	plots := []*plot.Plot{full}
	caption := "Every traced cycle drawn on one axis, shifted so that its fire falls at time zero."
	if slices.ContainsFunc(sets, func(s traceSet) bool { return s.model != nil }) {
		caption += " The thick line is the fitted model's cycle."
	}
	if pulseS > 0 && finite(pulseS) {
		lo, hi := -1.5*pulseS, 4*pulseS
		win := func(t float64) bool { return t >= lo && t <= hi }
		zdiv, zu := siAxis(hi, "s")
		zoom := newPlot("time from the fire ("+zu+")", "capacitor voltage (V)")
		zoom.X.Tick.Marker = niceTicks{N: 4}
		if anyInWindow(sets, win) {
			for _, s := range sets {
				addSet(zoom, s, zdiv, win, false)
			}
			markFire(zoom)
			plots = append(plots, zoom)
			caption += fmt.Sprintf(" Below, the discharge pulse alone (%s to %s around the fire).", dur(lo), dur(hi))
		}
	}
	if dropped > 0 {
		caption += fmt.Sprintf(" %d traces are drawn, evenly spread over the capture; %d more are left out.", nTraces, dropped)
	}
	alt := "Measured cycles overlaid at the fire, with the fitted model's cycle"
	svg, err := renderSVG(id, figW, vg.Points(230*float64(len(plots))), alt, func(dc draw.Canvas) error {
		side(legendRows(dc, legend), plots, vg.Points(10)) // one plot or the plot and its zoom
		return nil
	})
	if err != nil {
		return figure{Err: err.Error()}, ""
	}
	return figure{SVG: svg, Alt: alt, Caption: caption}, ""
}

// thinSets keeps at most 40 traces per capture, evenly picked (more add ink, not
// insight), and returns how many are kept and how many left out.
func thinSets(sets []traceSet) (kept, dropped int) {
	const maxTraces = 40
	for i, s := range sets {
		if len(s.traces) > maxTraces {
			var keep []analysis.Trace
			for _, k := range thin(len(s.traces), maxTraces, nil) {
				keep = append(keep, s.traces[k])
			}
			dropped += len(s.traces) - len(keep)
			sets[i].traces = keep
		}
		kept += len(sets[i].traces)
	}
	return kept, dropped
}

// anyInWindow says whether some trace has at least two points inside win.
func anyInWindow(sets []traceSet, win func(float64) bool) bool {
	for _, s := range sets {
		for _, t := range s.traces {
			if x, _ := window(t, win); len(x) > 1 {
				return true
			}
		}
	}
	return false
}

// modelDash picks the model line's dash so that it differs from the traces' own.
func modelDash(traceDash []vg.Length) []vg.Length {
	if traceDash == nil {
		return dashModel
	}
	return nil
}

// markFire draws a dotted vertical line at t = 0, labelled in the legend text already.
func markFire(p *plot.Plot) {
	p.Add(vline(0, colMuted))
}

// window returns the points of t inside win (all of them for a nil win), in time order.
func window(t analysis.Trace, win func(float64) bool) (x, y []float64) {
	n := min(len(t.TS), len(t.V))
	for i := range n {
		if win == nil || win(t.TS[i]) {
			x = append(x, t.TS[i])
			y = append(y, t.V[i])
		}
	}
	if !sort.Float64sAreSorted(x) {
		idx := make([]int, len(x))
		for i := range idx {
			idx[i] = i
		}
		sort.SliceStable(idx, func(a, b int) bool { return x[idx[a]] < x[idx[b]] })
		sx, sy := make([]float64, len(x)), make([]float64, len(x))
		for i, j := range idx {
			sx[i], sy[i] = x[j], y[j]
		}
		x, y = sx, sy
	}
	return x, y
}

// vline is a dotted vertical line at x spanning whatever the y axis ends up being.
type vlinePlotter struct {
	x float64
	c color.Color
}

func vline(x float64, c color.Color) *vlinePlotter { return &vlinePlotter{x, c} }

func (v *vlinePlotter) Plot(c draw.Canvas, p *plot.Plot) {
	trX, _ := p.Transforms(&c)
	xx := trX(v.x)
	if xx < c.Min.X || xx > c.Max.X {
		return
	}
	c.StrokeLine2(draw.LineStyle{Color: v.c, Width: vg.Points(0.7), Dashes: dashDotted}, xx, c.Min.Y, xx, c.Max.Y)
}
