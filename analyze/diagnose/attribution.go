package diagnose

import (
	"math"
	"sort"

	"capcycle/analyze/analysis"
	"capcycle/analyze/profile"
)

// Attribute compares every declared part that the capture measured with its declared
// value, judged against the part's own tolerance where the profile gives one (the
// capacitor's IEC 60062 code, the trigger's stated accuracy, the electrolytic leakage
// limit) and against two standard errors of the measurement elsewhere. The list is sorted
// by how far outside its band each part lies, the largest contradiction first. It returns
// nil without a profile.
func Attribute(r *analysis.Result, p *profile.Profile) []analysis.Attribution {
	if p == nil {
		return nil
	}
	var out []analysis.Attribution
	add := func(part, unit string, declared float64, e *analysis.Estimate, minus, plus float64, basis string) {
		if e == nil || !(declared > 0) || math.IsNaN(e.Value) || math.IsInf(e.Value, 0) {
			return
		}
		diff := 100 * (e.Value/declared - 1)
		if basis == "" { // no stated tolerance: two standard errors of the measurement
			if e.SD == nil || !(*e.SD > 0) {
				return
			}
			band := 200 * *e.SD / declared
			minus, plus, basis = band, band, "two standard errors"
		}
		out = append(out, analysis.Attribution{Part: part, Unit: unit, Declared: declared, Measured: e.Value, SD: e.SD,
			DiffPct: diff, TolMinusPct: minus, TolPlusPct: plus, Basis: basis, Within: diff >= -minus && diff <= plus})
	}
	if c := r.Capacitance; c != nil && c.F.Origin == "measured" {
		t := p.Storage.Tolerance
		add("storage.cap_f", "F", p.Storage.CapF, &c.F, t.MinusPct, t.PlusPct, "tolerance code "+t.String())
	}
	acc, basis := p.Trigger.AccuracyPct, "stated accuracy"
	if acc == 0 {
		basis = ""
	}
	fires := false
	for _, c := range r.Cycles {
		if c.Kind == analysis.CycleFull {
			fires = true
			break
		}
	}
	if fires {
		add("trigger.on_v", "V", p.Trigger.OnV, r.Fit.Trigger.OnV, acc, acc, basis)
		if p.Trigger.Release == profile.ReleaseFixed {
			add("trigger.off_v", "V", p.Trigger.OffV, r.Fit.Trigger.OffV, acc, acc, basis)
		}
	}
	if p.Load.Kind == profile.Resistor {
		add("load.ohm", "Ω", p.Load.Ohm, r.Fit.Load.Ohm, 0, 0, "")
	}
	if lk := r.Fit.Leak.Ohm; lk != nil && lk.Value > 0 && p.Storage.Kind == profile.Electrolytic && p.Storage.RatedV > 0 {
		// The datasheet gives a ceiling, not a nominal value: the leakage at rated voltage
		// is judged against it (from nothing up to the limit).
		limit, _ := profile.ElectrolyticLeakLimitA(p.Storage.CapF, p.Storage.RatedV)
		if limit > 0 {
			at := &analysis.Estimate{Value: p.Storage.RatedV / lk.Value}
			if lk.SD != nil {
				sd := at.Value * *lk.SD / lk.Value
				at.SD = &sd
			}
			add("storage.leak_a (at rated voltage)", "A", limit, at, 100, 0, "datasheet limit 0.01·C·V or 3 µA")
		}
	}
	if q := r.Fit.Leak.QuiescentA; q != nil && p.Trigger.QuiescentA > 0 {
		add("trigger.quiescent_a", "A", p.Trigger.QuiescentA, q, 0, 0, "")
	}
	sort.SliceStable(out, func(i, j int) bool { return excess(out[i]) > excess(out[j]) })
	return out
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
