package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"strings"
	"text/tabwriter"

	"capcycle/analyze/model"
	"capcycle/analyze/profile"
	"capcycle/analyze/units"
)

// profileCommand is "capcycle profile": write a template, or check a profile.
func profileCommand() *command {
	return &command{
		name:    "profile",
		summary: "write a commented bench profile template, or check one",
		built:   true,
		run:     runProfile,
	}
}

const profileUsage = `usage: capcycle profile init [--kind voltage|timer|plateau] [-o FILE] [--force]
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
  capcycle profile init --kind voltage -o wren.toml
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
	fs := newFlags("profile init", "[--kind voltage|timer|plateau] [-o FILE] [--force]", e.stderr,
		"capcycle profile init > wren.toml",
		"capcycle profile init --kind timer -o timer-rover.toml")
	kind := fs.String("kind", "voltage", "trigger kind of the template: "+strings.Join(profile.TemplateKinds, ", "))
	out := fs.String("o", "-", "file to write; - is standard output")
	force := fs.Bool("force", false, "overwrite FILE if it exists")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return usageErrorf("init takes no arguments, got %q (use -o FILE)", fs.Arg(0))
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
		return workErrorf("%v", err)
	}
	if _, err := io.WriteString(f, text); err != nil {
		f.Close()
		return workErrorf("writing %s: %v", *out, err)
	}
	if err := f.Close(); err != nil {
		return workErrorf("writing %s: %v", *out, err)
	}
	fmt.Fprintf(e.stderr, "wrote %s (%s trigger); edit it for your robot, then run: capcycle profile check %s\n", *out, *kind, *out)
	return nil
}

func profileCheck(args []string, e *env) error {
	fs := newFlags("profile check", "FILE", e.stderr, "capcycle profile check testdata/profiles/wren.toml")
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
	printProfile(e.stdout, fs.Arg(0), p, profile.Derive(p))
	return nil
}

// printProfile writes the checked profile and its derived figures.
func printProfile(w io.Writer, file string, p *profile.Profile, d profile.Derived) {
	s, t := p.Storage, p.Trigger
	F := units.Format
	fmt.Fprintf(w, "%s: %s is a valid profile\n", file, p.Name)
	if p.Notes != "" {
		fmt.Fprintf(w, "  %s\n", p.Notes)
	}
	fmt.Fprintln(w)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	row := func(label, format string, a ...any) { fmt.Fprintf(tw, "  %s\t%s\n", label, fmt.Sprintf(format, a...)) }

	fmt.Fprintln(tw, "circuit")
	row("storage", "%s %s, tolerance %s (%s to %s), rated %s", s.Kind, F(s.CapF, "F"), s.Tolerance,
		F(d.CapMinF, "F"), F(d.CapMaxF, "F"), F(s.RatedV, "V"))
	if s.BranchF > 0 {
		row("second branch", "%s through %s (τ %s)", F(s.BranchF, "F"), F(s.BranchOhm, units.Ohm), duration(s.BranchF*s.BranchOhm))
	}
	row("trigger", "%s", describeTrigger(t, p.Cell.VocV))
	row("load", "%s", describeLoad(p.Load))
	row("cell", "Voc %s, Isc %s, %d cell(s) in series, at %g W/m²", F(p.Cell.VocV, "V"), F(p.Cell.IscA, "A"),
		p.Cell.SeriesCells, p.Cell.RefWm2)
	row("ADC", "%d bits, reference %s = %s", p.ADC.Bits, p.ADC.Reference, F(p.ADC.ReferenceV, "V"))

	fmt.Fprintln(tw, "probe")
	for i, c := range d.Channels {
		ch := p.Channels[i]
		if ch.IsCurrent() {
			row(fmt.Sprintf("channel %d: %s", c.ADC, c.Node), "shunt %s × gain %.4g = %s/A at the pin, full scale %s, %s per count, peak load current %s",
				F(ch.ShuntOhm, units.Ohm), ch.AmpGain, F(ch.VoltsPerAmp(), "V"), F(c.FullScaleA, "A"), F(c.LSBA, "A"), F(c.ExpectedA, "A"))
			continue
		}
		row(fmt.Sprintf("channel %d: %s", c.ADC, c.Node), "ratio %.4g (%s / %s), full scale %s, %s per count, draws %s at %s",
			c.Ratio, F(ch.TopOhm, units.Ohm), F(ch.BottomOhm, units.Ohm), F(c.FullScaleV, "V"), F(c.LSBV, "V"),
			F(c.LoadA, "A"), F(c.ExpectedV, "V"))
	}
	row("probe load on vcap", "%s at %s (%s across the capacitor; alone it would drain it with τ %s)",
		F(d.ProbeLoadA, "A"), F(d.ProbeAtV, "V"), F(d.ProbeLoadOhm, units.Ohm), duration(d.ProbeTauS))

	fmt.Fprintln(tw, "derived")
	row("energy per pulse", "%s", orWhy(d.EnergyPerPulseJ, "J", "needs on_v and off_v",
		fmt.Sprintf(" = ½·C·(Von²−Voff²); %s to %s over the tolerance", F(d.EnergyMinJ, "J"), F(d.EnergyMaxJ, "J"))))
	row("stored at on_v", "%s", orWhy(d.StoredAtOnJ, "J", "needs on_v", " = ½·C·Von²"))
	leak := orWhy(d.LeakLimitA, "A", d.LeakLimitRule, " at "+F(s.RatedV, "V")+": "+d.LeakLimitRule)
	row("leakage limit", "%s", leak)
	if s.LeakA > 0 {
		row("leakage measured", "%s at %s", F(s.LeakA, "A"), F(s.LeakV, "V"))
	}
	if !math.IsNaN(d.HoldTimeS) {
		row("hold time", "%s = %s × %s / %s", duration(d.HoldTimeS), F(t.HoldF, "F"), F(t.HysteresisV, "V"), F(d.HoldDrainA, "A"))
	}
	row("first charge", "%s", orWhy(d.FirstChargeMinS, "s", "needs on_v", " at least, from 0 V at the rated Isc without losses"))
	row("recharge", "%s", orWhy(d.RechargeMinS, "s", "needs on_v and off_v", " at least, from release at the rated Isc without losses"))
	row("drain at on_v", "%s", orWhy(d.DrainAtOnA, "A", "needs on_v", " besides the load: probe, quiescent current, measured leakage"))
	tw.Flush()
	if len(d.Warnings) > 0 {
		fmt.Fprintln(w, "\nworth a second look:")
		for _, s := range d.Warnings {
			fmt.Fprintf(w, "  - %s\n", s)
		}
	}
}

func describeTrigger(t profile.Trigger, vocV float64) string {
	F := units.Format
	var b strings.Builder
	switch t.Kind {
	case profile.Voltage:
		fmt.Fprintf(&b, "voltage, fires at %s", F(t.OnV, "V"))
		if t.Release == profile.ReleaseHold {
			fmt.Fprintf(&b, ", hold capacitor %s releases after %s of hysteresis", F(t.HoldF, "F"), F(t.HysteresisV, "V"))
			if t.OffV > 0 {
				fmt.Fprintf(&b, " (nominal reset %s)", F(t.OffV, "V"))
			}
		} else {
			fmt.Fprintf(&b, ", releases at %s", F(t.OffV, "V"))
		}
	case profile.Timer:
		fmt.Fprintf(&b, "timer, every %s for %s", duration(t.PeriodS), duration(t.PulseS))
	case profile.Plateau:
		fmt.Fprintf(&b, "plateau, fires when the charging current falls below %s", F(t.ThresholdA, "A"))
		if t.OnV > 0 {
			fmt.Fprintf(&b, " at or above %s (on_v)", F(t.OnV, "V"))
		} else {
			fmt.Fprintf(&b, " at or above %s (half voc_v, or 50 mV above off_v)", F(model.PlateauArmV(&t, vocV), "V"))
		}
		if t.OffV > 0 {
			fmt.Fprintf(&b, ", releases at %s", F(t.OffV, "V"))
		} else {
			fmt.Fprintf(&b, ", pulse %s", duration(t.PulseS))
		}
	}
	if t.AccuracyPct > 0 {
		fmt.Fprintf(&b, ", ±%g %%", t.AccuracyPct)
	}
	if t.QuiescentA > 0 {
		fmt.Fprintf(&b, ", draws %s", F(t.QuiescentA, "A"))
	}
	return b.String()
}

func describeLoad(l profile.LoadSpec) string {
	if l.Kind == profile.Resistor {
		return "resistor " + units.Format(l.Ohm, units.Ohm)
	}
	s := "motor, armature " + units.Format(l.ArmatureOhm, units.Ohm)
	if l.BackEMFVs > 0 {
		s += ", back-EMF " + units.Format(l.BackEMFVs, "V·s/rad")
	}
	return s
}

// orWhy formats v with unit and a tail, or says why it is not known.
func orWhy(v float64, unit, why, tail string) string {
	if math.IsNaN(v) {
		return "not known: " + why
	}
	if unit == "s" {
		return duration(v) + tail
	}
	return units.Format(v, unit) + tail
}

// duration formats seconds with units.Format, adding minutes or hours when long.
func duration(s float64) string {
	out := units.Format(s, units.Second)
	switch {
	case math.IsInf(s, 0) || math.IsNaN(s):
	case s >= 7200:
		out += fmt.Sprintf(" (%.3g h)", s/3600)
	case s >= 120:
		out += fmt.Sprintf(" (%.3g min)", s/60)
	}
	return out
}
