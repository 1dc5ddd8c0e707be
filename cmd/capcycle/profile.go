package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"strings"

	"capcycle/analyze/model"
	"capcycle/analyze/profile"
)

// profileCommand is "capcycle profile": write a template, or check a profile.
func profileCommand() *command {
	return &command{
		name:    "profile",
		summary: "write a commented bench profile template, or check one",
		run:     runProfile,
	}
}

const profileUsage = `usage: capcycle profile init [--kind voltage|timer|plateau] [--out FILE] [--force]
       capcycle profile check FILE

A bench profile (TOML) describes one robot and its probe: the storage capacitor, the
trigger, the switch, the load, the solar cell, the dividers in front of the ADC and its
reference. Quantities carry their unit in the key (cap_f, on_v, quiescent_a, top_ohm) and
take numbers or engineering notation ("4700u", "1meg", "2.7V").

  init    write a commented template, filled in for the demo rover Wren
  check   validate a profile and print what follows from it: divider ratios, the probe's
          load current at the trigger voltage, the energy per pulse, the capacitor's
          datasheet leakage limit, the hold time; errors name the file and line

Run "capcycle profile init -h" or "capcycle profile check -h" for their flags.

examples:
  capcycle profile init --kind voltage --out wren.toml
  capcycle profile check wren.toml
`

func runProfile(ctx context.Context, args []string, e *env) error {
	if len(args) == 0 {
		fmt.Fprint(e.stderr, profileUsage)
		return usageErrorf("want \"init\" or \"check\"")
	}
	switch args[0] {
	case "init":
		return profileInit(args[1:], e)
	case "check":
		return profileCheck(args[1:], e)
	case "-h", "-help", "--help", "help":
		fmt.Fprint(e.stderr, profileUsage)
		return flag.ErrHelp
	}
	fmt.Fprint(e.stderr, profileUsage)
	return usageErrorf("unknown profile action %q: want \"init\" or \"check\"", args[0])
}

func profileInit(args []string, e *env) error {
	fs := newFlags("profile init", "[--kind voltage|timer|plateau] [--out FILE] [--force]", e.stderr,
		"capcycle profile init > wren.toml",
		"capcycle profile init --kind timer --out timer-rover.toml")
	kind := fs.String("kind", "voltage", "trigger kind of the template: "+strings.Join(profile.TemplateKinds, ", "))
	out := outFlag(fs, "-", "file to write; - is standard output")
	force := fs.Bool("force", false, "overwrite FILE if it exists")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return usageErrorf("init takes no arguments, got %q (use --out FILE)", fs.Arg(0))
	}
	text := profile.Template(*kind)
	if text == "" {
		return usageErrorf("--kind %q: want one of %s", *kind, strings.Join(profile.TemplateKinds, ", "))
	}
	if *out == "-" {
		_, err := io.WriteString(e.stdout, text)
		return err
	}
	mode := os.O_WRONLY | os.O_CREATE | os.O_EXCL
	if *force {
		mode = os.O_WRONLY | os.O_CREATE | os.O_TRUNC
	}
	f, err := os.OpenFile(*out, mode, 0o644)
	if errors.Is(err, os.ErrExist) {
		return usageErrorf("%s already exists; nothing was written (use --force to overwrite it)", *out)
	}
	if err != nil {
		return workErrorf("%w", err)
	}
	if _, err := io.WriteString(f, text); err != nil {
		f.Close()
		return workErrorf("writing %s: %w", *out, err)
	}
	if err := f.Close(); err != nil {
		return workErrorf("writing %s: %w", *out, err)
	}
	fmt.Fprintf(e.stderr, "wrote %s (%s trigger); edit it for your robot, then run: capcycle profile check %s\n", *out, *kind, *out)
	return nil
}

func profileCheck(args []string, e *env) error {
	fs := newFlags("profile check", "FILE", e.stderr, "capcycle profile check wren.toml")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if fs.NArg() != 1 {
		return usageErrorf("check takes one profile FILE, got %d arguments", fs.NArg())
	}
	p, err := profile.Load(fs.Arg(0))
	if err != nil {
		var pe *profile.Error
		if errors.As(err, &pe) {
			return inputError(err)
		}
		if u := errors.Unwrap(err); u != nil {
			err = u // the *fs.PathError names the file
		}
		return inputError(err)
	}
	d := profile.Derive(p)
	if g, at, ok := dayPeak(p); ok {
		if w := profile.NeverFires(p, d, g, fmt.Sprintf("even at the windowsill day's brightest, %.3g W/m² at %s solar time (the [light] table),", g, profile.Clock(at))); w != "" {
			d.Warnings = append(d.Warnings, w)
		}
	}
	var peak *profile.Peak
	if g, at, ok := dayPeak(p); ok {
		peak = &profile.Peak{Wm2: g, AtS: at}
	}
	if err := profile.WriteCheck(e.stdout, fs.Arg(0), p, d, peak); err != nil {
		return workErrorf("%w", err)
	}
	return nil
}

// dayPeak returns the brightest irradiance of a windowsill [light] day (W/m²) and its
// time (seconds from midnight, solar time), from the circuit model's light sampled every
// minute; ok is false for any other light.
func dayPeak(p *profile.Profile) (g, atS float64, ok bool) {
	if p.Light == nil || p.Light.Kind != profile.Windowsill {
		return 0, 0, false
	}
	_, light, err := model.FromProfile(p)
	if err != nil || light == nil {
		return 0, 0, false
	}
	for t := 0.0; t < 86400; t += 60 {
		if x := light.IrradianceWm2(t); x > g {
			g, atS = x, t
		}
	}
	return g, atS, true
}
