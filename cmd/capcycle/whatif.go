package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"strings"
	"text/tabwriter"

	"capcycle/analyze"
	"capcycle/analyze/model"
	"capcycle/analyze/predict"
	"capcycle/analyze/profile"
	"capcycle/analyze/units"
	"capcycle/analyze/whatif"
)

// whatifCommand is "capcycle whatif".
func whatifCommand() *command {
	return &command{
		name:    "whatif",
		summary: "predict the effect of changing parts, or search for parts that reach a target",
		built:   true,
		run:     runWhatif,
	}
}

// listFlag collects a repeatable string flag.
type listFlag []string

func (l *listFlag) String() string     { return strings.Join(*l, " ") }
func (l *listFlag) Set(s string) error { *l = append(*l, s); return nil }

func runWhatif(ctx context.Context, args []string, e *env) error {
	var sets listFlag
	var profPath, analysisPath, target, vary string
	var asJSON bool
	light := units.NewValue(0, "W/m²", units.NonNegative)
	sun := units.NewValue(0, "h", units.NonNegative)
	fs := newFlags("whatif", "[--profile P] [--analysis A.json] [--set part=value ...] [--target figure=value [--vary part]]", e.stderr,
		"capcycle whatif --profile wren.toml --analysis wren.json --set cap=10000u --set hold=4.7u",
		"capcycle whatif --profile wren.toml --analysis wren.json --target pulse=0.5s",
		"capcycle whatif --profile fern.toml --light 80 --set on=2.4 --json")
	fs.StringVar(&profPath, "profile", "", "bench profile (TOML) with the declared circuit")
	fs.StringVar(&analysisPath, "analysis", "", "analysis JSON (capcycle analyze --json): use its fitted parts and measured light")
	fs.Var(&sets, "set", "a change, part=value (repeatable); parts: "+strings.Join(whatif.PartNames(), ", "))
	fs.StringVar(&target, "target", "", "a figure to reach: pulse=0.5s, period=30s, charge=20s or energy=5mJ")
	fs.StringVar(&vary, "vary", "", "the part the target search varies (default: hold for a hold trigger's pulse, load for other pulses, cap otherwise)")
	fs.Var(light, "light", "irradiance on the cell, W/m² (default: measured in the analysis, else the profile's light)")
	fs.Var(sun, "sun-hours", "hours a day at that light, h, for the energy per day (default: from the analysis or the profile's day, else 8)")
	fs.BoolVar(&asJSON, "json", false, "write the answer as JSON to standard output")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return usageErrorf("unexpected argument %q (changes go in --set)", fs.Arg(0))
	}
	if profPath == "" && analysisPath == "" {
		return usageErrorf("give --profile (the declared circuit), --analysis (the measured one), or both")
	}
	var (
		circuit *model.Circuit
		plight  model.Light
		res     *analyze.Result
		name    string
		note    string
	)
	if analysisPath != "" {
		r, err := readAnalysis(analysisPath)
		if err != nil {
			return inputError(err)
		}
		res, name = r, r.Source.Profile
	}
	if profPath != "" {
		p, err := profile.Load(profPath)
		if err != nil {
			return inputError(err)
		}
		nominal, l, err := model.FromProfile(p)
		if err != nil {
			return inputError(fmt.Errorf("%s: %w", profPath, err))
		}
		circuit, plight, name = nominal, l, p.Name
		if res != nil {
			circuit, _ = predict.Fitted(nominal, res)
		}
	} else {
		c, normalised, err := predict.FromResult(res)
		if err != nil {
			return inputError(fmt.Errorf("%s: %w; give --profile too", analysisPath, err))
		}
		circuit = c
		if normalised {
			note = "the capacitance is not known: times and voltages are predicted, energies are per farad"
		}
	}
	var changes []whatif.Change
	for _, s := range sets {
		ch, err := whatif.ParseChange(s)
		if err != nil {
			return usageErrorf("--set %w", err)
		}
		changes = append(changes, ch)
	}
	g, hours, how := pickLight(light.V, sun.V, res, circuit, plight)
	if g <= 0 {
		return usageErrorf("no light to predict at: give --light W/m², an --analysis, or a [light] table in the profile")
	}
	ans := whatifAnswer{Profile: name, LightWm2: g, SunHours: hours, LightFrom: how, Note: note}
	base, err := whatif.Evaluate(circuit, g, hours)
	if err != nil {
		return workErrorf("%w", err)
	}
	ans.Base = figuresOf(base)
	changed := circuit
	if len(changes) > 0 {
		var g2 float64
		changed, g2, err = whatif.Apply(circuit, g, changes)
		if err != nil {
			return usageErrorf("--set: %w", err)
		}
		a, err := whatif.Evaluate(changed, g2, hours)
		if err != nil {
			return workErrorf("%w", err)
		}
		f := figuresOf(a)
		ans.Changed = &f
		for _, ch := range changes {
			ans.Changes = append(ans.Changes, ch.String())
		}
		g = g2
	}
	if target != "" {
		tg, err := whatif.ParseTarget(target)
		if err != nil {
			return usageErrorf("--target: %w", err)
		}
		part := vary
		if part == "" {
			part = whatif.DefaultPart(changed, tg)
		}
		pp, err := whatif.LookupPart(part)
		if err != nil {
			return usageErrorf("--vary: %w", err)
		}
		props, err := whatif.Search(changed, g, hours, tg, pp.Name)
		if err != nil {
			return workErrorf("%w", err)
		}
		ans.Target = target
		ans.Vary = pp.Name
		for _, pr := range props {
			ans.Proposals = append(ans.Proposals, proposalOut{Label: pr.Label, Value: pr.Value,
				Text: units.Format(pr.Value, pp.Unit), Figures: figuresOf(pr.Answer)})
		}
	}
	if asJSON {
		enc := json.NewEncoder(e.stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(ans)
	}
	ans.print(e.stdout)
	return nil
}

func readAnalysis(path string) (*analyze.Result, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	var r analyze.Result
	if err := json.Unmarshal(data, &r); err != nil {
		return nil, fmt.Errorf("%s: not an analysis JSON: %w", path, err)
	}
	if r.Schema != analyze.Schema {
		return nil, fmt.Errorf("%s: schema %q, want %q", path, r.Schema, analyze.Schema)
	}
	return &r, nil
}

// pickLight chooses the irradiance and the sun hours: the flags, else what the analysis
// measured, else the profile's light (a constant level, or the mean over the daylight hours
// of its windowsill day).
func pickLight(flagG, flagH float64, res *analyze.Result, c *model.Circuit, l model.Light) (g, hours float64, how string) {
	g, hours = flagG, flagH
	how = "--light"
	if g <= 0 && res != nil {
		g, how = predict.MeasuredLight(res, c), "measured in the analysis"
		if hours <= 0 && res.DurationS >= 20*3600 {
			hours = litHours(res)
		}
	}
	if l != nil && (g <= 0 || hours <= 0) {
		mean, lit := dayLight(l)
		if g <= 0 {
			g, how = mean, "the profile's light, mean over its daylight hours"
		}
		if hours <= 0 {
			hours = lit
		}
	}
	if hours <= 0 {
		hours = 8
	}
	return g, hours, how
}

// dayLight samples a light over its first 24 hours every minute: the mean irradiance over
// the minutes above 5 W/m², and how many hours those are.
func dayLight(l model.Light) (mean, hours float64) {
	var sum float64
	var n int
	for t := 0.0; t < 86400; t += 60 {
		if g := l.IrradianceWm2(t); g > 5 {
			sum += g
			n++
		}
	}
	if n == 0 {
		return 0, 0
	}
	return sum / float64(n), float64(n) / 60
}

// litHours is the share of a day-long capture with measurable light, in hours per day.
func litHours(res *analyze.Result) float64 {
	if len(res.Light) < 2 {
		return 0
	}
	var lit, all float64
	for i := 1; i < len(res.Light); i++ {
		dt := res.Light[i].TS - res.Light[i-1].TS
		all += dt
		if res.Light[i].Level > 0.05 {
			lit += dt
		}
	}
	if all <= 0 {
		return 0
	}
	return 24 * lit / all
}

type figuresOut struct {
	Fires         bool     `json:"fires"`
	PeriodS       *float64 `json:"period_s"`
	ChargeS       *float64 `json:"charge_s"`
	PulseS        *float64 `json:"pulse_s"`
	FireV         *float64 `json:"fire_v"`
	ResetV        *float64 `json:"reset_v"`
	EnergyJ       *float64 `json:"energy_j"`
	DutyCycle     *float64 `json:"duty_cycle"`
	FiresPerHour  *float64 `json:"fires_per_h"`
	EnergyPerDayJ *float64 `json:"energy_per_day_j"`
	EquilibriumV  *float64 `json:"equilibrium_v"`
}

func finite(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

func figuresOf(a whatif.Answer) figuresOut {
	f := figuresOut{Fires: a.Fires, EquilibriumV: finite(a.EquilibriumV)}
	if a.Fires {
		f.PeriodS, f.ChargeS, f.PulseS = finite(a.PeriodS), finite(a.ChargeS), finite(a.PulseS)
		f.FireV, f.ResetV, f.EnergyJ = finite(a.FireV), finite(a.ResetV), finite(a.EnergyJ)
		f.DutyCycle, f.FiresPerHour, f.EnergyPerDayJ = finite(a.DutyCycle), finite(a.FiresPerHour), finite(a.EnergyPerDayJ)
	}
	return f
}

type proposalOut struct {
	Label   string     `json:"label"`
	Value   float64    `json:"value"`
	Text    string     `json:"text"`
	Figures figuresOut `json:"figures"`
}

type whatifAnswer struct {
	Profile   string        `json:"profile"`
	Note      string        `json:"note,omitempty"`
	LightWm2  float64       `json:"light_wm2"`
	LightFrom string        `json:"light_from"`
	SunHours  float64       `json:"sun_hours"`
	Base      figuresOut    `json:"base"`
	Changes   []string      `json:"changes,omitempty"`
	Changed   *figuresOut   `json:"changed,omitempty"`
	Target    string        `json:"target,omitempty"`
	Vary      string        `json:"vary,omitempty"`
	Proposals []proposalOut `json:"proposals,omitempty"`
}

func (a *whatifAnswer) print(w io.Writer) {
	fmt.Fprintf(w, "%s at %.4g W/m² (%s), %.3g sun hours a day\n", a.Profile, a.LightWm2, a.LightFrom, a.SunHours)
	if a.Note != "" {
		fmt.Fprintf(w, "note: %s\n", a.Note)
	}
	fmt.Fprintln(w)
	cols := []string{"now"}
	rows := []figuresOut{a.Base}
	if a.Changed != nil {
		cols = append(cols, strings.Join(a.Changes, ", "))
		rows = append(rows, *a.Changed)
	}
	for _, p := range a.Proposals {
		cols = append(cols, a.Vary+"="+p.Text+" ("+p.Label+")")
		rows = append(rows, p.Figures)
	}
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "\t%s\n", strings.Join(cols, "\t"))
	line := func(name string, get func(figuresOut) string) {
		vals := make([]string, len(rows))
		for i, r := range rows {
			vals[i] = get(r)
		}
		fmt.Fprintf(tw, "%s\t%s\n", name, strings.Join(vals, "\t"))
	}
	opt := func(v *float64, unit string) string {
		if v == nil {
			return "—"
		}
		return units.Format(*v, unit)
	}
	line("fires", func(f figuresOut) string {
		if f.Fires {
			return "yes"
		}
		return "no: settles at " + opt(f.EquilibriumV, "V")
	})
	line("period", func(f figuresOut) string { return opt(f.PeriodS, "s") })
	line("charge time", func(f figuresOut) string { return opt(f.ChargeS, "s") })
	line("pulse", func(f figuresOut) string { return opt(f.PulseS, "s") })
	line("fire / reset", func(f figuresOut) string { return opt(f.FireV, "V") + " / " + opt(f.ResetV, "V") })
	line("energy per pulse", func(f figuresOut) string { return opt(f.EnergyJ, "J") })
	line("duty cycle", func(f figuresOut) string {
		if f.DutyCycle == nil {
			return "—"
		}
		return fmt.Sprintf("%.3g %%", 100**f.DutyCycle)
	})
	line("fires per hour", func(f figuresOut) string {
		if f.FiresPerHour == nil {
			return "—"
		}
		return fmt.Sprintf("%.4g", *f.FiresPerHour)
	})
	line("energy per day", func(f figuresOut) string { return opt(f.EnergyPerDayJ, "J") })
	tw.Flush()
	if a.Target != "" {
		fmt.Fprintf(w, "\ntarget %s by %s: the exact value and its neighbours in the standard series (IEC 60063).\n", a.Target, a.Vary)
	}
}
