package report

import (
	"capcycle/analyze/analysis"
	"capcycle/analyze/units"
	"fmt"
	"io"
	"strings"
)

// WriteText writes the analysis for a terminal: the verdict (the report's own words),
// each finding with what to try, then the measured circuit in a few lines and the notes.
// Times are in the units a person reads them in (units.Duration).
func WriteText(w io.Writer, res *analysis.Result) error {
	ew := &errWriter{w: w}
	writeVerdict(ew, res)
	writeMeasured(ew, res)
	return ew.err
}

// errWriter keeps the first write error, so the writing code need not check each line.
type errWriter struct {
	w   io.Writer
	err error
}

func (e *errWriter) Write(p []byte) (int, error) {
	if e.err != nil {
		return len(p), nil
	}
	n, err := e.w.Write(p)
	e.err = err
	return n, nil
}

func writeVerdict(w io.Writer, res *analysis.Result) {
	fmt.Fprintf(w, "%s\n", Verdict(res).String())
	for _, f := range res.Findings {
		fmt.Fprintf(w, "  %s %s: %s\n", strings.ToUpper(string(f.Severity)), f.Code, f.Message)
		if f.Suggestion != "" {
			fmt.Fprintf(w, "    what to try: %s\n", f.Suggestion)
		}
	}
	fmt.Fprintln(w)
}

func writeMeasured(w io.Writer, res *analysis.Result) {
	full, chatter := analysis.CountCycles(res.Cycles)
	fmt.Fprintf(w, "%s: %d samples over %s", res.Source.Path, res.Samples, units.Duration(res.DurationS))
	if res.Noise != nil {
		fmt.Fprintf(w, ", noise %s", units.Format(res.Noise.RMSV, units.Volt))
	}
	fmt.Fprintln(w)
	if c := res.Source.Columns; c != nil {
		fmt.Fprintf(w, "columns: time from %q, volts from %q", c.Time, c.Volt)
		if c.Current != "" {
			fmt.Fprintf(w, ", load current from %q", c.Current)
		}
		fmt.Fprintln(w)
	}
	fmt.Fprintf(w, "cycles: %d full, %d chatter\n", full, chatter)
	if c := res.Capacitance; c != nil {
		how := string(c.F.Origin)
		switch c.Method {
		case analysis.CapCurrentChannel:
			how = fmt.Sprintf("measured from the load current at %d fires", c.Pulses)
		case analysis.CapCalibrationRes:
			how = "measured through the calibration resistor"
		}
		fmt.Fprintf(w, "capacitance: %s (%s)\n", estStr(&c.F, units.Farad), how)
	}
	t := res.Fit.Trigger
	fmt.Fprintf(w, "trigger: %s", t.Kind)
	if t.OnV != nil {
		fmt.Fprintf(w, ", fires at %s", estStr(t.OnV, units.Volt))
	}
	if t.OffV != nil {
		fmt.Fprintf(w, ", resets at %s", estStr(t.OffV, units.Volt))
	}
	fmt.Fprintln(w)
	if l := res.Fit.Load; l.TauS != nil {
		fmt.Fprintf(w, "load: pulse time constant %s", durStr(l.TauS))
		if l.Ohm != nil {
			fmt.Fprintf(w, ", %s", estStr(l.Ohm, units.Ohm))
		}
		if l.Resistive != nil && !*l.Resistive {
			fmt.Fprint(w, " (not a plain resistor: a motor?)")
		}
		fmt.Fprintln(w)
	}
	if l := res.Fit.Leak; l.TauS != nil {
		fmt.Fprintf(w, "leak (%s): time constant %s", l.Method, durStr(l.TauS))
		if l.Ohm != nil {
			fmt.Fprintf(w, ", %s", estStr(l.Ohm, units.Ohm))
			if l.ProbeOhm != nil {
				fmt.Fprintf(w, " besides the probe's %s", units.Format(l.ProbeOhm.Value, units.Ohm))
			}
		}
		if l.QuiescentA != nil {
			fmt.Fprintf(w, ", constant drain %s", estStr(l.QuiescentA, units.Ampere))
		}
		fmt.Fprintln(w)
	}
	if c := res.Fit.Cell; c.IscA != nil && c.VocV != nil {
		fmt.Fprintf(w, "cell: Isc %s, Voc %s\n", units.Format(c.IscA.Value, units.Ampere), units.Format(c.VocV.Value, units.Volt))
	}
	if res.EquilibriumV != nil {
		fmt.Fprintf(w, "settles at %s", estStr(res.EquilibriumV, units.Volt))
		if res.Equilibrium != nil && res.Equilibrium.Within1PctS != nil {
			fmt.Fprintf(w, " (within 1 %% after %s)", units.Duration(*res.Equilibrium.Within1PctS))
		}
		fmt.Fprintln(w)
	}
	for _, n := range res.Notes {
		fmt.Fprintf(w, "note: %s\n", n)
	}
}

func estStr(e *analysis.Estimate, unit string) string {
	s := units.Format(e.Value, unit)
	if e.SD != nil {
		s += " ± " + units.Format(*e.SD, unit)
	}
	return s
}

func durStr(e *analysis.Estimate) string {
	s := units.Duration(e.Value)
	if e.SD != nil {
		s += " ± " + units.Duration(*e.SD)
	}
	return s
}
