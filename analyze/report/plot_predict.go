package report

import (
	"capcycle/analyze/analysis"
	"fmt"
	"math"
	"sort"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// predPoint is one cycle's measured and predicted charge time.
type predPoint struct {
	fireS           float64 // when it fired (NaN if the cycle is not in Result.Cycles)
	meas            float64
	nominal, fitted float64 // NaN when that prediction is absent
	nomErr, fitErr  float64 // (predicted - measured) / measured, percent; NaN when absent
}

func predPoints(r *analysis.Result) []predPoint {
	if r.Prediction == nil {
		return nil
	}
	fire := make(map[int]float64, len(r.Cycles))
	for _, c := range r.Cycles {
		fire[c.Index] = c.FireS
	}
	var out []predPoint
	for _, pc := range r.Prediction.Cycles {
		if pc.Measured.ChargeS == nil || *pc.Measured.ChargeS <= 0 {
			continue
		}
		p := predPoint{meas: *pc.Measured.ChargeS, fireS: math.NaN(),
			nominal: math.NaN(), fitted: math.NaN(), nomErr: math.NaN(), fitErr: math.NaN()}
		if f, ok := fire[pc.Index]; ok {
			p.fireS = f
		}
		if pc.Nominal != nil && pc.Nominal.ChargeS != nil {
			p.nominal = *pc.Nominal.ChargeS
			p.nomErr = 100 * (p.nominal - p.meas) / p.meas
		}
		if pc.Fitted != nil && pc.Fitted.ChargeS != nil {
			p.fitted = *pc.Fitted.ChargeS
			p.fitErr = 100 * (p.fitted - p.meas) / p.meas
		}
		out = append(out, p)
	}
	return out
}

// predictFigure draws measured against predicted charge time (with the 1:1 line and a
// ±10 % band) and the prediction error over the day, for the nominal and the fitted model.
func predictFigure(r *analysis.Result, o *Options) (figure, string) {
	pts := predPoints(r)
	if len(pts) == 0 {
		return figure{}, "The analysis carries no per-cycle prediction, so measured and predicted cycles cannot be compared."
	}
	shown := shownPoints(pts)

	var mx, nx, ny, fx, fy []float64
	var tNom, eNom, tFit, eFit []float64
	for _, i := range shown {
		p := pts[i]
		mx = append(mx, p.meas)
		if finite(p.nominal) {
			nx, ny = append(nx, p.meas), append(ny, p.nominal)
		}
		if finite(p.fitted) {
			fx, fy = append(fx, p.meas), append(fy, p.fitted)
		}
		if finite(p.fireS) {
			if finite(p.nomErr) {
				tNom, eNom = append(tNom, p.fireS), append(eNom, p.nomErr)
			}
			if finite(p.fitErr) {
				tFit, eFit = append(tFit, p.fireS), append(eFit, p.fitErr)
			}
		}
	}
	lo, hi := rangeOf(mx, ny, fy)
	if !(hi > lo) {
		lo, hi = lo*0.9, hi*1.1+1e-9
	}
	// Charge times across a day span decades (dawn against noon): use log axes then.
	logAxes := lo > 0 && hi/lo > 20
	div, tu := timeAxis(hi)
	if logAxes {
		lo, hi = lo/1.15, hi*1.15
		div, tu = 1, "s"
	} else {
		pad := 0.05 * (hi - lo)
		lo, hi = math.Max(0, lo-pad), hi+pad
	}

	sc := newPlot("measured charge time ("+tu+")", "predicted charge time ("+tu+")")
	sc.X.Min, sc.X.Max, sc.Y.Min, sc.Y.Max = lo/div, hi/div, lo/div, hi/div
	if logAxes {
		for _, a := range []*plot.Axis{&sc.X, &sc.Y} {
			a.Scale = plot.LogScale{}
			a.Tick.Marker = ticks125{}
		}
	}
	legend := addOneToOne(sc, lo/div, hi/div)
	var nomThumb, fitThumb plot.Thumbnailer
	if len(nx) > 0 {
		if s, err := scatter(scaled(nx, div), scaled(ny, div), draw.RingGlyph{}, colOrange, 2.4); err == nil {
			sc.Add(s)
			nomThumb = s
			legend = append(legend, legendItem{"nominal model (declared parts)", []plot.Thumbnailer{s}})
		}
	}
	if len(fx) > 0 {
		if s, err := scatter(scaled(fx, div), scaled(fy, div), draw.CrossGlyph{}, colBlue, 2.4); err == nil {
			sc.Add(s)
			fitThumb = s
			legend = append(legend, legendItem{"fitted model", []plot.Thumbnailer{s}})
		}
	}

	rlo, rhi := rangeOf(eNom, eFit)
	lim := math.Max(15, 1.1*math.Max(math.Abs(rlo), math.Abs(rhi)))
	td, ttu := timeAxis(math.Max(r.DurationS, 1))
	res := newPlot("time since the capture started ("+ttu+")", "charge-time error (%)")
	res.Y.Min, res.Y.Max = -lim, lim
	res.X.Min, res.X.Max = 0, math.Max(r.DurationS, 1)/td
	addErrorGuides(res)
	if nomThumb != nil && len(tNom) > 0 {
		if s, err := scatter(scaled(tNom, td), eNom, draw.RingGlyph{}, colOrange, 2.4); err == nil {
			res.Add(s)
		}
	}
	if fitThumb != nil && len(tFit) > 0 {
		if s, err := scatter(scaled(tFit, td), eFit, draw.CrossGlyph{}, colBlue, 2.4); err == nil {
			res.Add(s)
		}
	}

	caption := "Top: each cycle's charge time as measured and as the two models predict it. Below: the prediction error, (predicted − measured) / measured, over the day."
	if len(shown) < len(pts) {
		caption += fmt.Sprintf(" %d of %d cycles are drawn: an even spread, plus the %d with the largest errors.", len(shown), len(pts), min(worstShown, len(pts)))
	}
	alt := "Measured against predicted charge time, and the prediction error over time"
	svg, err := renderSVG("predict", figW, vg.Points(380), alt, func(dc draw.Canvas) error {
		side(legendRows(dc, legend), []*plot.Plot{sc, res}, vg.Points(18))
		return nil
	})
	if err != nil {
		return figure{Err: err.Error()}, ""
	}
	return figure{SVG: svg, Alt: alt, Caption: caption}, ""
}

func nanAbs(v float64) float64 {
	if math.IsNaN(v) {
		return -1
	}
	return math.Abs(v)
}

// addOneToOne draws the line where prediction equals measurement, from lo to hi on both
// axes, and the ±10 % lines beside it; it returns their legend items.
func addOneToOne(sc *plot.Plot, lo, hi float64) []legendItem {
	var legend []legendItem
	if l, err := line([]float64{lo, hi}, []float64{lo, hi}, colInk, 0.9, nil); err == nil {
		sc.Add(l)
		legend = append(legend, legendItem{"prediction = measurement", []plot.Thumbnailer{l}})
	}
	for _, k := range []float64{0.9, 1.1} {
		if l, err := line([]float64{lo, hi}, []float64{k * lo, k * hi}, colMuted, 0.6, dashDotted); err == nil {
			sc.Add(l)
			if k > 1 {
				legend = append(legend, legendItem{"±10 %", []plot.Thumbnailer{l}})
			}
		}
	}
	return legend
}

// addErrorGuides draws the zero line and the ±10 % lines across the error plot (its X
// range set).
func addErrorGuides(res *plot.Plot) {
	for _, k := range []float64{-10, 0, 10} {
		w, d := 0.6, dashDotted
		if k == 0 {
			w, d = 0.9, nil
		}
		if l, err := line([]float64{res.X.Min, res.X.Max}, []float64{k, k}, colInk, w, d); err == nil {
			res.Add(l)
		}
	}
}

// shownPoints keeps the plot light: an even spread of at most 400 cycles plus the 20
// worst-predicted ones.
func shownPoints(pts []predPoint) []int {
	const maxShown = 400
	order := make([]int, len(pts))
	for i := range order {
		order[i] = i
	}
	worstErr := func(p predPoint) float64 {
		return math.Max(nanAbs(p.nomErr), nanAbs(p.fitErr))
	}
	sort.SliceStable(order, func(a, b int) bool { return worstErr(pts[order[a]]) > worstErr(pts[order[b]]) })
	return thin(len(pts), maxShown, order[:min(worstShown, len(order))])
}

// worstShown is the number of worst-predicted cycles the plot always shows.
const worstShown = 20

// ticks125 marks a log axis at 1, 2 and 5 times each power of ten, with minor ticks
// between.
type ticks125 struct{}

func (ticks125) Ticks(lo, hi float64) []plot.Tick {
	var out []plot.Tick
	labelled := map[int]bool{1: true, 2: true, 5: true}
	switch decades := math.Log10(hi / lo); {
	case decades > 3:
		labelled = map[int]bool{1: true}
	case decades > 1.5:
		labelled = map[int]bool{1: true, 3: true}
	}
	for e := int(math.Floor(math.Log10(lo))); e <= int(math.Ceil(math.Log10(hi))); e++ {
		for m := 1; m < 10; m++ {
			v := float64(m) * math.Pow10(e)
			if v < lo || v > hi {
				continue
			}
			t := plot.Tick{Value: v}
			if labelled[m] {
				t.Label = strconv.FormatFloat(v, 'g', 6, 64) // 6 digits: 3 × 0.1 is not 0.30000000000000004
			}
			out = append(out, t)
		}
	}
	return out
}
