package report

import (
	"capcycle/analyze/analysis"
	"fmt"
	"html/template"
	"strings"
)

// Sentence is the report's one-sentence verdict, kept as parts so that every number in
// it can be traced to the field of the analysis JSON it shows.
type Sentence struct {
	Parts []Part
}

// Part is a stretch of a Sentence: plain text, or a number shown as Text that comes
// from the analysis JSON at Path (dotted keys, as in "fit.trigger.on_v.value"; counts
// read "len(cycles)" or "count(cycles.kind=full)").
type Part struct {
	Text  string
	Path  string  // empty for plain text
	Value float64 // the JSON value behind Text, when Path is set
}

// String returns the sentence as plain text.
func (s Sentence) String() string {
	var b strings.Builder
	for _, p := range s.Parts {
		b.WriteString(p.Text)
	}
	return b.String()
}

// HTML returns the sentence with each number in a span that names its JSON source in
// data-json (and, as a tooltip, in title).
func (s Sentence) HTML() template.HTML {
	var b strings.Builder
	for _, p := range s.Parts {
		if p.Path == "" {
			b.WriteString(template.HTMLEscapeString(p.Text))
			continue
		}
		fmt.Fprintf(&b, `<span class="n" data-json="%s" title="%s">%s</span>`,
			template.HTMLEscapeString(p.Path), template.HTMLEscapeString(p.Path), template.HTMLEscapeString(p.Text))
	}
	return template.HTML(b.String())
}

type sentence struct{ parts []Part }

func (s *sentence) text(t string) { s.parts = append(s.parts, Part{Text: t}) }
func (s *sentence) num(path string, v float64, shown string) {
	s.parts = append(s.parts, Part{Text: shown, Path: path, Value: v})
}
func (s *sentence) count(path string, n int) {
	s.num(path, float64(n), fmt.Sprint(n))
}

// Verdict sums up r in one sentence, leading with a word a builder can act on:
//
//   - "Works": full cycles and no warnings;
//   - "Works, with warnings" / "Fires, with faults": full cycles, and findings of that
//     severity (listed below the verdict in the report);
//   - "Chatters": fires, but none of them a full cycle;
//   - "Stalls": no fire at all; the settling voltage follows when it is known;
//   - "No data": no samples.
func Verdict(r *analysis.Result) Sentence { return verdict(r, " below") }

// Summary is Verdict worded for use away from the report (a terminal, a log): it points
// to the findings "in the report" rather than "below".
func Summary(r *analysis.Result) Sentence { return verdict(r, " in the report") }

// verdict is Verdict with the words that point to the findings ("below", or " in its
// report" on the comparison page, which does not list them).
func verdict(r *analysis.Result, where string) Sentence {
	var s sentence
	full, chatter := analysis.CountCycles(r.Cycles)
	faults, warns := 0, 0
	for _, f := range r.Findings {
		switch f.Severity {
		case analysis.Fault:
			faults++
		case analysis.Warn:
			warns++
		}
	}
	switch {
	case r.Samples == 0:
		s.text("No data: the capture holds no samples.")
		return Sentence{s.parts}
	case len(r.Cycles) == 0:
		s.stalls(r)
	case full == 0:
		s.text("Chatters: ")
		s.count("len(cycles)", len(r.Cycles))
		s.text(plural(len(r.Cycles), " fire", " fires") + " in ")
		s.num("duration_s", r.DurationS, dur(r.DurationS))
		s.text(", none of them a full cycle")
	default:
		s.works(r, full, chatter, faults, warns)
	}
	s.seeFindings(faults, warns, where)
	s.text(".")
	return Sentence{s.parts}
}

// stalls words a capture without a fire: how long, and where the voltage settles against
// the trigger, with enough digits that a level just short of the trigger does not print
// as the trigger's own value.
func (s *sentence) stalls(r *analysis.Result) {
	s.text("Stalls: no fire in ")
	s.num("duration_s", r.DurationS, dur(r.DurationS))
	if r.EquilibriumV == nil {
		s.text(", and where the voltage settles could not be determined")
		return
	}
	eq := r.EquilibriumV.Value
	on, origin, haveOn := triggerOn(r)
	sig := 3
	for haveOn && sig < 6 && eq != on && numSig(eq, "V", sig) == numSig(on, "V", sig) {
		sig++
	}
	s.text("; the voltage settles at ")
	s.num("equilibrium_v.value", eq, numSig(eq, "V", sig))
	if !haveOn {
		return
	}
	path := "fit.trigger.on_v.value"
	if origin == "declared" {
		path = "declared.on_v"
	}
	if eq < on {
		s.text(", below the ")
	} else {
		s.text(", though the ")
	}
	s.num(path, on, numSig(on, "V", sig))
	s.text(" trigger (" + origin + ")")
	if eq >= on {
		s.text(" is lower")
	}
}

// works words a capture with full cycles: the word a builder acts on, the count, the
// period, the trigger's voltages and how well the fitted model predicts the charge.
func (s *sentence) works(r *analysis.Result, full, chatter, faults, warns int) {
	switch {
	case faults > 0:
		s.text("Fires, with faults: ")
	case warns > 0:
		s.text("Works, with warnings: ")
	default:
		s.text("Works: ")
	}
	s.count("count(cycles.kind=full)", full)
	s.text(plural(full, " full cycle", " full cycles") + " in ")
	s.num("duration_s", r.DurationS, dur(r.DurationS))
	if chatter > 0 {
		s.text(" (and ")
		s.count("count(cycles.kind=chatter)", chatter)
		s.text(" chatter)")
	}
	if e := r.Fit.Trigger.PeriodS; e != nil {
		s.text(", one every ")
		s.num("fit.trigger.period_s.value", e.Value, dur(e.Value))
		s.text(" on average")
	}
	on, off := r.Fit.Trigger.OnV, r.Fit.Trigger.OffV
	if on != nil {
		s.text(", firing at ")
		s.num("fit.trigger.on_v.value", on.Value, num(on.Value, "V"))
	}
	if off != nil {
		if on != nil {
			s.text(" and resetting at ")
		} else {
			s.text(", resetting at ")
		}
		s.num("fit.trigger.off_v.value", off.Value, num(off.Value, "V"))
	}
	if p := r.Prediction; p != nil && p.Fitted != nil && p.Fitted.MAPEPct != nil {
		s.text("; the fitted model predicts the charge time to within ")
		s.num("prediction.fitted.mape_pct", *p.Fitted.MAPEPct, num(*p.Fitted.MAPEPct, "%"))
		s.text(" on average")
	}
}

// seeFindings points to the faults and warnings (where: " below", " in the report").
func (s *sentence) seeFindings(faults, warns int, where string) {
	if faults+warns == 0 {
		return
	}
	s.text("; see ")
	if faults > 0 {
		s.count("count(findings.severity=fault)", faults)
		s.text(plural(faults, " fault", " faults"))
	}
	if faults > 0 && warns > 0 {
		s.text(" and ")
	}
	if warns > 0 {
		s.count("count(findings.severity=warn)", warns)
		s.text(plural(warns, " warning", " warnings"))
	}
	s.text(where)
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}
