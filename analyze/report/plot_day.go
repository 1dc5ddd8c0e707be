package report

import (
	"capcycle/analyze/analysis"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// dayFigure is "the day at a glance": the voltage as a min/max band with the fires
// marked and the gaps shaded, the light level, and the fires per hour, on one time axis.
// It returns an empty figure and the reason when the Result has no envelope.
func dayFigure(id string, r *analysis.Result, o *Options) (figure, string) {
	env := MergeEnvelope(r.Envelope, envelopeBins(r, o.maxBins()))
	if len(env) < 2 {
		return figure{}, "The analysis carries no voltage envelope, so the day cannot be drawn."
	}
	span := math.Max(r.DurationS, env[len(env)-1].TS)
	div, tu := timeAxis(span)
	xmax := span / div

	lo, hi := math.Inf(1), math.Inf(-1)
	for _, e := range env {
		lo, hi = math.Min(lo, e.MinV), math.Max(hi, e.MaxV)
	}
	on, _, haveOn := triggerOn(r)
	if haveOn {
		hi = math.Max(hi, on)
	}
	if eq := r.EquilibriumV; eq != nil && finite(eq.Value) {
		lo, hi = math.Min(lo, eq.Value), math.Max(hi, eq.Value)
	}
	pad := 0.06 * math.Max(hi-lo, 0.1)
	ylo, yhi := math.Max(0, lo-pad), hi+pad

	pv := newPlot("", "capacitor voltage (V)")
	pv.X.Min, pv.X.Max, pv.Y.Min, pv.Y.Max = 0, xmax, ylo, yhi
	var legend []legendItem

	// Gaps first, so everything else draws over them; each wide gap is named in text.
	gapThumb, gapLabels := dayGaps(pv, r.Segments, div, span, ylo, yhi, pad)
	if th := dayBand(pv, env, r.Segments, div); th != nil {
		legend = append(legend, legendItem{"voltage, lowest to highest in each bin", []plot.Thumbnailer{th}})
	}

	legend = append(legend, dayLevels(pv, r, xmax)...)

	// Fires: one marker per pixel-wide bin that holds a fire, at the highest fire voltage.
	fx, fy := fireMarks(r.Cycles, span, 300)
	if len(fx) > 0 {
		s, err := scatter(scaled(fx, div), fy, draw.TriangleGlyph{}, colVermil, 2.6)
		if err == nil {
			pv.Add(s)
			legend = append(legend, legendItem{"fire", []plot.Thumbnailer{s}})
		}
	}
	if gapThumb != nil {
		legend = append(legend, legendItem{"gap: no samples", []plot.Thumbnailer{gapThumb}})
		if len(gapLabels.Labels) > 0 {
			if gl, err := plotter.NewLabels(gapLabels); err == nil {
				for i := range gl.TextStyle {
					gl.TextStyle[i] = textStyle(fontTick, colMuted, draw.XCenter, draw.YCenter)
				}
				pv.Add(gl)
			}
		}
	}

	plots := []*plot.Plot{pv}
	weights := []float64{3}
	caption := "Voltage across the storage capacitor over the whole capture, drawn as the lowest and highest value in each time bin"
	if pl, item := lightPanel(r, xmax, div, o); pl != nil {
		plots, weights = append(plots, pl), append(weights, 1.2)
		legend = append(legend, item...)
		caption += "; below it, the light level the charging rate implies"
	}
	if pf, item := firesPanel(r, span, xmax, div); pf != nil {
		plots, weights = append(plots, pf), append(weights, 1.4)
		legend = append(legend, item...)
		caption += "; and the full fires counted in each bin, as a rate per hour"
	}
	plots[len(plots)-1].X.Label.Text = "time since the capture started (" + tu + ")"
	caption += "."

	h := vg.Points(190 + 110*float64(len(plots)-1))
	alt := "Capacitor voltage over the capture with fires marked"
	svg, err := renderSVG(id, figW, h, alt, func(dc draw.Canvas) error {
		stack(legendRows(dc, legend), plots, weights, vg.Points(4))
		return nil
	})
	if err != nil {
		return figure{Err: err.Error()}, ""
	}
	return figure{SVG: svg, Alt: alt, Caption: caption}, ""
}

// dayGaps shades the gaps and returns a thumbnail for the legend (nil without gaps) and
// the labels of the wide ones.
func dayGaps(pv *plot.Plot, segs []analysis.Segment, div, span, ylo, yhi, pad float64) (plot.Thumbnailer, plotter.XYLabels) {
	var gapThumb plot.Thumbnailer
	var gapLabels plotter.XYLabels
	for _, s := range segs {
		if s.Kind != "gap" {
			continue
		}
		g, err := rect(s.StartS/div, s.EndS/div, ylo, yhi, colGapFill)
		if err != nil {
			continue
		}
		pv.Add(g)
		gapThumb = g
		if (s.EndS-s.StartS)/span > 0.03 {
			gapLabels.XYs = append(gapLabels.XYs, plotter.XY{X: (s.StartS + s.EndS) / 2 / div, Y: yhi - pad/2})
			gapLabels.Labels = append(gapLabels.Labels, "gap")
		}
	}
	return gapThumb, gapLabels
}

// dayLevels draws the trigger's on and release voltages and the settling level across
// the day, and returns their legend items.
func dayLevels(pv *plot.Plot, r *analysis.Result, xmax float64) []legendItem {
	var items []legendItem
	if on, _, ok := triggerOn(r); ok {
		l, err := line([]float64{0, xmax}, []float64{on, on}, colVermil, 0.9, dashTrig)
		if err == nil {
			pv.Add(l)
			items = append(items, legendItem{"trigger on " + num(on, "V"), []plot.Thumbnailer{l}})
		}
	}
	if off, _, ok := triggerOff(r); ok {
		l, err := line([]float64{0, xmax}, []float64{off, off}, colInk, 0.9, dashDotted)
		if err == nil {
			pv.Add(l)
			items = append(items, legendItem{"release " + num(off, "V"), []plot.Thumbnailer{l}})
		}
	}

	if eq := r.EquilibriumV; eq != nil && finite(eq.Value) {
		l, err := line([]float64{0, xmax}, []float64{eq.Value, eq.Value}, colGreen, 1.1, dashLongShort)
		if err == nil {
			pv.Add(l)
			items = append(items, legendItem{"settling level " + num(eq.Value, "V"), []plot.Thumbnailer{l}})
		}
	}
	return items
}

// dayBand draws the voltage band, one polygon per unbroken run of bins, and returns a
// thumbnail for the legend (nil when nothing was drawn).
func dayBand(pv *plot.Plot, env []analysis.EnvelopePt, segs []analysis.Segment, div float64) plot.Thumbnailer {
	// The band: one polygon per unbroken run of bins.
	var bandThumb plot.Thumbnailer
	brk := breakStep(env)
	for _, run := range envelopeRuns(env, segs, brk) {
		pts := make(plotter.XYs, 0, 2*len(run))
		for _, e := range run {
			pts = append(pts, plotter.XY{X: e.TS / div, Y: e.MaxV})
		}
		for i := len(run) - 1; i >= 0; i-- {
			pts = append(pts, plotter.XY{X: run[i].TS / div, Y: run[i].MinV})
		}
		if len(run) == 1 { // a lone bin: give it some width so it shows
			w := brk / 6 / div
			pts = plotter.XYs{{X: pts[0].X - w, Y: run[0].MaxV}, {X: pts[0].X + w, Y: run[0].MaxV},
				{X: pts[0].X + w, Y: run[0].MinV}, {X: pts[0].X - w, Y: run[0].MinV}}
		}
		poly, err := plotter.NewPolygon(pts)
		if err != nil {
			continue
		}
		poly.Color = colBand
		poly.LineStyle.Color = colBlue
		poly.LineStyle.Width = vg.Points(0.5)
		pv.Add(poly)
		bandThumb = poly
	}
	return bandThumb
}

// lightPanel is the light level under the day's voltage (nil with fewer than 2 points).
func lightPanel(r *analysis.Result, xmax, div float64, o *Options) (*plot.Plot, []legendItem) {
	if len(r.Light) < 2 {
		return nil, nil
	}
	var item []legendItem
	pl := newPlot("", "light (relative)")
	pl.Y.Tick.Marker = niceTicks{N: 3}
	pl.X.Min, pl.X.Max, pl.Y.Min, pl.Y.Max = 0, xmax, 0, 1.05
	var lx, ly []float64
	for _, p := range r.Light {
		lx = append(lx, p.TS/div)
		ly = append(ly, p.Level)
	}
	lx, ly = MinMax(lx, ly, o.maxPoints())
	if l, err := line(lx, ly, colOrange, 1.2, nil); err == nil {
		pl.Add(l)
		item = append(item, legendItem{"light level (1 = brightest stretch)", []plot.Thumbnailer{l}})
	}
	return pl, item
}

// firesPanel is the full fires per hour under the day's voltage (nil without fires).
func firesPanel(r *analysis.Result, span, xmax, div float64) (*plot.Plot, []legendItem) {
	fph := firesPerHour(r.Cycles, r.Segments, span)
	if len(fph) == 0 {
		return nil, nil
	}
	var item []legendItem
	pf := newPlot("", "fires per hour")
	pf.Y.Tick.Marker = niceTicks{N: 3}
	pf.X.Min, pf.X.Max, pf.Y.Min = 0, xmax, 0
	var ymax float64
	var barThumb plot.Thumbnailer
	for _, b := range fph {
		ymax = math.Max(ymax, b.rate)
		if b.rate == 0 {
			continue
		}
		bar, err := rect(b.t0/div, b.t1/div, 0, b.rate, colPurple)
		if err != nil {
			continue
		}
		bar.LineStyle.Color = colInk
		bar.LineStyle.Width = vg.Points(0.4)
		pf.Add(bar)
		barThumb = bar
	}
	pf.Y.Max = math.Max(1, ymax*1.1)
	if barThumb != nil {
		item = append(item, legendItem{"full fires per hour", []plot.Thumbnailer{barThumb}})
	}
	return pf, item
}

// envelopeRuns splits the envelope where bins are not neighbours: a step longer than brk,
// or a gap segment between them.
func envelopeRuns(env []analysis.EnvelopePt, segs []analysis.Segment, brk float64) [][]analysis.EnvelopePt {
	var runs [][]analysis.EnvelopePt
	start := 0
	for i := 1; i <= len(env); i++ {
		if i == len(env) || env[i].TS-env[i-1].TS > brk || gapBetween(segs, env[i-1].TS, env[i].TS) {
			runs = append(runs, env[start:i])
			start = i
		}
	}
	return runs
}

func gapBetween(segs []analysis.Segment, t0, t1 float64) bool {
	for _, s := range segs {
		if s.Kind == "gap" && s.StartS >= t0 && s.EndS <= t1 {
			return true
		}
	}
	return false
}

// fireMarks bins the fires into n bins over span and returns one point per bin that
// holds a fire: at the bin's first fire time and the highest fire voltage in it.
func fireMarks(cycles []analysis.Cycle, span float64, n int) (x, y []float64) {
	if span <= 0 || len(cycles) == 0 {
		return nil, nil
	}
	if len(cycles) <= n {
		for _, c := range cycles {
			x = append(x, c.FireS)
			y = append(y, c.FireV)
		}
		return x, y
	}
	bins := make(map[int]int) // bin -> index into x/y
	for _, c := range cycles {
		b := int(c.FireS / span * float64(n))
		if j, ok := bins[b]; ok {
			y[j] = math.Max(y[j], c.FireV)
			continue
		}
		bins[b] = len(x)
		x = append(x, c.FireS)
		y = append(y, c.FireV)
	}
	return x, y
}

type rateBin struct{ t0, t1, rate float64 }

// firesPerHour counts the full fires in bins (one hour for a day; shorter for shorter
// captures, so that there are ten bins at least) and gives each bin's count as a rate per hour of recorded time: the
// time inside gaps does not count, and a bin with less than a quarter of its length
// recorded gets no rate.
func firesPerHour(cycles []analysis.Cycle, segs []analysis.Segment, span float64) []rateBin {
	if span <= 0 || len(cycles) == 0 {
		return nil
	}
	// The widest of these bins that still gives ten of them over the capture.
	w := 10.0
	for _, c := range []float64{3600, 1800, 900, 600, 300, 120, 60, 30} {
		if span/c >= 10 {
			w = c
			break
		}
	}
	n := int(math.Ceil(span / w))
	counts := make([]int, n)
	for _, c := range cycles {
		if c.Kind == analysis.CycleChatter {
			continue
		}
		i := int(c.FireS / w)
		if i >= 0 && i < n {
			counts[i]++
		}
	}
	out := make([]rateBin, n)
	for i := range n {
		t0, t1 := float64(i)*w, math.Min(float64(i+1)*w, span)
		rec := t1 - t0
		for _, s := range segs {
			if s.Kind == "gap" {
				rec -= math.Max(0, math.Min(t1, s.EndS)-math.Max(t0, s.StartS))
			}
		}
		out[i] = rateBin{t0: t0, t1: t1}
		if rec >= w/4 {
			out[i].rate = float64(counts[i]) * 3600 / rec
		}
	}
	return out
}

// triggerOn returns the trigger's turn-on voltage: fitted when the analysis found it,
// else declared in the profile.
func triggerOn(r *analysis.Result) (v float64, origin string, ok bool) {
	if e := r.Fit.Trigger.OnV; e != nil {
		return e.Value, "fitted", true
	}
	if r.Declared != nil && r.Declared.OnV != 0 {
		return r.Declared.OnV, "declared", true
	}
	return 0, "", false
}

// triggerOff is triggerOn for the release voltage.
func triggerOff(r *analysis.Result) (v float64, origin string, ok bool) {
	if e := r.Fit.Trigger.OffV; e != nil {
		return e.Value, "fitted", true
	}
	if r.Declared != nil && r.Declared.OffV != 0 {
		return r.Declared.OffV, "declared", true
	}
	return 0, "", false
}

// envelopeBins is how many bins the day plot draws: at most max, and few enough that
// each bin spans two typical cycles or more. Bins about one period wide would catch a
// full swing in one bin and half a swing in the next, and the band would show a moiré
// that is not in the circuit; bins of several cycles show the swing as a solid band.
func envelopeBins(r *analysis.Result, max int) int {
	if e := r.Fit.Trigger.PeriodS; e != nil && e.Value > 0 && r.DurationS > 0 {
		n := int(r.DurationS / (2 * e.Value))
		return min(max, maxInt(n, 150))
	}
	return max
}

func maxInt(a, b int) int {
	if a > b {
		return a
	}
	return b
}
