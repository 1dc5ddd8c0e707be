package whatif

import (
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"capcycle/analyze/units"
)

// WriteText writes the report as a table for a person: one column for the circuit as it
// is, one for the changed circuit, one for each proposed value.
func (r *Report) WriteText(w io.Writer) error {
	fmt.Fprintf(w, "%s at %.4g W/m² (%s), %.3g sun hours a day\n", r.Profile, r.LightWm2, r.LightFrom, r.SunHours)
	if r.Note != "" {
		fmt.Fprintf(w, "note: %s\n", r.Note)
	}
	fmt.Fprintln(w)
	cols := []string{"now"}
	rows := []Figures{r.Base}
	if r.Changed != nil {
		cols = append(cols, strings.Join(r.Changes, ", "))
		rows = append(rows, *r.Changed)
	}
	for _, p := range r.Proposals {
		cols = append(cols, r.Vary+"="+p.Text+" ("+p.Label+")")
		rows = append(rows, p.Figures)
	}
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "\t%s\n", strings.Join(cols, "\t"))
	for _, l := range textLines {
		vals := make([]string, len(rows))
		for i, f := range rows {
			vals[i] = l.get(f)
		}
		fmt.Fprintf(tw, "%s\t%s\n", l.name, strings.Join(vals, "\t"))
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	if r.EnergyPerDayFrom == "measured" {
		fmt.Fprintln(w, "\nenergy per day: what the capture's fires delivered a day, the other columns scaled by the model's ratio to it.")
	}
	if r.Target != "" {
		fmt.Fprintf(w, "\ntarget %s by %s: the exact value and its neighbours in the standard series (IEC 60063).\n", r.Target, r.Vary)
	}
	return nil
}

// textLines are the rows of the table, in order.
var textLines = []struct {
	name string
	get  func(Figures) string
}{
	{"fires", func(f Figures) string {
		if f.Fires {
			return "yes"
		}
		return "no: settles at " + opt(f.EquilibriumV, units.Volt)
	}},
	{"period", func(f Figures) string { return opt(f.PeriodS, units.Second) }},
	{"charge time", func(f Figures) string { return opt(f.ChargeS, units.Second) }},
	{"pulse", func(f Figures) string { return opt(f.PulseS, units.Second) }},
	{"fire / reset", func(f Figures) string { return opt(f.FireV, units.Volt) + " / " + opt(f.ResetV, units.Volt) }},
	{"energy per pulse", func(f Figures) string { return opt(f.EnergyJ, "J") }},
	{"duty cycle", func(f Figures) string {
		if f.DutyCycle == nil {
			return "—"
		}
		return fmt.Sprintf("%.3g %%", 100**f.DutyCycle)
	}},
	{"fires per hour", func(f Figures) string {
		if f.FiresPerHour == nil {
			return "—"
		}
		return fmt.Sprintf("%.4g", *f.FiresPerHour)
	}},
	{"energy per day", func(f Figures) string { return opt(f.EnergyPerDayJ, "J") }},
}

func opt(v *float64, unit string) string {
	switch {
	case v == nil:
		return "—"
	case unit == units.Second:
		return units.Duration(*v)
	}
	return units.Format(*v, unit)
}
