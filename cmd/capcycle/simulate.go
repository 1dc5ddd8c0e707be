package main

import (
	"context"
	"errors"
	"flag"
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
	"capcycle/logger/capture"
)

// simulateCommand is "capcycle simulate".
func simulateCommand() *command {
	return &command{
		name:    "simulate",
		summary: "simulate a profile's circuit and write a capture file",
		built:   true,
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
	rate := fset.Float64("rate", 0, "sample rate of the written trajectory, Hz (default: enough for "+strconv.Itoa(minSamplesPerPulse)+" samples in the load's time constant, at least 10 Hz)")
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
	if rateSet := isSet(fset, "rate"); rateSet && (!(*rate > 0) || *rate > 100e3 || math.IsInf(*rate, 0)) {
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
	pulse, what := expectedPulse(setup.circuit)
	if !isSet(fset, "rate") {
		*rate = defaultRate(pulse)
	} else if pulse > 0 && *rate*pulse < minSamplesPerPulse {
		fmt.Fprintf(e.stderr, "capcycle simulate: warning: --rate %g Hz gives %.1f samples per %s of %s: pulses will be missed or flattened; use --rate %g or more (or leave --rate out)\n",
			*rate, *rate*pulse, what, units.Format(pulse, "s"), defaultRate(pulse))
	}
	return simulateTo(ctx, setup, *hours*3600, *rate, *out, *force, *current, e)
}

// minSamplesPerPulse is the fewest samples per expected pulse for the pulse to keep its
// shape in the capture (common practice, no source: a handful of points per time constant
// for a curve to be followed).
const minSamplesPerPulse = 5

// expectedPulse is the time scale of the circuit's pulse, seconds, and what it is: a
// timer's or a fixed on time when the trigger has one, otherwise the load's time constant
// C·(R_load + R_on), over which the storage voltage falls to 1/e of its drop while the
// switch is on. It is 0 when the circuit has no trigger.
func expectedPulse(c *model.Circuit) (float64, string) {
	t := c.Trigger
	switch {
	case t.Kind == model.TriggerNone:
		return 0, ""
	case t.Kind == model.TriggerTimer, t.Kind == model.TriggerPlateau && t.OffV == 0:
		return t.PulseS, "the trigger's on time"
	}
	return c.Storage.CapF * (c.Load.Ohm + c.Switch.OnOhm), "the load's time constant"
}

// defaultRate is the lowest rate on the 1-2-5 series that gives minSamplesPerPulse samples
// per pulse, and at least model.DefaultRateHz.
func defaultRate(pulseS float64) float64 {
	rate := model.DefaultRateHz
	if !(pulseS > 0) {
		return rate
	}
	for _, step := range []float64{1, 2, 5, 10, 20, 50, 100, 200, 500, 1000, 2000, 5000, 10000, 20000, 50000, 100000} {
		if r := step * model.DefaultRateHz; r*pulseS >= minSamplesPerPulse || r >= 100e3 {
			return max(rate, r)
		}
	}
	return 100e3
}

// isSet reports whether the flag name was given on the command line.
func isSet(fs *flag.FlagSet, name string) bool {
	set := false
	fs.Visit(func(fl *flag.Flag) { set = set || fl.Name == name })
	return set
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
	row := []float64{0}
	if current {
		h.Channels = append(h.Channels, capture.Channel{Column: capture.ColIload})
		row = append(row, 0)
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
	n := 0
	for {
		smp, ok := sp.Next()
		if !ok {
			break
		}
		row[0] = smp.V
		if current {
			row[1] = smp.LoadA
		}
		if err := w.Row(smp.TS, row); err != nil {
			w.Close(nil)
			return workErrorf("%w", err)
		}
		n++
		if n%4096 == 0 {
			if err := ctx.Err(); err != nil {
				w.Close(nil)
				return workErrorf("simulate: stopped at %.1f s of %.1f s (%d rows kept): %w", smp.TS, durS, n, err)
			}
			if err := w.Tick(time.Now()); err != nil {
				w.Close(nil)
				return workErrorf("%w", err)
			}
		}
	}
	if err := sp.Err(); err != nil {
		w.Close(nil)
		return workErrorf("%w", err)
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
	if p := shortestPulse(res); p > 0 {
		fmt.Fprintf(w, "shortest pulse %s: %.1f samples\n", units.Format(p, "s"), p*rate)
	}
	t := res.Totals
	fmt.Fprintf(w, "energy: harvested %.4g J, load %.4g J, leakage %.3g J, probe %.3g J, supervisor %.3g J, stored change %.3g J\n",
		t.HarvestedJ, t.LoadJ, t.LeakJ, t.ProbeJ, t.QuiescentJ, t.StoredDiffJ)
}

// shortestPulse is the shortest time from a fire to the next reset in res, seconds (0 when
// there is none).
func shortestPulse(res *model.Result) float64 {
	shortest, fire := 0.0, math.NaN()
	for _, ev := range res.Events {
		switch ev.Kind {
		case model.EventFire:
			fire = ev.TS
		case model.EventReset:
			if d := ev.TS - fire; d > 0 && (shortest == 0 || d < shortest) {
				shortest = d
			}
			fire = math.NaN()
		}
	}
	return shortest
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
