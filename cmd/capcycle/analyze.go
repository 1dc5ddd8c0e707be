package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"io"
	"io/fs"
	"os"
	"strings"

	"capcycle/analyze"
	"capcycle/analyze/analysis"
	"capcycle/analyze/profile"
	htmlreport "capcycle/analyze/report"
	"capcycle/analyze/units"
	"capcycle/cmd/internal/cli"
	"capcycle/logger/capture"
)

// analyzeCommand is "capcycle analyze".
func analyzeCommand() *command {
	return &command{
		name:    "analyze",
		summary: "find every fire and reset in a capture and fit the circuit",
		run:     runAnalyze,
	}
}

// analyzeFlags are the flags of "capcycle analyze". Every declared value has a flag
// (declaredFlags); a flag that is set wins over the profile.
type analyzeFlags struct {
	profile     string
	json        bool
	indent      bool
	cyclesCSV   string
	segmentsCSV string
	timeCol     string
	voltCol     string
	currentCol  string
	voltUnit    string
	timeFormat  string
	delim       string

	declared                map[string]*units.Value // by flag name, see declaredFlags
	noiseV, minSwingV, gapS *units.Value
	cells                   int
	capTol                  string
}

// declaredFlag is a flag that declares one figure of the circuit (analysis.Declared),
// overriding the profile's key.
type declaredFlag struct {
	name, unit, usage string
	field             func(*analysis.Declared) *float64
}

// declaredFlags lists the flags of the declared figures, in the order -h shows them.
// Adding a declared quantity: a field of analysis.Declared, its line in analyze.Declare
// (from the profile), and a row here.
var declaredFlags = []declaredFlag{
	{"cap", units.Farad, "storage capacitance, F (e.g. 4700u); profile storage.cap_f", func(d *analysis.Declared) *float64 { return &d.CapF }},
	{"probe-ohm", units.Ohm, "total divider resistance the probe puts across the capacitor, Ω (e.g. 1meg); from the profile's vcap channel", func(d *analysis.Declared) *float64 { return &d.ProbeOhm }},
	{"on-v", units.Volt, "declared trigger on voltage, V; profile trigger.on_v", func(d *analysis.Declared) *float64 { return &d.OnV }},
	{"off-v", units.Volt, "declared trigger off voltage, V; profile trigger.off_v", func(d *analysis.Declared) *float64 { return &d.OffV }},
	{"load-ohm", units.Ohm, "declared load resistance, Ω; profile load.ohm or load.armature_ohm", func(d *analysis.Declared) *float64 { return &d.LoadOhm }},
	{"quiescent-a", units.Ampere, "declared trigger quiescent current, A; profile trigger.quiescent_a", func(d *analysis.Declared) *float64 { return &d.QuiescentA }},
	{"voc-v", units.Volt, "declared cell open-circuit voltage, V; profile cell.voc_v", func(d *analysis.Declared) *float64 { return &d.VocV }},
	{"isc-a", units.Ampere, "declared cell short-circuit current, A; profile cell.isc_a", func(d *analysis.Declared) *float64 { return &d.IscA }},
	{"cell-temp-k", "K", "cell temperature, K; profile cell.temp_k (default 298.15)", func(d *analysis.Declared) *float64 { return &d.CellTempK }},
	{"full-scale-v", units.Volt, "ADC full scale at the capacitor, V (saturation check); from the profile's vcap channel", func(d *analysis.Declared) *float64 { return &d.FullScaleV }},
	{"cal-ohm", units.Ohm, "known resistor of a calibration stretch, Ω; profile calibration.resistor_ohm", func(d *analysis.Declared) *float64 { return &calibration(d).ResistorOhm }},
	{"cal-start-s", units.Second, "start of the calibration stretch, s; profile calibration.start_s", func(d *analysis.Declared) *float64 { return &calibration(d).StartS }},
	{"cal-end-s", units.Second, "end of the calibration stretch, s; profile calibration.end_s", func(d *analysis.Declared) *float64 { return &calibration(d).EndS }},
}

// calibration returns d's calibration stretch, made when there is none yet.
func calibration(d *analysis.Declared) *analysis.Calibration {
	if d.Calibration == nil {
		d.Calibration = &analysis.Calibration{}
	}
	return d.Calibration
}

func newAnalyzeFlags(w io.Writer) (*flag.FlagSet, *analyzeFlags) {
	f := &analyzeFlags{
		declared:  map[string]*units.Value{},
		noiseV:    units.NewValue(0, units.Volt, units.Positive),
		minSwingV: units.NewValue(0, units.Volt, units.Positive),
		gapS:      units.NewValue(0, units.Second, units.Positive),
	}
	fs := newFlags("analyze", "FILE [flags]", w,
		"capcycle analyze wren-day.csv --profile wren.toml",
		"capcycle analyze wren-day.csv --cap 4700u --probe-ohm 1meg --json > wren.json",
		"capcycle analyze logger.csv --time-col timestamp --time-format rfc3339 --volt-col ch1 --volt-unit mV --delim ';'",
		"capcycle analyze fern.csv --profile fern.toml --cycles-csv cycles.csv --segments-csv segments.csv")
	fs.StringVar(&f.profile, "profile", "", "bench profile (TOML) with the circuit's declared values")
	fs.BoolVar(&f.json, "json", false, "write the analysis as JSON to standard output (compact; --indent for a person)")
	fs.BoolVar(&f.indent, "indent", false, "with --json: indent the JSON for reading")
	fs.StringVar(&f.cyclesCSV, "cycles-csv", "", "also write the cycles to this CSV file")
	fs.StringVar(&f.segmentsCSV, "segments-csv", "", "also write the segments to this CSV file")
	fs.StringVar(&f.timeCol, "time-col", "", "time column: a name, or a position from 1 (default time_s)")
	fs.StringVar(&f.voltCol, "volt-col", "", "voltage column: a name, or a position from 1 (default vcap_v)")
	fs.StringVar(&f.currentCol, "current-col", "", "load-current column (amperes, or a unit in its name: iload_ma): a name, a position from 1, or none (default iload_a when present); it measures the capacitance at every fire")
	fs.StringVar(&f.voltUnit, "volt-unit", "", "unit of the voltage column: V, mV or uV (default: from the column name, else V)")
	fs.StringVar(&f.timeFormat, "time-format", "", "time column format: seconds or rfc3339 (default: from the first row)")
	fs.StringVar(&f.delim, "delim", "", "field delimiter: ',', ';' or tab (default: from the header row)")
	for _, d := range declaredFlags {
		v := units.NewValue(0, d.unit, units.Positive)
		f.declared[d.name] = v
		fs.Var(unitFlag{v}, d.name, d.usage)
	}
	fs.StringVar(&f.capTol, "cap-tol", "", "capacitance tolerance letter (IEC 60062, e.g. M); profile storage.tolerance")
	fs.IntVar(&f.cells, "cells", 0, "cells in series in the solar panel; profile cell.series_cells (default 1)")
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
	var file string
	if err := parseFlags(fs, args); err != nil {
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
		return usageErrorf("no capture file given (run \"capcycle analyze -h\" for the usage)")
	}
	set := map[string]bool{}
	fs.Visit(func(fl *flag.Flag) { set[fl.Name] = true })

	for _, out := range []string{f.cyclesCSV, f.segmentsCSV} {
		if out != "" && cli.SameFile(file, out) {
			return usageErrorf("%s is the capture itself: it is never written over", out)
		}
	}
	opts, err := analysisOptions(f.profile)
	if err != nil {
		return err
	}
	f.apply(opts, set)
	if err := f.reader(capture.NewReader(strings.NewReader(""), file)); err != nil {
		return err // a bad column-mapping flag, before the file is read
	}
	opts.Setup = f.reader
	var bar *cli.Progress
	if st, err := os.Stat(file); err == nil && st.Size() > 32<<20 && cli.IsTerminal(e.stderr) {
		bar = &cli.Progress{W: e.stderr, Total: st.Size()}
		opts.Progress = bar.Update
	}
	res, err := analyze.File(ctx, file, opts)
	if bar != nil {
		bar.Done()
	}
	if err != nil {
		return analysisError(err)
	}
	printReaderNotes(e.stderr, &res.Source)
	if f.cyclesCSV != "" {
		if err := writeTable(f.cyclesCSV, res, htmlreport.WriteCycles); err != nil {
			return workErrorf("%w", err)
		}
	}
	if f.segmentsCSV != "" {
		if err := writeTable(f.segmentsCSV, res, htmlreport.WriteSegments); err != nil {
			return workErrorf("%w", err)
		}
	}
	if f.json {
		enc := json.NewEncoder(e.stdout)
		if f.indent {
			enc.SetIndent("", "  ")
		}
		if err := enc.Encode(res); err != nil {
			return workErrorf("%w", err)
		}
		return nil
	}
	if err := htmlreport.WriteText(e.stdout, res); err != nil {
		return workErrorf("%w", err)
	}
	return nil
}

// reader applies the column-mapping flags.
func (f *analyzeFlags) reader(r *capture.Reader) error {
	c := capture.Columns{Time: f.timeCol, Volt: f.voltCol, Current: f.currentCol,
		TimeFormat: f.timeFormat, VoltUnit: f.voltUnit, Delim: f.delim}
	if err := c.Apply(r); err != nil {
		return usageErrorf("%w", err)
	}
	return nil
}

// apply lets the flags that were set win over the profile.
func (f *analyzeFlags) apply(o *analyze.Options, set map[string]bool) {
	for _, d := range declaredFlags {
		if set[d.name] {
			*d.field(&o.Declared) = f.declared[d.name].V
		}
	}
	if set["cap"] {
		o.Declared.CapOrigin = analysis.OriginFlag
	}
	if set["cap-tol"] {
		o.Declared.CapTol = f.capTol
	}
	if set["cells"] {
		o.Declared.CellSeries = f.cells
	}
	put := func(name string, dst *float64, v *units.Value) {
		if set[name] {
			*dst = v.V
		}
	}
	put("noise-v", &o.NoiseV, f.noiseV)
	put("min-swing-v", &o.MinSwingV, f.minSwingV)
	put("gap-s", &o.GapS, f.gapS)
}

// analysisOptions are the analysis options of a bench profile (none for ""): the
// profile, and the circuit it declares.
func analysisOptions(profilePath string) (*analyze.Options, error) {
	if profilePath == "" {
		return &analyze.Options{}, nil
	}
	p, err := profile.Load(profilePath)
	if err != nil {
		return nil, inputError(err)
	}
	return &analyze.Options{Profile: p, Declared: analyze.Declare(p)}, nil
}

// analysisError sorts an error of analyze.File: a file that cannot be read or a bad row is
// bad input (exit 2), anything else (Ctrl-C, say) a failed run.
func analysisError(err error) error {
	var pe *capture.ParseError
	var fe *fs.PathError
	var ce *exitError
	switch {
	case errors.As(err, &ce):
		return err
	case errors.As(err, &pe), errors.As(err, &fe):
		return inputError(err)
	}
	return workErrorf("%w", err)
}

// writeTable writes one of the analysis's tables (report.WriteCycles, WriteSegments) to
// a new file at path.
func writeTable(path string, res *analysis.Result, write func(io.Writer, *analysis.Result) error) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	if err := write(f, res); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}
