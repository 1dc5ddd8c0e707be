package report

import (
	"capcycle/analyze/analysis"
	"capcycle/analyze/stats"
	"fmt"
	"html/template"
	"io"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Compare writes one HTML page that sets two analysed captures side by side, typically
// the same circuit before and after a part change: both verdicts, the parameters with
// their differences, the cycles of both overlaid at the fire, and the period and energy
// per pulse. Options.LabelA and LabelB name the captures ("before", "after" by default).
// Like Write, it is built from the two Results alone; opts may be nil.
func Compare(w io.Writer, a, b *analysis.Result, opts *Options) error {
	if a == nil || b == nil {
		return ErrNoResult
	}
	if opts == nil {
		opts = &Options{}
	}
	return render(w, comparePage(a, b, opts))
}

func comparePage(a, b *analysis.Result, o *Options) *page {
	la, lb := o.labels()
	p := &page{Title: o.Title, CSS: template.CSS(pageCSS)}
	if p.Title == "" {
		p.Title = "capcycle comparison: " + captureName(a) + " and " + captureName(b)
	}
	if !o.Generated.IsZero() {
		p.Generated = o.Generated.UTC().Format("2006-01-02 15:04 UTC")
	}
	p.Facts = []fact{
		{la, captureName(a)}, {lb, captureName(b)},
		{la + " length", dur(a.DurationS)}, {lb + " length", dur(b.DurationS)},
	}
	p.Verdicts = []namedVerdict{{la, verdict(a, " in its report").HTML()}, {lb, verdict(b, " in its report").HTML()}}

	s := &section{ID: "parameters", Title: "Parameters side by side"}
	s.Intro = []string{fmt.Sprintf("Found values ± one standard error in each capture. The change is (%s − %s) / %s; it counts as a change when it exceeds twice the combined standard error.", lb, la, la)}
	s.Tables = append(s.Tables, compareParams(a, b, la, lb))
	s.Notes = append(s.Notes, note{Text: "Each capture's own report holds its findings, plots and cycle table."})
	p.add(s)

	ds := &section{ID: "days", Title: "The two captures side by side", Class: "pair"}
	for i, r := range []*analysis.Result{a, b} {
		name := []string{la, lb}[i]
		fig, absent := dayFigure([]string{"day-a", "day-b"}[i], r, o)
		if absent != "" {
			ds.Absent = append(ds.Absent, name+": "+absent)
			continue
		}
		fig.Caption = name + ". " + fig.Caption
		ds.Figures = append(ds.Figures, fig)
	}
	p.add(ds)

	cs := &section{ID: "cycles", Title: "Cycles of both, aligned at the fire"}
	if hasDensity(a) && hasDensity(b) {
		cs.addFigure(densityFigure("cmp-cycles", []densitySet{
			{name: la, d: a.CycleDensity, model: a.ModelTrace, col: colBlue},
			{name: lb, d: b.CycleDensity, model: b.ModelTrace, col: colBlue},
		}))
	} else {
		sets := []traceSet{
			{name: la, traces: a.Traces, model: a.ModelTrace, col: colBlue},
			{name: lb, traces: b.Traces, model: b.ModelTrace, col: colVermil, dash: dashModel},
		}
		cs.addFigure(cyclesFigure("cmp-cycles", sets, math.Max(pulseOf(a), pulseOf(b)), o))
	}
	p.add(cs)

	ps := &section{ID: "prediction", Title: "Prediction errors of both"}
	ps.Intro = []string{"How well the model, nominal (the declared parts) and fitted (each capture's own values), predicts each capture's charge times."}
	for i, r := range []*analysis.Result{a, b} {
		name := []string{la, lb}[i]
		if t := errorTable(r.Prediction); t != nil {
			t.Caption = "Prediction errors: " + name
			ps.Tables = append(ps.Tables, t)
		} else {
			ps.Absent = append(ps.Absent, name+": the analysis carries no prediction.")
		}
	}
	p.add(ps)

	es := &section{ID: "energy", Title: "Period and energy per pulse"}
	es.Tables = append(es.Tables, compareCycles(a, b, la, lb))
	fig, absent := energyFigure(a, b, la, lb)
	es.addFigure(fig, absent)
	p.add(es)
	p.add(methodsSection())
	p.add(safetySection())
	return p
}

// compareParams lists the found values of both captures with the change between them.
func compareParams(a, b *analysis.Result, la, lb string) *table {
	t := &table{Class: "params", Head: []string{"quantity", la, lb, "change", "judgement"}}
	ra, rb := paramRows(a), paramRows(b)
	for i := range ra {
		pa, pb := ra[i], rb[i]
		if pa.fitted == nil && pb.fitted == nil {
			continue
		}
		row := []cell{{Text: pa.name}, estCell(pa.fitted, pa.unit), estCell(pb.fitted, pb.unit)}
		change, judge := cell{Text: "—", Class: "num muted"}, cell{Text: "—", Class: "muted"}
		if pa.fitted != nil && pb.fitted != nil {
			va, vb := pa.fitted.Value, pb.fitted.Value
			if va != 0 {
				pct := cleanPct(100 * (vb - va) / va)
				sign := ""
				if pct > 0 {
					sign = "+"
				}
				change = cell{Text: sign + num(pct, "%"), Class: "num"}
			}
			sea, oka := pa.se()
			seb, okb := pb.se()
			if oka && okb {
				se := math.Hypot(sea, seb)
				if se > 0 {
					z := math.Abs(vb-va) / se
					if z > 2 {
						judge = cell{Text: fmt.Sprintf("changed (%.1f s.e.)", z), Class: "diff"}
					} else {
						judge = cell{Text: fmt.Sprintf("no clear change (%.1f s.e.)", z), Class: "ok"}
					}
				}
			}
		}
		t.Rows = append(t.Rows, append(row, change, judge))
	}
	return t
}

func estCell(e *analysis.Estimate, unit string) cell {
	if e == nil {
		return cell{Text: "not determined", Class: "num muted"}
	}
	return cell{Text: estimate(e, unit), Class: "num"}
}

// cycleStats sums up a capture's full cycles.
type cycleStats struct {
	n                                  int
	charge, pulse, energy, fire, reset []float64
	recordedH, energySum               float64
}

func statsOf(r *analysis.Result) cycleStats {
	var s cycleStats
	for _, c := range r.Cycles {
		if c.Kind == analysis.CycleChatter {
			continue
		}
		s.n++
		if c.ChargeS != nil {
			s.charge = append(s.charge, *c.ChargeS)
		}
		s.pulse = append(s.pulse, c.PulseS)
		s.fire = append(s.fire, c.FireV)
		s.reset = append(s.reset, c.ResetV)
		if c.EnergyJ != nil {
			s.energy = append(s.energy, *c.EnergyJ)
			s.energySum += *c.EnergyJ
		}
	}
	s.recordedH = (r.DurationS - r.Source.GapsS) / 3600
	return s
}

// meanSD is the mean and sample SD of v (SD 0 for one value); ok is false for none.
func meanSD(v []float64) (m, sd float64, ok bool) {
	if len(v) == 0 {
		return 0, 0, false
	}
	m, sd = stats.MeanSD(v)
	if len(v) < 2 {
		sd = 0
	}
	return m, sd, true
}

// compareCycles is the table of period, pulse and energy figures for both captures.
func compareCycles(a, b *analysis.Result, la, lb string) *table {
	sa, sb := statsOf(a), statsOf(b)
	t := &table{Class: "compare", Head: []string{"figure", la, lb, "change"}}
	type fig struct {
		name string
		unit string
		va   func(cycleStats) (float64, float64, bool)
	}
	meanOf := func(get func(cycleStats) []float64) func(cycleStats) (float64, float64, bool) {
		return func(s cycleStats) (float64, float64, bool) { return meanSD(get(s)) }
	}
	figs := []fig{
		{"full cycles", "", func(s cycleStats) (float64, float64, bool) { return float64(s.n), 0, true }},
		{"full fires per recorded hour", "/h", func(s cycleStats) (float64, float64, bool) {
			return float64(s.n) / s.recordedH, 0, s.recordedH > 0
		}},
		{"charge time, mean ± s.d.", "s", meanOf(func(s cycleStats) []float64 { return s.charge })},
		{"pulse width, mean ± s.d.", "s", meanOf(func(s cycleStats) []float64 { return s.pulse })},
		{"fire voltage, mean ± s.d.", "V", meanOf(func(s cycleStats) []float64 { return s.fire })},
		{"reset voltage, mean ± s.d.", "V", meanOf(func(s cycleStats) []float64 { return s.reset })},
		{"energy per pulse, mean ± s.d.", "J", meanOf(func(s cycleStats) []float64 { return s.energy })},
		{"energy delivered per recorded hour", "J", func(s cycleStats) (float64, float64, bool) {
			return s.energySum / s.recordedH, 0, s.recordedH > 0 && len(s.energy) > 0
		}},
	}
	show := func(v, sd float64, ok bool, unit string) cell {
		switch {
		case !ok:
			return cell{Text: "n/a", Class: "num muted"}
		case unit == "":
			return cell{Text: fmt.Sprint(int(v)), Class: "num"}
		case sd > 0:
			return cell{Text: estimate(&analysis.Estimate{Value: v, SD: &sd}, unit), Class: "num"}
		}
		return cell{Text: quantity(v, unit), Class: "num"}
	}
	for _, f := range figs {
		va, sda, oka := f.va(sa)
		vb, sdb, okb := f.va(sb)
		change := cell{Text: "—", Class: "num muted"}
		if oka && okb && va != 0 {
			pct := cleanPct(100 * (vb - va) / va)
			sign := ""
			if pct > 0 {
				sign = "+"
			}
			change = cell{Text: sign + num(pct, "%"), Class: "num"}
		}
		t.Rows = append(t.Rows, []cell{{Text: f.name}, show(va, sda, oka, f.unit), show(vb, sdb, okb, f.unit), change})
	}
	return t
}

// energyFigure plots each full cycle's energy per pulse against its charge time, for
// both captures (circles and triangles).
func energyFigure(a, b *analysis.Result, la, lb string) (figure, string) {
	type pts struct{ x, y []float64 }
	get := func(r *analysis.Result) pts {
		var p pts
		for _, c := range r.Cycles {
			if c.Kind != analysis.CycleChatter && c.ChargeS != nil && c.EnergyJ != nil {
				p.x = append(p.x, *c.ChargeS)
				p.y = append(p.y, *c.EnergyJ)
			}
		}
		idx := thin(len(p.x), 500, nil)
		var q pts
		for _, i := range idx {
			q.x, q.y = append(q.x, p.x[i]), append(q.y, p.y[i])
		}
		return q
	}
	pa, pb := get(a), get(b)
	if len(pa.x) == 0 && len(pb.x) == 0 {
		return figure{}, "Neither capture has cycles with both a charge time and an energy (the energy needs the capacitance)."
	}
	xmin, xmax := rangeOf(pa.x, pb.x)
	_, ymax := rangeOf(pa.y, pb.y)
	xd, xu := timeAxis(xmax)
	// Charge times over a day span decades (dawn against noon): a log axis then.
	logX := xmin > 0 && xmax/xmin > 20
	if logX {
		xd, xu = 1, "s"
	}
	yd, yu := siAxis(ymax, "J")
	p := newPlot("charge time ("+xu+")", "energy per pulse ("+yu+")")
	p.X.Min, p.Y.Min, p.Y.Max = 0, 0, 1.15*ymax/yd
	if logX {
		p.X.Min, p.X.Max = xmin/1.15, xmax*1.15
		p.X.Scale, p.X.Tick.Marker = plot.LogScale{}, ticks125{}
	}
	var legend []legendItem
	if len(pa.x) > 0 {
		if s, err := scatter(scaled(pa.x, xd), scaled(pa.y, yd), draw.RingGlyph{}, colBlue, 2.4); err == nil {
			p.Add(s)
			legend = append(legend, legendItem{la, []plot.Thumbnailer{s}})
		}
	}
	if len(pb.x) > 0 {
		if s, err := scatter(scaled(pb.x, xd), scaled(pb.y, yd), draw.TriangleGlyph{}, colVermil, 2.4); err == nil {
			p.Add(s)
			legend = append(legend, legendItem{lb, []plot.Thumbnailer{s}})
		}
	}
	alt := "Energy per pulse against charge time for both captures"
	svg, err := renderSVG("cmp-energy", figW, vg.Points(210), alt, func(dc draw.Canvas) error {
		p.Draw(legendRows(dc, legend))
		return nil
	})
	if err != nil {
		return figure{Err: err.Error()}, ""
	}
	return figure{SVG: svg, Alt: alt, Caption: "Each full cycle's energy per pulse, ½C(V_fire² − V_reset²), against the charge time before it (at most 500 cycles of each capture, evenly spread)."}, ""
}
