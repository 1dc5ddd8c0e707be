package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"strings"

	"capcycle/analyze/analysis"
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
	fs := newFlags("whatif", "[--profile P] [--analysis A.json] [--set part=value ...] [--target figure=value [--vary part]] [--light W/m²] [--sun-hours H] [--json]", e.stderr,
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
	q, err := whatifQuestion(profPath, analysisPath)
	if err != nil {
		return err
	}
	q.LightWm2, q.SunHours, q.LightFrom = light.V, sun.V, "--light"
	for _, s := range sets {
		ch, err := whatif.ParseChange(s)
		if err != nil {
			return usageErrorf("--set %w", err)
		}
		q.Changes = append(q.Changes, ch)
	}
	if target != "" {
		tg, err := whatif.ParseTarget(target)
		if err != nil {
			return usageErrorf("--target: %w", err)
		}
		q.Target, q.Vary = &tg, vary
	}
	rep, err := whatif.Ask(ctx, q)
	var ce *whatif.ChangeError
	switch {
	case errors.As(err, &ce):
		return usageErrorf("--set: %s", strings.TrimPrefix(ce.Error(), "whatif: "))
	case errors.Is(err, whatif.ErrBadVary):
		return usageErrorf("--vary %q: not a part; the parts are %s", vary, strings.Join(whatif.PartNames(), ", "))
	case errors.Is(err, whatif.ErrNoLight):
		return usageErrorf("no light to predict at: give --light W/m², an --analysis, or a [light] table in the profile")
	case err != nil:
		return workErrorf("%w", err)
	}
	if asJSON {
		enc := json.NewEncoder(e.stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(rep)
	}
	return rep.WriteText(e.stdout)
}

// whatifQuestion builds the circuit to ask about: the profile's (fitted to the analysis
// when both are given), or the one the analysis alone describes.
func whatifQuestion(profPath, analysisPath string) (*whatif.Question, error) {
	q := &whatif.Question{}
	if analysisPath != "" {
		r, err := analysis.ReadFile(analysisPath)
		if err != nil {
			return nil, inputError(err)
		}
		q.Result, q.Name = r, r.Source.Profile
	}
	if profPath != "" {
		p, err := profile.Load(profPath)
		if err != nil {
			return nil, inputError(err)
		}
		nominal, l, err := model.FromProfile(p)
		if err != nil {
			return nil, inputError(fmt.Errorf("%s: %w", profPath, err))
		}
		q.Circuit, q.ProfileLight, q.Name = nominal, l, p.Name
		if q.Result != nil {
			q.Circuit, _ = predict.Fitted(nominal, q.Result)
		}
		return q, nil
	}
	c, normalised, err := predict.FromResult(q.Result)
	if err != nil {
		return nil, inputError(fmt.Errorf("%s: %w; give --profile too", analysisPath, err))
	}
	q.Circuit = c
	if normalised {
		q.Note = "the capacitance is not known: times and voltages are predicted, energies are per farad"
	}
	return q, nil
}
