package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"capcycle/analyze/model"
	"capcycle/analyze/profile"
	"capcycle/analyze/units"
	"capcycle/cmd/internal/cli"
	"capcycle/logger/capture"
)

// simulateCommand is "capcycle simulate".
func simulateCommand() *command {
	return &command{
		name:    "simulate",
		summary: "simulate a profile's circuit and write a capture file",
		run:     runSimulate,
	}
}

// simulateSetup is what a simulation needs, from a profile or a built-in scenario.
type simulateSetup struct {
	name    string // profile or scenario name for the capture metadata
	source  string // the capture's source line
	circuit *model.Circuit
	light   model.Light
	start   time.Time
	startV  float64
}

func runSimulate(ctx context.Context, args []string, e *env) error {
	fset := newFlags("simulate", "[--profile FILE | --scenario wren|fern] [--light W/m²] [--hours H] [--rate HZ] [--current] [--out FILE] [--force]", e.stderr,
		"capcycle simulate --scenario wren --hours 2 --out wren-2h.csv",
		"capcycle simulate --scenario wren --hours 0.1 --rate 500 --current --out wren-iload.csv",
		"capcycle simulate --profile fern.toml --hours 6 --rate 2 --out fern.csv",
		"capcycle simulate --profile fern.toml --light 300 --hours 2 --out fern-bright.csv",
		"capcycle simulate --scenario fern --hours 1 | head")
	profilePath := fset.String("profile", "", "bench profile (TOML) whose circuit (and light, unless --light) to simulate")
	scenario := fset.String("scenario", "", "built-in scenario: "+strings.Join(model.ScenarioNames(), " or "))
	light := units.NewValue(0, "W/m²", units.NonNegative)
	fset.Var(light, "light", "a constant irradiance on the cell, W/m² (default: the profile's or the scenario's light; full sun is about 1000)")
	hours := fset.Float64("hours", 24, "length of the simulated run, hours")
	rate := fset.Float64("rate", 0, "sample rate of the written trajectory, Hz (default: enough for "+strconv.Itoa(model.MinSamplesPerPulse)+" samples in the load's time constant, at least 10 Hz)")
	out := outFlag(fset, "", "capture file to write (default: standard output)")
	force := fset.Bool("force", false, "replace the output file if it exists")
	current := fset.Bool("current", false, "also write the load current ("+capture.ColIload+"), as a current channel would measure it")
	if err := parseFlags(fset, args); err != nil {
		return err
	}
	if fset.NArg() > 0 {
		return usageErrorf("takes no arguments, got %q", fset.Arg(0))
	}
	if (*profilePath == "") == (*scenario == "") {
		return usageErrorf("give exactly one of --profile FILE and --scenario NAME")
	}
	if !(*hours > 0) || math.IsInf(*hours, 0) {
		return usageErrorf("--hours %g: want a positive number of hours", *hours)
	}
	if rateSet := cli.IsSet(fset, "rate"); rateSet && (!(*rate > 0) || *rate > 100e3 || math.IsInf(*rate, 0)) {
		return usageErrorf("--rate %g: want a rate above 0 and up to 100000 Hz", *rate)
	}
	var setup *simulateSetup
	var err error
	if *scenario != "" {
		setup, err = scenarioSetup(*scenario)
	} else {
		setup, err = profileSetup(*profilePath, light.IsSet())
	}
	if err != nil {
		return err
	}
	if light.IsSet() {
		setup.light = model.Constant(light.V)
		setup.source += " light=" + units.Format(light.V, "W/m²")
	}
	pulse, what := model.ExpectedPulse(setup.circuit)
	if !cli.IsSet(fset, "rate") {
		*rate = model.RateFor(pulse)
	} else if pulse > 0 && *rate*pulse < model.MinSamplesPerPulse {
		fmt.Fprintf(e.stderr, "capcycle simulate: warning: --rate %g Hz gives %.1f samples per %s of %s: pulses will be missed or flattened; use --rate %g or more (or leave --rate out)\n",
			*rate, *rate*pulse, what, units.Format(pulse, "s"), model.RateFor(pulse))
	}
	return simulateTo(ctx, setup, *hours*3600, *rate, *out, *force, *current, e)
}

func scenarioSetup(name string) (*simulateSetup, error) {
	sc, err := model.Scenario(name)
	if err != nil {
		if errors.Is(err, model.ErrUnknownScenario) {
			return nil, usageErrorf("--scenario %q: known scenarios are %s", name, strings.Join(model.ScenarioNames(), ", "))
		}
		return nil, err
	}
	return &simulateSetup{
		name:    strings.ToLower(sc.Name),
		source:  "simulation scenario=" + strings.ToLower(sc.Name),
		circuit: sc.Circuit,
		light:   sc.Light,
		start:   sc.Start,
		startV:  sc.StartV,
	}, nil
}

// simulateTo runs the model and writes the trajectory as a capture file (or to stdout).
func simulateTo(ctx context.Context, s *simulateSetup, durS, rate float64, out string, force, current bool, e *env) error {
	sp, err := model.NewSampler(s.circuit, s.light, &model.Options{DurationS: durS, RateHz: rate, StartV: s.startV})
	if err != nil {
		return inputError(err)
	}
	h := &capture.Header{
		Start:    s.start,
		Source:   s.source,
		Profile:  s.name,
		Notes:    []string{"simulated by the capcycle circuit model; not a measurement"},
		Channels: []capture.Channel{{Column: capture.ColVcap}},
	}
	if current {
		h.Channels = append(h.Channels, capture.Channel{Column: capture.ColIload})
	}
	var w *capture.Writer
	if out == "" || out == "-" {
		// Hide the standard output's Sync: a terminal, a pipe or /dev/null cannot be
		// synced, and it is not ours to sync.
		w, err = capture.NewWriter(struct{ io.Writer }{e.stdout}, h, nil)
	} else {
		w, err = capture.Create(out, h, &capture.Options{Force: force})
		if errors.Is(err, fs.ErrExist) {
			return usageErrorf("%s exists; use --force to replace it", out)
		}
	}
	if err != nil {
		return workErrorf("%w", err)
	}
	n, err := model.WriteCapture(ctx, sp, w, current)
	if err != nil {
		w.Close(nil)
		return workErrorf("simulate: %w", err)
	}
	if err := w.Close(nil); err != nil {
		return workErrorf("%w", err)
	}
	res := sp.Result()
	summarize(e.stderr, s.name, durS, n, rate, res, out)
	return nil
}

func summarize(w io.Writer, name string, durS float64, rows int, rate float64, res *model.Result, out string) {
	dest := out
	if dest == "" || dest == "-" {
		dest = "standard output"
	}
	fmt.Fprintf(w, "simulated %s for %.2f h: %d fires, %d resets, %d rows at %s to %s\n",
		name, durS/3600, len(res.Fires()), len(res.Resets()), rows, units.Format(rate, "Hz"), dest)
	if p := res.ShortestPulseS(); p > 0 {
		fmt.Fprintf(w, "shortest pulse %s: %.1f samples\n", units.Format(p, "s"), p*rate)
	}
	t := res.Totals
	fmt.Fprintf(w, "energy: harvested %.4g J, load %.4g J, leakage %.3g J, probe %.3g J, supervisor %.3g J, stored change %.3g J\n",
		t.HarvestedJ, t.LoadJ, t.LeakJ, t.ProbeJ, t.QuiescentJ, t.StoredDiffJ)
}

// profileSetup loads a bench profile and builds its circuit and light. A profile without a
// [light] table needs a light given some other way (lightGiven, the --light flag); the
// error says what to add.
func profileSetup(path string, lightGiven bool) (*simulateSetup, error) {
	p, err := profile.Load(path)
	if err != nil {
		return nil, inputError(err)
	}
	c, l, err := model.FromProfile(p)
	if err != nil {
		return nil, inputError(err)
	}
	if l == nil && !lightGiven {
		return nil, inputError(fmt.Errorf("%s: the profile has no [light] table; give --light W/m², or add one (kind = \"constant\" with irradiance_w_m2, or kind = \"windowsill\")", path))
	}
	start := time.Now().UTC().Truncate(time.Second)
	if p.Light != nil && p.Light.Kind == profile.Windowsill {
		if d, err := time.Parse(time.DateOnly, p.Light.Date); err == nil {
			start = d
		}
	}
	return &simulateSetup{
		name:    p.Name,
		source:  "simulation profile=" + filepath.Base(path),
		circuit: c,
		light:   l,
		start:   start,
	}, nil
}
