package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"
	"time"

	"github.com/gocarina/gocsv"
	"golang.org/x/term"

	"capcycle/analyze"
	"capcycle/analyze/profile"
	"capcycle/analyze/units"
	"capcycle/logger/capture"
)

// analyzeCommand is "capcycle analyze".
func analyzeCommand() *command {
	return &command{
		name:    "analyze",
		summary: "find every fire and reset in a capture and fit the circuit",
		built:   true,
		run:     runAnalyze,
	}
}

// analyzeFlags are the flags of "capcycle analyze". Every profile value has a flag;
// a flag that is set wins over the profile.
type analyzeFlags struct {
	profile     string
	json        bool
	cyclesCSV   string
	segmentsCSV string
	timeCol     string
	voltCol     string
	currentCol  string
	voltUnit    string
	timeFormat  string
	delim       string

	capF, probeOhm, onV, offV, loadOhm, quiescentA, vocV, iscA *units.Value
	fullScaleV, calOhm, calStartS, calEndS                     *units.Value
	noiseV, minSwingV, gapS, cellTempK                         *units.Value
	cells                                                      int
	capTol                                                     string
}

func newAnalyzeFlags(w io.Writer) (*flag.FlagSet, *analyzeFlags) {
	f := &analyzeFlags{
		capF:       units.NewValue(0, units.Farad, units.Positive),
		probeOhm:   units.NewValue(0, units.Ohm, units.Positive),
		onV:        units.NewValue(0, units.Volt, units.Positive),
		offV:       units.NewValue(0, units.Volt, units.Positive),
		loadOhm:    units.NewValue(0, units.Ohm, units.Positive),
		quiescentA: units.NewValue(0, units.Ampere, units.Positive),
		vocV:       units.NewValue(0, units.Volt, units.Positive),
		iscA:       units.NewValue(0, units.Ampere, units.Positive),
		fullScaleV: units.NewValue(0, units.Volt, units.Positive),
		calOhm:     units.NewValue(0, units.Ohm, units.Positive),
		calStartS:  units.NewValue(0, units.Second, units.Positive),
		calEndS:    units.NewValue(0, units.Second, units.Positive),
		noiseV:     units.NewValue(0, units.Volt, units.Positive),
		minSwingV:  units.NewValue(0, units.Volt, units.Positive),
		gapS:       units.NewValue(0, units.Second, units.Positive),
		cellTempK:  units.NewValue(0, "K", units.Positive),
	}
	fs := newFlags("analyze", "FILE [flags]", w,
		"capcycle analyze wren-day.csv --profile wren.toml",
		"capcycle analyze wren-day.csv --cap 4700u --probe-ohm 1meg --json > wren.json",
		"capcycle analyze logger.csv --time-col timestamp --time-format rfc3339 --volt-col ch1 --volt-unit mV --delim ';'",
		"capcycle analyze fern.csv --profile fern.toml --cycles-csv cycles.csv --segments-csv segments.csv")
	fs.StringVar(&f.profile, "profile", "", "bench profile (TOML) with the circuit's declared values")
	fs.BoolVar(&f.json, "json", false, "write the analysis as JSON to standard output")
	fs.StringVar(&f.cyclesCSV, "cycles-csv", "", "also write the cycles to this CSV file")
	fs.StringVar(&f.segmentsCSV, "segments-csv", "", "also write the segments to this CSV file")
	fs.StringVar(&f.timeCol, "time-col", "", "time column: a name, or a position from 1 (default time_s)")
	fs.StringVar(&f.voltCol, "volt-col", "", "voltage column: a name, or a position from 1 (default vcap_v)")
	fs.StringVar(&f.currentCol, "current-col", "", "load-current column (amperes, or a unit in its name: iload_ma): a name, a position from 1, or none (default iload_a when present); it measures the capacitance at every fire")
	fs.StringVar(&f.voltUnit, "volt-unit", "", "unit of the voltage column: V, mV or uV (default: from the column name, else V)")
	fs.StringVar(&f.timeFormat, "time-format", "", "time column format: seconds or rfc3339 (default: from the first row)")
	fs.StringVar(&f.delim, "delim", "", "field delimiter: ',', ';' or tab (default: from the header row)")
	fs.Var(unitFlag{f.capF}, "cap", "storage capacitance, F (e.g. 4700u); profile storage.cap_f")
	fs.StringVar(&f.capTol, "cap-tol", "", "capacitance tolerance letter (IEC 60062, e.g. M); profile storage.tolerance")
	fs.Var(unitFlag{f.probeOhm}, "probe-ohm", "total divider resistance the probe puts across the capacitor, Ω (e.g. 1meg); from the profile's vcap channel")
	fs.Var(unitFlag{f.onV}, "on-v", "declared trigger on voltage, V; profile trigger.on_v")
	fs.Var(unitFlag{f.offV}, "off-v", "declared trigger off voltage, V; profile trigger.off_v")
	fs.Var(unitFlag{f.loadOhm}, "load-ohm", "declared load resistance, Ω; profile load.ohm or load.armature_ohm")
	fs.Var(unitFlag{f.quiescentA}, "quiescent-a", "declared trigger quiescent current, A; profile trigger.quiescent_a")
	fs.Var(unitFlag{f.vocV}, "voc-v", "declared cell open-circuit voltage, V; profile cell.voc_v")
	fs.Var(unitFlag{f.iscA}, "isc-a", "declared cell short-circuit current, A; profile cell.isc_a")
	fs.IntVar(&f.cells, "cells", 0, "cells in series in the solar panel; profile cell.series_cells (default 1)")
	fs.Var(unitFlag{f.cellTempK}, "cell-temp-k", "cell temperature, K; profile cell.temp_k (default 298.15)")
	fs.Var(unitFlag{f.fullScaleV}, "full-scale-v", "ADC full scale at the capacitor, V (saturation check); from the profile's vcap channel")
	fs.Var(unitFlag{f.calOhm}, "cal-ohm", "known resistor of a calibration stretch, Ω; profile calibration.resistor_ohm")
	fs.Var(unitFlag{f.calStartS}, "cal-start-s", "start of the calibration stretch, s; profile calibration.start_s")
	fs.Var(unitFlag{f.calEndS}, "cal-end-s", "end of the calibration stretch, s; profile calibration.end_s")
	fs.Var(unitFlag{f.noiseV}, "noise-v", "sample noise SD, V (default: estimated)")
	fs.Var(unitFlag{f.minSwingV}, "min-swing-v", "smallest rise or fall followed, V (default: from the noise and ADC step)")
	fs.Var(unitFlag{f.gapS}, "gap-s", "sample spacing that counts as a gap, s (default: from the spacing)")
	return fs, f
}

// unitFlag shows a units.Value in the flag list without a "(default 0 F)" when the
// default is "not given".
type unitFlag struct{ v *units.Value }

func (f unitFlag) String() string {
	if f.v == nil || !f.v.IsSet() {
		return ""
	}
	return f.v.String()
}

func (f unitFlag) Set(s string) error { return f.v.Set(s) }

func runAnalyze(ctx context.Context, args []string, e *env) error {
	fs, f := newAnalyzeFlags(e.stderr)
	// Let flags come after the file name too.
	var file string
	var rest []string
	for i := 0; i < len(args); i++ {
		a := args[i]
		if file == "" && !strings.HasPrefix(a, "-") {
			file = a
			continue
		}
		rest = append(rest, a)
	}
	if err := parseFlags(fs, rest); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		if file != "" {
			return usageErrorf("one capture file, got %q and %q", file, fs.Arg(0))
		}
		file = fs.Arg(0)
		if fs.NArg() > 1 {
			return usageErrorf("one capture file, got %d", fs.NArg())
		}
	}
	if file == "" {
		fs.Usage()
		return usageErrorf("no capture file given")
	}
	set := map[string]bool{}
	fs.Visit(func(fl *flag.Flag) { set[fl.Name] = true })

	opts := &analyze.Options{Path: file}
	var prof *profile.Profile
	if f.profile != "" {
		p, err := profile.Load(f.profile)
		if err != nil {
			return inputError(err)
		}
		fromProfile(opts, p)
		opts.Profile = p.Name
		prof = p
	}
	f.apply(opts, set)
	opts.Post = laterStages(prof, opts, file, f.reader)

	in, err := os.Open(file)
	if err != nil {
		return inputError(fmt.Errorf("analyze: %w", err))
	}
	defer in.Close()
	for _, out := range []string{f.cyclesCSV, f.segmentsCSV} {
		if out != "" && sameFile(file, out) {
			return usageErrorf("%s is the capture itself: it is never written over", out)
		}
	}
	r := capture.NewReader(in, file)
	if err := f.reader(r); err != nil {
		return err
	}
	var bar *progress
	if st, err := in.Stat(); err == nil && st.Size() > 32<<20 && isTerminal(e.stderr) {
		bar = &progress{w: e.stderr, total: st.Size()}
		opts.Progress = bar.update
	}
	res, err := analyze.Run(r, opts)
	if bar != nil {
		bar.done()
	}
	if err != nil {
		var pe *capture.ParseError
		if errors.As(err, &pe) {
			return inputError(err)
		}
		return workErrorf("%w", err)
	}
	if err := ctx.Err(); err != nil {
		return workErrorf("analyze: %w", err)
	}
	if f.cyclesCSV != "" {
		if err := writeCyclesCSV(f.cyclesCSV, res); err != nil {
			return workErrorf("analyze: %w", err)
		}
	}
	if f.segmentsCSV != "" {
		if err := writeSegmentsCSV(f.segmentsCSV, res); err != nil {
			return workErrorf("analyze: %w", err)
		}
	}
	if f.json {
		enc := json.NewEncoder(e.stdout)
		enc.SetIndent("", "  ")
		if err := enc.Encode(res); err != nil {
			return workErrorf("analyze: %w", err)
		}
		return nil
	}
	printSummary(e.stdout, res)
	return nil
}

// reader applies the column-mapping flags.
func (f *analyzeFlags) reader(r *capture.Reader) error {
	r.TimeCol, r.VoltCol, r.CurrentCol = f.timeCol, f.voltCol, f.currentCol
	tf, err := capture.ParseTimeFormat(f.timeFormat)
	if err != nil {
		return usageErrorf("--time-format: %w", err)
	}
	r.TimeFormat = tf
	switch strings.ToLower(f.voltUnit) {
	case "":
	case "v":
		r.VoltScale = 1
	case "mv":
		r.VoltScale = 1e-3
	case "uv", "µv", "μv":
		r.VoltScale = 1e-6
	default:
		return usageErrorf("--volt-unit %q: want V, mV or uV", f.voltUnit)
	}
	switch f.delim {
	case "":
	case ",", ";":
		r.Comma = f.delim[0]
	case "tab", "\\t", "\t":
		r.Comma = '\t'
	default:
		return usageErrorf("--delim %q: want ',', ';' or tab", f.delim)
	}
	return nil
}

// fromProfile fills the options from a bench profile.
func fromProfile(o *analyze.Options, p *profile.Profile) {
	d := profile.Derive(p)
	o.CapF, o.CapOrigin, o.CapTol = p.Storage.CapF, "declared", p.Storage.Tolerance.Code
	if d.ProbeLoadOhm > 0 && d.ProbeLoadOhm < 1e300 {
		o.ProbeOhm = d.ProbeLoadOhm
	}
	for _, c := range d.Channels {
		if c.Node == profile.NodeVcap {
			o.FullScaleV = c.FullScaleV
		}
	}
	o.OnV, o.OffV = p.Trigger.OnV, p.Trigger.OffV
	o.QuiescentA = p.Trigger.QuiescentA
	o.LoadOhm = p.Load.Ohm
	if o.LoadOhm == 0 {
		o.LoadOhm = p.Load.ArmatureOhm
	}
	o.VocV, o.IscA = p.Cell.VocV, p.Cell.IscA
	o.CellSeries, o.CellTempK = p.Cell.SeriesCells, p.Cell.TempK
	if c := p.Calibration; c != nil {
		o.CalResistorOhm, o.CalStartS, o.CalEndS = c.ResistorOhm, c.StartS, c.EndS
	}
}

// apply lets the flags that were set win over the profile.
func (f *analyzeFlags) apply(o *analyze.Options, set map[string]bool) {
	put := func(name string, dst *float64, v *units.Value) {
		if set[name] {
			*dst = v.V
		}
	}
	put("cap", &o.CapF, f.capF)
	if set["cap"] {
		o.CapOrigin = "flag"
	}
	if set["cap-tol"] {
		o.CapTol = f.capTol
	}
	put("probe-ohm", &o.ProbeOhm, f.probeOhm)
	put("on-v", &o.OnV, f.onV)
	put("off-v", &o.OffV, f.offV)
	put("load-ohm", &o.LoadOhm, f.loadOhm)
	put("quiescent-a", &o.QuiescentA, f.quiescentA)
	put("voc-v", &o.VocV, f.vocV)
	put("isc-a", &o.IscA, f.iscA)
	put("cell-temp-k", &o.CellTempK, f.cellTempK)
	put("full-scale-v", &o.FullScaleV, f.fullScaleV)
	put("cal-ohm", &o.CalResistorOhm, f.calOhm)
	put("cal-start-s", &o.CalStartS, f.calStartS)
	put("cal-end-s", &o.CalEndS, f.calEndS)
	put("noise-v", &o.NoiseV, f.noiseV)
	put("min-swing-v", &o.MinSwingV, f.minSwingV)
	put("gap-s", &o.GapS, f.gapS)
	if set["cells"] {
		o.CellSeries = f.cells
	}
}

func sameFile(a, b string) bool {
	sa, err := os.Stat(a)
	if err != nil {
		return false
	}
	sb, err := os.Stat(b)
	if err != nil {
		return false
	}
	return os.SameFile(sa, sb)
}

func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	return ok && term.IsTerminal(int(f.Fd()))
}

// progress draws a bar on a terminal, at most ten times a second.
type progress struct {
	w     io.Writer
	total int64
	last  time.Time
}

func (p *progress) update(rows int, bytes int64) {
	if time.Since(p.last) < 100*time.Millisecond {
		return
	}
	p.last = time.Now()
	frac := float64(bytes) / float64(p.total)
	frac = min(1, max(0, frac))
	n := int(frac * 30)
	fmt.Fprintf(p.w, "\r[%s%s] %3.0f %% %d rows", strings.Repeat("#", n), strings.Repeat(" ", 30-n), frac*100, rows)
}

func (p *progress) done() { fmt.Fprint(p.w, "\r\033[K") }

// cycleRow is one line of the cycles CSV.
type cycleRow struct {
	Index   int    `csv:"index"`
	FireS   string `csv:"fire_s"`
	FireV   string `csv:"fire_v"`
	ResetS  string `csv:"reset_s"`
	ResetV  string `csv:"reset_v"`
	ChargeS string `csv:"charge_s"`
	PulseS  string `csv:"pulse_s"`
	EnergyJ string `csv:"energy_j"`
	Kind    string `csv:"kind"`
	Light   string `csv:"light"` // the cell's short-circuit current (A), or I/C (V/s) without C
}

type segmentRow struct {
	Kind   string `csv:"kind"`
	StartS string `csv:"start_s"`
	EndS   string `csv:"end_s"`
	StartV string `csv:"start_v"`
	EndV   string `csv:"end_v"`
}

func num(v float64) string { return strconv.FormatFloat(v, 'g', 8, 64) }

func optNum(v *float64) string {
	if v == nil {
		return ""
	}
	return num(*v)
}

func writeCyclesCSV(path string, res *analyze.Result) error {
	rows := make([]*cycleRow, 0, len(res.Cycles))
	for _, c := range res.Cycles {
		rows = append(rows, &cycleRow{Index: c.Index, FireS: num(c.FireS), FireV: num(c.FireV),
			ResetS: num(c.ResetS), ResetV: num(c.ResetV), ChargeS: optNum(c.ChargeS), PulseS: num(c.PulseS),
			EnergyJ: optNum(c.EnergyJ), Kind: c.Kind, Light: optNum(c.LightA)})
	}
	return writeCSV(path, &rows)
}

func writeSegmentsCSV(path string, res *analyze.Result) error {
	rows := make([]*segmentRow, 0, len(res.Segments))
	for _, s := range res.Segments {
		rows = append(rows, &segmentRow{Kind: s.Kind, StartS: num(s.StartS), EndS: num(s.EndS),
			StartV: num(s.StartV), EndV: num(s.EndV)})
	}
	return writeCSV(path, &rows)
}

func writeCSV(path string, rows any) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	if err := gocsv.MarshalFile(rows, f); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// printSummary writes a few lines for a person.
func printSummary(w io.Writer, res *analyze.Result) {
	full, chatter := 0, 0
	for _, c := range res.Cycles {
		if c.Kind == "chatter" {
			chatter++
		} else {
			full++
		}
	}
	fmt.Fprintf(w, "%s: %d samples over %s", res.Source.Path, res.Samples, units.Format(res.DurationS, units.Second))
	if res.Noise != nil {
		fmt.Fprintf(w, ", noise %s", units.Format(res.Noise.RMSV, units.Volt))
	}
	fmt.Fprintln(w)
	fmt.Fprintf(w, "cycles: %d full, %d chatter\n", full, chatter)
	if c := res.Capacitance; c != nil {
		how := c.F.Origin
		switch c.Method {
		case "current-channel":
			how = fmt.Sprintf("measured from the load current at %d fires", c.Pulses)
		case "calibration-resistor":
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
		fmt.Fprintf(w, "load: pulse time constant %s", estStr(l.TauS, units.Second))
		if l.Ohm != nil {
			fmt.Fprintf(w, ", %s", estStr(l.Ohm, units.Ohm))
		}
		if l.Resistive != nil && !*l.Resistive {
			fmt.Fprint(w, " (not a plain resistor: a motor?)")
		}
		fmt.Fprintln(w)
	}
	if l := res.Fit.Leak; l.TauS != nil {
		fmt.Fprintf(w, "leak (%s): time constant %s", l.Method, estStr(l.TauS, units.Second))
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
			fmt.Fprintf(w, " (within 1 %% after %s)", units.Format(*res.Equilibrium.Within1PctS, units.Second))
		}
		fmt.Fprintln(w)
	}
	for _, n := range res.Notes {
		fmt.Fprintf(w, "note: %s\n", n)
	}
}

func estStr(e *analyze.Estimate, unit string) string {
	s := units.Format(e.Value, unit)
	if e.SD != nil {
		s += " ± " + units.Format(*e.SD, unit)
	}
	return s
}
