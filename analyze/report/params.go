package report

import (
	"capcycle/analyze/analysis"
	"fmt"
	"math"
)

// tolerance is a capacitor tolerance code's band, in percent below and above nominal.
type tolerance struct{ minus, plus float64 }

// toleranceCodes are the IEC 60062 letter codes for capacitance tolerance in percent,
// as read in the secondary sources of testdata's capacitance_tolerance_codes.csv (copied
// from ../shared/refdata; IEC 60062:2016 itself was not read). B, C and D are absolute
// (pF) bands for small capacitors and have no percent meaning here.
var toleranceCodes = map[string]tolerance{
	"F": {1, 1}, "G": {2, 2}, "H": {3, 3}, "J": {5, 5}, "K": {10, 10}, "M": {20, 20},
	"N": {30, 30}, "P": {0, 100}, "S": {20, 50}, "T": {10, 50}, "Z": {20, 80},
}

// paramRow is one line of the parameter table.
type paramRow struct {
	name     string
	unit     string
	declared *float64
	fitted   *analysis.Estimate
	tolCode  string
	needsC   bool // an absolute value that needs the capacitance
	// spread: fitted.SD is the cycle-to-cycle standard deviation of a measured mean (the
	// spread of the cycles), not the mean's standard error.
	spread bool
}

// se is the standard error of the row's found value: its SD, or for a spread the
// standard error of the mean, SD/sqrt(n), read back from the 95 % interval of the mean
// (mean ± 1.96 SD/sqrt(n)). ok is false when it is unknown.
func (p paramRow) se() (float64, bool) {
	e := p.fitted
	if e == nil || e.SD == nil || !(*e.SD > 0) {
		return 0, false
	}
	if !p.spread {
		return *e.SD, true
	}
	if e.Lo95 == nil || e.Hi95 == nil || !(*e.Hi95 > *e.Lo95) {
		return 0, false
	}
	return (*e.Hi95 - *e.Lo95) / (2 * 1.96), true
}

// isSpread says whether e's SD is the spread of the cycles (a measured mean), not a
// standard error.
func isSpread(e *analysis.Estimate) bool {
	return e != nil && e.Origin == analysis.OriginMeasured
}

func paramRows(r *analysis.Result) []paramRow {
	d := r.Declared
	if d == nil {
		d = &analysis.Declared{}
	}
	var capFit *analysis.Estimate
	tol := d.CapTol
	if r.Capacitance != nil {
		c := r.Capacitance.F
		capFit = &c
		if r.Capacitance.Tol != "" {
			tol = r.Capacitance.Tol
		}
	}
	f := r.Fit
	return []paramRow{
		{name: "storage capacitance", unit: "F", declared: nonZero(d.CapF), fitted: capFit, tolCode: tol},
		{name: "trigger on voltage", unit: "V", declared: nonZero(d.OnV), fitted: f.Trigger.OnV, spread: isSpread(f.Trigger.OnV)},
		{name: "trigger release voltage", unit: "V", declared: nonZero(d.OffV), fitted: f.Trigger.OffV, spread: isSpread(f.Trigger.OffV)},
		{name: "drift of the on voltage", unit: "V/h", fitted: f.Trigger.OnDriftVPerH},
		{name: "mean period between fires", unit: "s", fitted: f.Trigger.PeriodS, spread: isSpread(f.Trigger.PeriodS)},
		{name: "mean pulse width", unit: "s", fitted: f.Trigger.PulseS, spread: isSpread(f.Trigger.PulseS)},
		{name: "load resistance", unit: "Ω", declared: nonZero(d.LoadOhm), fitted: f.Load.Ohm, needsC: true},
		{name: "load time constant", unit: "s", fitted: f.Load.TauS},
		{name: "leakage resistance", unit: "Ω", fitted: f.Leak.Ohm, needsC: true},
		{name: "leakage time constant", unit: "s", fitted: f.Leak.TauS},
		{name: "quiescent current", unit: "A", declared: nonZero(d.QuiescentA), fitted: f.Leak.QuiescentA, needsC: true},
		{name: "probe divider resistance", unit: "Ω", declared: nonZero(d.ProbeOhm), fitted: f.Leak.ProbeOhm},
		{name: "cell open-circuit voltage", unit: "V", declared: nonZero(d.VocV), fitted: f.Cell.VocV},
		{name: "cell short-circuit current", unit: "A", declared: nonZero(d.IscA), fitted: f.Cell.IscA, needsC: true},
		{name: "settling voltage", unit: "V", fitted: r.EquilibriumV},
	}
}

// paramSection is the table of declared against fitted values.
func paramSection(r *analysis.Result) *section {
	s := &section{ID: "parameters", Title: "Parameters: declared and found"}
	s.Intro = []string{"Declared values come from the profile; found values from this capture. A fitted value carries its standard error (s.e.); a value measured as the mean over the cycles carries their spread (the cycle-to-cycle standard deviation), and its mean's standard error is the spread over √n. The difference is (found − declared) / declared. Where the profile gives a tolerance, the found value is judged against it; elsewhere, against twice the standard error."}
	t := &table{Class: "params", Head: []string{"quantity", "declared", "found", "± s.e. or spread", "source", "difference", "tolerance", "agreement"}}
	var missing []string
	for _, p := range paramRows(r) {
		if p.declared == nil && p.fitted == nil {
			m := p.name
			if p.needsC && r.Capacitance == nil {
				m += " (needs the capacitance)"
			}
			missing = append(missing, m)
			continue
		}
		t.Rows = append(t.Rows, paramCells(p))
	}
	s.Tables = append(s.Tables, t)
	if len(missing) > 0 {
		s.Notes = append(s.Notes, note{Text: "Neither declared nor found: " + joinList(missing) + "."})
	}
	return s
}

func paramCells(p paramRow) []cell {
	decl := cell{Text: "not declared", Class: "num muted"}
	if p.declared != nil {
		decl = cell{Text: quantity(*p.declared, p.unit), Class: "num"}
	}
	found := cell{Text: "not determined", Class: "num muted"}
	unc, origin := cell{}, cell{}
	if p.fitted != nil {
		found, unc = foundCells(p)
		if p.fitted.Lo95 != nil && p.fitted.Hi95 != nil {
			found.Title = "95 % interval " + quantity(*p.fitted.Lo95, p.unit) + " to " + quantity(*p.fitted.Hi95, p.unit)
		}
		if sp := p.fitted.Spread; sp != nil {
			found.Title += "; spread from cycle to cycle " + quantity(*sp, p.unit)
		}
		origin = cell{Text: string(p.fitted.Origin)}
	}
	diff, tolC, agree := cell{Text: "—", Class: "num muted"}, cell{Text: "—", Class: "muted"}, cell{Text: "—", Class: "muted"}
	if p.tolCode != "" {
		tolC = cell{Text: tolText(p.tolCode)}
	}
	if p.declared != nil && p.fitted != nil && p.fitted.Origin != "declared" {
		dv := *p.declared
		fv := p.fitted.Value
		if dv != 0 {
			pct := cleanPct(100 * (fv - dv) / dv)
			sign := ""
			if pct > 0 {
				sign = "+"
			}
			diff = cell{Text: sign + num(pct, "%"), Class: "num"}
		} else {
			diff = cell{Text: quantity(fv-dv, p.unit), Class: "num"}
		}
		agree = agreement(p, dv, fv)
	} else if p.fitted != nil && p.fitted.Origin == "declared" {
		agree = cell{Text: "declared value used", Class: "muted"}
	}
	return []cell{{Text: p.name}, decl, found, unc, origin, diff, tolC, agree}
}

// foundCells are the found value and its uncertainty: "± 0.0041 V s.e." for a standard
// error, "± 0.040 V spread" for the cycle-to-cycle spread of a measured mean.
func foundCells(p paramRow) (found, unc cell) {
	e := p.fitted
	if e.SD == nil || !(*e.SD > 0) || !finite(*e.SD) || !finite(e.Value) {
		return cell{Text: quantity(e.Value, p.unit), Class: "num"}, cell{Text: "—", Class: "num muted"}
	}
	v, u, label := estimateParts(e.Value, *e.SD, p.unit)
	v, u = v+sep(label)+label, u+sep(label)+label
	if p.spread {
		return cell{Text: v, Class: "num"}, cell{Text: "± " + u + " spread", Class: "num",
			Title: "the cycle-to-cycle standard deviation, not the standard error of the mean"}
	}
	return cell{Text: v, Class: "num"}, cell{Text: "± " + u + " s.e.", Class: "num", Title: "one standard error"}
}

// agreement judges a found value against the declared one: by the tolerance code when
// there is one, else by the standard error (within 2 s.e. agrees).
func agreement(p paramRow, dv, fv float64) cell {
	if t, ok := toleranceCodes[p.tolCode]; ok && dv != 0 {
		lo, hi := dv*(1-t.minus/100), dv*(1+t.plus/100)
		if dv < 0 {
			lo, hi = hi, lo
		}
		if fv >= lo && fv <= hi {
			return cell{Text: "within tolerance", Class: "ok"}
		}
		return cell{Text: "outside tolerance", Class: "bad"}
	}
	if sd, ok := p.se(); ok {
		z := math.Abs(fv-dv) / sd
		if z <= 2 {
			return cell{Text: fmt.Sprintf("agrees (%.1f s.e.)", z), Class: "ok"}
		}
		return cell{Text: fmt.Sprintf("differs (%.1f s.e.)", z), Class: "diff"}
	}
	return cell{Text: "no uncertainty to judge by", Class: "muted"}
}

func tolText(code string) string {
	t, ok := toleranceCodes[code]
	if !ok {
		return code + " (code not known)"
	}
	if t.minus == t.plus {
		return fmt.Sprintf("%s: ±%g %%", code, t.plus)
	}
	return fmt.Sprintf("%s: −%g %% / +%g %%", code, t.minus, t.plus)
}

func joinList(s []string) string {
	switch len(s) {
	case 0:
		return ""
	case 1:
		return s[0]
	}
	out := ""
	for i, x := range s {
		switch {
		case i == 0:
			out = x
		case i == len(s)-1:
			out += " and " + x
		default:
			out += ", " + x
		}
	}
	return out
}

// nonZero is a pointer to v, or nil for 0 (not declared).
func nonZero(v float64) *float64 {
	if v == 0 {
		return nil
	}
	return &v
}
