package report

import (
	"capcycle/analyze/analysis"
	"fmt"
	"math"
	"sort"
	"strings"
)

// headerFacts are the capture's particulars, shown under the title.
func headerFacts(r *analysis.Result) []fact {
	f := []fact{{"capture", captureName(r)}}
	if r.Source.Profile != "" {
		f = append(f, fact{"profile", r.Source.Profile})
	}
	if r.Source.StartRFC != "" {
		f = append(f, fact{"started", r.Source.StartRFC})
	}
	f = append(f, fact{"length", dur(r.DurationS)}, fact{"samples", fmt.Sprint(r.Samples)})
	if r.Source.GapsS > 0 {
		f = append(f, fact{"time in gaps", dur(r.Source.GapsS)})
	}
	if r.Source.Lost > 0 {
		f = append(f, fact{"samples lost", fmt.Sprint(r.Source.Lost)})
	}
	if r.Noise != nil {
		f = append(f, fact{"noise (RMS)", num(r.Noise.RMSV, "V")}, fact{"smallest step", num(r.Noise.StepV, "V")})
	}
	if r.Capacitance != nil {
		f = append(f, fact{"capacitance used", estimate(&r.Capacitance.F, "F") + originNote(r.Capacitance.F.Origin)})
	} else {
		f = append(f, fact{"capacitance used", "unknown"})
	}
	return f
}

func originNote(o analysis.Origin) string {
	if o == "" {
		return ""
	}
	return " (" + string(o) + ")"
}

var severityRank = map[string]int{"fault": 0, "warn": 1, "info": 2}

// findingViews orders the findings by severity (faults first), keeping the analysis's
// order within one severity.
func findingViews(fs []analysis.Finding) []findingView {
	out := make([]findingView, 0, len(fs))
	for _, f := range fs {
		v := findingView{Severity: string(f.Severity), Code: f.Code, Message: f.Message, Suggest: f.Suggestion}
		switch f.Severity {
		case "fault":
			v.Badge = "FAULT"
		case "warn":
			v.Badge = "WARNING"
		case "info":
			v.Badge = "NOTE"
		default:
			v.Severity, v.Badge = "info", strings.ToUpper(string(f.Severity))
		}
		keys := make([]string, 0, len(f.Numbers))
		for k := range f.Numbers {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		for _, k := range keys {
			label, value := numberLabel(k, f.Numbers[k])
			v.Numbers = append(v.Numbers, fact{label, value})
		}
		out = append(out, v)
	}
	sort.SliceStable(out, func(a, b int) bool {
		return severityRank[out[a].Severity] < severityRank[out[b].Severity]
	})
	return out
}

func bundleLinks(o *Options) []link {
	var l []link
	if o.JSONHref != "" {
		l = append(l, link{"the analysis (JSON)", o.JSONHref})
	}
	if o.CSVHref != "" {
		l = append(l, link{"every cycle (CSV)", o.CSVHref})
	}
	return l
}

func daySection(r *analysis.Result, o *Options) *section {
	s := &section{ID: "day", Title: "The day at a glance"}
	fig, absent := dayFigure("day", r, o)
	s.addFigure(fig, absent)
	if t := segmentTable(r); t != nil {
		s.Tables = append(s.Tables, t)
	}
	switch n := len(r.Light); {
	case absent != "":
	case n == 0:
		s.Absent = append(s.Absent, "The analysis carries no light-level trace.")
	case n == 1:
		msg := "The light was measured on one charging stretch only (a circuit that never fires charges once), too few points for a trace"
		if isc := r.Fit.Cell.IscA; isc != nil && r.Declared != nil && r.Declared.IscA > 0 {
			msg += fmt.Sprintf(": the cell gave %s, %s of its rated short-circuit current", num(isc.Value, "A"), num(100*isc.Value/r.Declared.IscA, "%"))
		}
		s.Absent = append(s.Absent, msg+".")
	}
	return s
}

func (s *section) addFigure(f figure, absent string) {
	if absent != "" {
		s.Absent = append(s.Absent, absent)
		return
	}
	s.Figures = append(s.Figures, f)
}

// segmentTable sums the time the capture spent in each kind of segment.
func segmentTable(r *analysis.Result) *table {
	if len(r.Segments) == 0 {
		return nil
	}
	order := []string{"charging", "firing", "dark-decay", "plateau", "saturated", "gap"}
	total := map[string]float64{}
	count := map[string]int{}
	for _, sg := range r.Segments {
		kind := string(sg.Kind)
		if _, ok := total[kind]; !ok && !contains(order, kind) {
			order = append(order, kind)
		}
		total[kind] += sg.EndS - sg.StartS
		count[kind]++
	}
	t := &table{Caption: "Where the time went", Class: "segments", Head: []string{"segment kind", "stretches", "time", "share of the capture"}}
	for _, k := range order {
		if count[k] == 0 {
			continue
		}
		share := "n/a"
		if r.DurationS > 0 {
			share = num(100*total[k]/r.DurationS, "%")
		}
		t.Rows = append(t.Rows, []cell{{Text: k}, {Text: fmt.Sprint(count[k]), Class: "num"},
			{Text: dur(total[k]), Class: "num"}, {Text: share, Class: "num"}})
	}
	return t
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// stallSection shows, for a circuit that never fires, how much light it takes to fire.
func stallSection(r *analysis.Result) *section {
	if len(r.Cycles) > 0 || r.EquilibriumV == nil {
		return nil
	}
	s := &section{ID: "stall", Title: "How much light it takes to fire"}
	s.addFigure(stallFigure(r))
	s.Notes = append(s.Notes, note{Text: "The analysis result carries no simulation of the declared parts over the day, so the measured day is not set against one here; the parameter table compares the declared parts with what the capture found."})
	return s
}

func cyclesSection(r *analysis.Result, o *Options) *section {
	s := &section{ID: "cycles", Title: "Every cycle, aligned at the fire"}
	if hasDensity(r) {
		s.addFigure(densityFigure("cycles", []densitySet{{d: r.CycleDensity, model: r.ModelTrace, col: colBlue}}))
		if t := loadTable(r); t != nil {
			s.Tables = append(s.Tables, t)
		}
		return s
	}
	set := traceSet{traces: r.Traces, model: r.ModelTrace, col: colBlue}
	fig, absent := cyclesFigure("cycles", []traceSet{set}, pulseOf(r), o)
	if r.ModelTrace == nil && absent == "" {
		fig.Caption += " The analysis carries no model cycle, so none is drawn over the measured ones."
	}
	s.addFigure(fig, absent)
	if t := loadTable(r); t != nil {
		s.Tables = append(s.Tables, t)
	}
	return s
}

// pulseOf is the typical pulse width: fitted, else the median of the cycles'.
func pulseOf(r *analysis.Result) float64 {
	if e := r.Fit.Trigger.PulseS; e != nil {
		return e.Value
	}
	var p []float64
	for _, c := range r.Cycles {
		if c.Kind != analysis.CycleChatter && c.PulseS > 0 {
			p = append(p, c.PulseS)
		}
	}
	if len(p) == 0 {
		return 0
	}
	sort.Float64s(p)
	return p[len(p)/2]
}

// loadTable describes the discharge through the load.
func loadTable(r *analysis.Result) *table {
	l := r.Fit.Load
	if l.TauS == nil && l.Ohm == nil && l.Resistive == nil {
		return nil
	}
	t := &table{Caption: "The discharge through the load", Class: "kv", Head: []string{"quantity", "value"}}
	add := func(name, v string) { t.Rows = append(t.Rows, []cell{{Text: name}, {Text: v, Class: "num"}}) }
	add("time constant of the discharge", estimate(l.TauS, "s"))
	add("load resistance", orNeedsC(l.Ohm, "Ω", r))
	if l.Resistive != nil {
		if *l.Resistive {
			add("shape of the discharge", "exponential: a resistive load")
		} else {
			add("shape of the discharge", "not exponential: the load behaves like a motor")
		}
	}
	if l.StartOhm != nil {
		add("effective resistance early in the pulse", estimate(l.StartOhm, "Ω"))
	}
	if l.EndOhm != nil {
		add("effective resistance late in the pulse", estimate(l.EndOhm, "Ω"))
	}
	if l.RMSResidV != nil {
		add("RMS residual of the exponential fit", num(*l.RMSResidV, "V"))
	}
	return t
}

// orNeedsC formats an absolute quantity, or says that it needs the capacitance.
func orNeedsC(e *analysis.Estimate, unit string, r *analysis.Result) string {
	if e == nil && r.Capacitance == nil {
		return "not determined (needs the capacitance)"
	}
	return estimate(e, unit)
}

func predictSection(r *analysis.Result, o *Options) *section {
	s := &section{ID: "prediction", Title: "Measured against predicted"}
	s.Intro = []string{"The nominal model is the circuit as the profile declares it; the fitted model uses the values recovered from this capture. Charge time is the headline figure: it is what the light and the parts set."}
	fig, absent := predictFigure(r, o)
	s.addFigure(fig, absent)
	if t := errorTable(r.Prediction); t != nil {
		s.Tables = append(s.Tables, t)
	}
	return s
}

// errorTable sums up the prediction errors of each model.
func errorTable(p *analysis.Prediction) *table {
	if p == nil || (p.Nominal == nil && p.Fitted == nil && p.HeldOut == nil) {
		return nil
	}
	t := &table{Caption: "Prediction errors", Class: "errors",
		Head: []string{"model", "cycles", "bias", "mean abs. error", "RMS error", "within ±10 %", "pulse error", "energy error"}}
	rows := []struct {
		name string
		e    *analysis.ErrorSummary
	}{{"nominal", p.Nominal}, {"fitted", p.Fitted}, {"fitted, held-out cycles", p.HeldOut}}
	for _, row := range rows {
		if row.e == nil {
			if row.name != "fitted, held-out cycles" {
				t.Rows = append(t.Rows, []cell{{Text: row.name}, {Text: "not computed", Class: "muted"},
					{}, {}, {}, {}, {}, {}})
			}
			continue
		}
		e := row.e
		t.Rows = append(t.Rows, []cell{{Text: row.name}, {Text: fmt.Sprint(e.N), Class: "num"},
			{Text: signedPct(e.BiasPct), Class: "num"}, {Text: optNum(e.MAPEPct, "%"), Class: "num"},
			{Text: optDur(e.RMSS), Class: "num"}, {Text: optShare(e.Within10Pct), Class: "num"},
			{Text: optNum(e.PulseMAPEPct, "%"), Class: "num"}, {Text: optNum(e.EnergyMAPEPct, "%"), Class: "num"}})
	}
	return t
}

func optNum(v *float64, unit string) string {
	if v == nil {
		return "n/a"
	}
	return num(*v, unit)
}

func optDur(v *float64) string {
	if v == nil {
		return "n/a"
	}
	return dur(*v)
}

func optShare(v *float64) string {
	if v == nil {
		return "n/a"
	}
	return num(100**v, "%")
}

func signedPct(v *float64) string {
	if v == nil {
		return "n/a"
	}
	if *v > 0 {
		return "+" + num(*v, "%")
	}
	return num(*v, "%")
}

func cellSection(r *analysis.Result, o *Options) *section {
	s := &section{ID: "cell", Title: "The solar cell"}
	fig, absent := cellFigure(r, o)
	s.addFigure(fig, absent)
	c := r.Fit.Cell
	t := &table{Caption: "Single-diode parameters", Class: "kv", Head: []string{"parameter", "value"}}
	add := func(name string, v string) { t.Rows = append(t.Rows, []cell{{Text: name}, {Text: v, Class: "num"}}) }
	add("short-circuit current Isc", orNeedsC(c.IscA, "A", r))
	add("open-circuit voltage Voc", estimate(c.VocV, "V"))
	if c.I0A != nil {
		add("diode saturation current I0", estimate(c.I0A, "A"))
	}
	if c.N != nil {
		add("ideality factor × cells in series n", estimate(c.N, ""))
	}
	if c.RsOhm != nil {
		add("series resistance Rs", estimate(c.RsOhm, "Ω"))
	}
	if c.RshOhm != nil {
		add("shunt resistance Rsh", estimate(c.RshOhm, "Ω"))
	}
	if c.MppV != nil {
		add("maximum-power voltage", num(*c.MppV, "V"))
	}
	if c.MppW != nil {
		add("maximum power", num(*c.MppW, "W"))
	}
	if c.IscA == nil && c.VocV == nil && len(c.IV) == 0 {
		s.Absent = append(s.Absent, "No cell parameters were recovered.")
		return s
	}
	s.Tables = append(s.Tables, t)
	return s
}

func leakSection(r *analysis.Result, o *Options) *section {
	s := &section{ID: "leak", Title: "Leakage"}
	fig, absent := leakFigure(r, o)
	s.addFigure(fig, absent)
	l := r.Fit.Leak
	if l.TauS == nil && l.Ohm == nil && l.QuiescentA == nil {
		s.Absent = append(s.Absent, "No leakage parameters were recovered.")
		return s
	}
	t := &table{Caption: "The slow drains on the storage node", Class: "kv", Head: []string{"quantity", "value"}}
	add := func(name string, v string) { t.Rows = append(t.Rows, []cell{{Text: name}, {Text: v, Class: "num"}}) }
	if l.Method != "" {
		add("fitted from", string(l.Method))
	}
	add("time constant", estimate(l.TauS, "s"))
	add("leakage resistance (probe excluded)", orNeedsC(l.Ohm, "Ω", r))
	add("constant drain (quiescent currents)", orNeedsC(l.QuiescentA, "A", r))
	if l.ProbeOhm != nil {
		add("probe divider (known load)", estimate(l.ProbeOhm, "Ω"))
	}
	s.Tables = append(s.Tables, t)
	if r.EquilibriumV != nil {
		add("settling voltage without fires", estimate(r.EquilibriumV, "V"))
	}
	if q := r.Equilibrium; q != nil {
		if q.TauS != nil {
			add("time constant of the approach", estimate(q.TauS, "s"))
		}
		if q.Within1PctS != nil {
			add("time to within 1 % of the settling voltage", dur(*q.Within1PctS))
		}
	}
	return s
}

func cycleTableSection(r *analysis.Result, o *Options) *section {
	s := &section{ID: "cycle-table", Title: "The cycles"}
	if len(r.Cycles) == 0 {
		s.Absent = append(s.Absent, "The capture holds no fires, so there are no cycles to list.")
		return s
	}
	pred := map[int]*float64{}
	if r.Prediction != nil {
		for _, pc := range r.Prediction.Cycles {
			if pc.Fitted != nil {
				pred[pc.Index] = pc.Fitted.ChargeS
			}
		}
	}
	head := []string{"#", "fire at", "fire", "reset", "charge time", "pulse", "energy", "kind"}
	if len(pred) > 0 {
		head = append(head, "predicted charge (fitted)")
	}
	t := &table{Class: "cycles", Head: head}
	n := o.cycleRows()
	if n < 0 || n > len(r.Cycles) {
		n = len(r.Cycles)
	}
	for _, c := range r.Cycles[:n] {
		row := []cell{{Text: fmt.Sprint(c.Index), Class: "num"}, {Text: clock(c.FireS), Class: "num"},
			{Text: num(c.FireV, "V"), Class: "num"}, {Text: num(c.ResetV, "V"), Class: "num"},
			{Text: optDurOr(c.ChargeS, "first"), Class: "num"}, {Text: dur(c.PulseS), Class: "num"},
			{Text: optNumOr(c.EnergyJ, "J", "C unknown"), Class: "num"}, {Text: string(c.Kind)}}
		if len(pred) > 0 {
			row = append(row, cell{Text: optDurOr(pred[c.Index], "n/a"), Class: "num"})
		}
		t.Rows = append(t.Rows, row)
	}
	s.Tables = append(s.Tables, t)
	lead := fmt.Sprintf("Showing the first %d of %d cycles.", n, len(r.Cycles))
	if n == len(r.Cycles) {
		lead = fmt.Sprintf("All %d cycles.", n)
	}
	switch {
	case o.CSVHref != "":
		s.Notes = append(s.Notes, note{Text: lead + " Every cycle, with full precision, is in", LinkText: o.CSVHref, Href: o.CSVHref, After: ", beside this file."})
	case n < len(r.Cycles):
		s.Notes = append(s.Notes, note{Text: lead + " The cycle CSV that capcycle writes beside the report holds the rest."})
	default:
		s.Notes = append(s.Notes, note{Text: lead})
	}
	s.Notes = append(s.Notes, note{Text: "Fire at is the time since the capture started (h:mm:ss, or m:ss.s within the first hour). Energy is ½C(V_fire² − V_reset²), the energy one pulse takes from the capacitor."})
	return s
}

func optDurOr(v *float64, none string) string {
	if v == nil {
		return none
	}
	return dur(*v)
}

func optNumOr(v *float64, unit, none string) string {
	if v == nil {
		return none
	}
	return num(*v, unit)
}

func methodsSection() *section {
	s := &section{ID: "methods", Title: "Methods and references", Collapsed: true}
	s.Intro = []string{"What the numbers in this report rest on. Standard errors come from the covariance of each least-squares fit and assume independent, normally distributed noise; read them as a lower bound on the real uncertainty."}
	s.Items = methods
	return s
}

func safetySection() *section {
	s := &section{ID: "safety", Title: "Safety", Collapsed: true}
	s.Intro = []string{"These circuits are small, but the parts in them can still hurt you or burn. The notes below are the usual cautions, not a substitute for the part makers' ratings and your local rules: follow those first."}
	s.Items = cautions
	return s
}

// cleanPct avoids "-0 %".
func cleanPct(v float64) float64 {
	if math.Abs(v) < 5e-4 {
		return 0
	}
	return v
}
