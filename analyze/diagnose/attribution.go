package diagnose

import (
	"math"
	"sort"

	"capcycle/analyze/analysis"
	"capcycle/analyze/profile"
)

// defaultResistorTolPct is the tolerance taken for a load resistor when the profile
// gives none: ±5 %, the usual tolerance of a film resistor (common practice, no source).
const defaultResistorTolPct = 5.0

// Attribute compares every declared part that the capture measured with its declared
// value, like with like, and says whether the two are consistent.
//
// A part differs only when the difference exceeds the combined uncertainty: the part's
// own tolerance band (the capacitor's IEC 60062 code, the trigger's stated accuracy, a
// resistor's ±5 % by default) widened on each side by two standard uncertainties of the
// measurement (whose SD already carries the capacitance's uncertainty for ohms and
// amperes). This is the acceptance zone of a conformity decision with the measurement's
// expanded uncertainty added to the tolerance (JCGM 106:2012, 8.3, where the guard band
// is taken the other way, for the benefit of the doubt). Where no tolerance applies the
// band is the two standard uncertainties alone.
//
// Each part is compared with what the capture measures of that very part: the storage
// node's release of a hold-capacitor trigger with the release the nominal model predicts
// (not the supervisor's own threshold), the declared leakage with the leakage measured
// at the same voltage on a dark decay (not on the approach to a plateau, which includes
// the cell). The cell's short-circuit current is declared at full sun and measured at
// the capture's light, which the voltage alone does not give: it is not compared.
//
// The list is sorted by how far outside its band each part lies, the largest
// contradiction first. It returns nil without a profile.
func Attribute(r *analysis.Result, p *profile.Profile) []analysis.Attribution {
	if p == nil {
		return nil
	}
	var out []analysis.Attribution
	add := func(part, unit string, declared float64, e *analysis.Estimate, minus, plus float64, basis string) {
		if a, ok := judge(part, unit, declared, e, minus, plus, basis); ok {
			out = append(out, a)
		}
	}
	if c := r.Capacitance; c != nil && c.F.Origin == analysis.OriginMeasured {
		t := p.Storage.Tolerance
		add("storage.cap_f", "F", p.Storage.CapF, &c.F, t.MinusPct, t.PlusPct, "tolerance code "+t.String())
	}
	if fires(r) {
		triggerParts(r, p, add)
	}
	if p.Load.Kind == profile.Resistor {
		add("load.ohm", "Ω", p.Load.Ohm, r.Fit.Load.Ohm, defaultResistorTolPct, defaultResistorTolPct,
			"±5 % (film resistor, common practice, no source)")
	}
	leakParts(r, p, add)
	if q := r.Fit.Leak.QuiescentA; q != nil && p.Trigger.QuiescentA > 0 {
		add("trigger.quiescent_a", "A", p.Trigger.QuiescentA, q, 0, 0, "")
	}
	sort.SliceStable(out, func(i, j int) bool { return excess(out[i]) > excess(out[j]) })
	return out
}

// adder appends one comparison: the part, its unit, the declared value, the measured
// estimate and the tolerance band (% below and above) with its basis ("" for none).
type adder func(part, unit string, declared float64, e *analysis.Estimate, minus, plus float64, basis string)

// judge makes one comparison, the band widened by two standard uncertainties of e; ok is
// false when there is nothing to compare (no estimate, no declared value, or no band
// at all).
func judge(part, unit string, declared float64, e *analysis.Estimate, minus, plus float64, basis string) (analysis.Attribution, bool) {
	if e == nil || !(declared > 0) || math.IsNaN(e.Value) || math.IsInf(e.Value, 0) {
		return analysis.Attribution{}, false
	}
	diff := 100 * (e.Value/declared - 1)
	u := 0.0
	if e.SD != nil && *e.SD > 0 && !math.IsInf(*e.SD, 0) {
		u = 200 * *e.SD / declared
	}
	switch {
	case basis == "" && u == 0:
		return analysis.Attribution{}, false
	case basis == "":
		basis = "two standard uncertainties"
	case u > 0:
		basis += " and two standard uncertainties"
	}
	minus, plus = minus+u, plus+u
	return analysis.Attribution{Part: part, Unit: unit, Declared: declared, Measured: e.Value, SD: e.SD,
		DiffPct: diff, TolMinusPct: minus, TolPlusPct: plus, Basis: basis, Within: diff >= -minus && diff <= plus}, true
}

func fires(r *analysis.Result) bool {
	for _, c := range r.Cycles {
		if c.Kind == analysis.CycleFull {
			return true
		}
	}
	return false
}

// triggerParts compares the on voltage with the declared one, and the release: with the
// declared off_v for a fixed release, with the nominal model's predicted release of the
// storage node for a hold capacitor (which sets it).
func triggerParts(r *analysis.Result, p *profile.Profile, add adder) {
	acc, basis := p.Trigger.AccuracyPct, "stated accuracy"
	if acc == 0 {
		basis = ""
	}
	add("trigger.on_v", "V", p.Trigger.OnV, r.Fit.Trigger.OnV, acc, acc, basis)
	switch p.Trigger.Release {
	case profile.ReleaseFixed:
		add("trigger.off_v", "V", p.Trigger.OffV, r.Fit.Trigger.OffV, acc, acc, basis)
	case profile.ReleaseHold:
		if v, ok := predictedRelease(r); ok {
			b := "the nominal model's release"
			if basis != "" {
				b += ", " + basis
			}
			add("trigger.off_v (release the model predicts)", "V", v, r.Fit.Trigger.OffV, acc, acc, b)
		}
	}
}

// predictedRelease is the mean reset voltage the nominal model predicts for the measured
// cycles.
func predictedRelease(r *analysis.Result) (float64, bool) {
	if r.Prediction == nil {
		return 0, false
	}
	s, n := 0.0, 0
	for _, c := range r.Prediction.Cycles {
		if c.Nominal != nil && c.Nominal.ResetV != nil && !math.IsNaN(*c.Nominal.ResetV) {
			s += *c.Nominal.ResetV
			n++
		}
	}
	if n == 0 {
		return 0, false
	}
	return s / float64(n), true
}

// leakParts compares the capacitor's leakage, measured on a dark decay only (the
// approach to a plateau includes the cell's own slope): with the declared leakage at
// the voltage it was declared at, or, when none is declared, with the electrolytic
// datasheet ceiling at the rated voltage (a ceiling, not a nominal value: judged from
// nothing up to it).
func leakParts(r *analysis.Result, p *profile.Profile, add adder) {
	lk := r.Fit.Leak.Ohm
	if lk == nil || !(lk.Value > 0) || r.Fit.Leak.Method != analysis.LeakDarkDecay {
		return
	}
	at := func(v float64) *analysis.Estimate {
		e := &analysis.Estimate{Value: v / lk.Value}
		if lk.SD != nil {
			sd := e.Value * *lk.SD / lk.Value
			e.SD = &sd
		}
		return e
	}
	if s := p.Storage; s.LeakA > 0 && s.LeakV > 0 {
		add("storage.leak_a", "A", s.LeakA, at(s.LeakV), 0, 0, "")
		return
	}
	if p.Storage.Kind == profile.Electrolytic && p.Storage.RatedV > 0 {
		limit, _ := profile.ElectrolyticLeakLimitA(p.Storage.CapF, p.Storage.RatedV)
		if limit > 0 {
			add("storage.leak_a (at rated voltage)", "A", limit, at(p.Storage.RatedV), 100, 0, "datasheet limit 0.01·C·V or 3 µA")
		}
	}
}

// excess is how many band-widths a part lies outside its band (0 inside it).
func excess(a analysis.Attribution) float64 {
	switch {
	case a.DiffPct > a.TolPlusPct:
		return (a.DiffPct - a.TolPlusPct) / math.Max(a.TolPlusPct, 1)
	case a.DiffPct < -a.TolMinusPct:
		return (-a.TolMinusPct - a.DiffPct) / math.Max(a.TolMinusPct, 1)
	}
	return 0
}
