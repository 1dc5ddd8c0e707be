package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"strings"
	"time"

	"capcycle/analyze/model"
	"capcycle/analyze/profile"
	"capcycle/analyze/units"
	"capcycle/cmd/internal/cli"
	"capcycle/firmware-protocol/virtualboard"
	"capcycle/firmware-protocol/wire"
)

// robotCommand is "capcycle robot": the virtual robot on a pseudo-terminal.
func robotCommand() *command {
	return &command{
		name:    "robot",
		summary: "run the virtual robot: the circuit model behind a virtual board on a pseudo-terminal",
		run:     runRobot,
	}
}

// robotFlags are the flags of "capcycle robot"; the demo fills the same struct.
type robotFlags struct {
	scenario, profile string
	speed             virtualboard.Speed
	hours             float64
	baud              int
	seed              uint64
	bits, ebits       int
	noiseV            *units.Value
	refError, divTol  float64
	slowHz, fastHz    int
	rateHz            float64
	link              string
	start             string
	linger            time.Duration
}

func newRobotFlags(w io.Writer) (*flag.FlagSet, *robotFlags) {
	fs := newFlags("robot", "[--scenario wren|fern | --profile P] [flags]", w,
		"capcycle robot",
		"capcycle robot --scenario fern --hours 8 --start 08:00",
		"capcycle robot --profile wren.toml --noise-v 5m --seed 4",
		"capcycle robot --link /tmp/ttyWREN --start 10:00 &  capcycle record --port /tmp/ttyWREN --duration 5m")
	f := &robotFlags{noiseV: units.NewValue(2e-3, units.Volt, units.NonNegative), speed: virtualboard.Speed{Auto: true}}
	fs.StringVar(&f.scenario, "scenario", "", "built-in scenario: "+strings.Join(model.ScenarioNames(), " or ")+" (default wren when no --profile)")
	fs.StringVar(&f.profile, "profile", "", "bench profile (TOML) whose circuit, light, ADC and channels the robot takes")
	fs.Var(&f.speed, "speed", "how many times faster than real time the model runs: auto is the fastest the serial link carries whatever the board sends; 0 runs as fast as the host reads (nothing is lost)")
	fs.IntVar(&f.baud, "baud", 115200, "the emulated serial link's bits per second (8N1); at a speed above what it carries, the board drops frames and counts them")
	fs.Float64Var(&f.hours, "hours", 24, "model time to run, hours")
	fs.Uint64Var(&f.seed, "seed", 1, "seed of the board's noise and divider errors")
	fs.IntVar(&f.bits, "bits", 0, "converter resolution, bits (default: the profile's, else 10)")
	fs.IntVar(&f.ebits, "ebits", 0, "resolution after oversampling, bits (default: bits+2)")
	fs.Var(f.noiseV, "noise-v", "rms noise at the storage node, V (e.g. 2m)")
	fs.Float64Var(&f.refError, "ref-error", 0.002, "relative error of the true reference against its nominal volts (0.002 = 0.2 %)")
	fs.Float64Var(&f.divTol, "div-tol", 0.005, "relative tolerance of the divider ratios; each is drawn once from ± this (0.005 = 0.5 %)")
	fs.IntVar(&f.slowHz, "slow-hz", 10, "the board's slow (averaged) row rate at boot, Hz; a host may change it")
	fs.IntVar(&f.fastHz, "fast-hz", 100, "the board's fast sample rate at boot, Hz; a host may change it")
	fs.Float64Var(&f.rateHz, "rate-hz", 0, "model sample rate, Hz (default: the fast rate)")
	fs.StringVar(&f.start, "start", "00:00", "time of day (solar time, HH:MM) at which the robot is put on the sill, its storage empty")
	fs.StringVar(&f.link, "link", "", "keep a symbolic link at this path pointing at the pseudo-terminal")
	fs.DurationVar(&f.linger, "linger", time.Second, "after the model time ends, keep the port open this long so a host reads the last frames")
	return fs, f
}

// rig picks the rig the flags ask for.
func (f *robotFlags) rig() (*model.Rig, error) {
	if f.scenario != "" && f.profile != "" {
		return nil, usageErrorf("give --scenario or --profile, not both")
	}
	if f.profile != "" {
		p, err := profile.Load(f.profile)
		if err != nil {
			return nil, inputError(err)
		}
		rig, err := model.RigFromProfile(p, wire.MaxChannels)
		if err != nil {
			return nil, inputError(fmt.Errorf("%s: %w", f.profile, err))
		}
		return rig, nil
	}
	name := f.scenario
	if name == "" {
		name = "wren"
	}
	rig, err := model.ScenarioRig(name, wire.MaxChannels)
	if err != nil {
		return nil, usageErrorf("--scenario: %w", err)
	}
	return rig, nil
}

// check rejects impossible values.
func (f *robotFlags) check() error {
	switch {
	case f.baud <= 0:
		return usageErrorf("--baud %d: must be more than zero", f.baud)
	case !(f.hours > 0):
		return usageErrorf("--hours %g: must be more than zero", f.hours)
	case f.bits != 0 && (f.bits < 8 || f.bits > 16):
		return usageErrorf("--bits %d: want 8..16", f.bits)
	case f.refError <= -1 || f.refError >= 1:
		return usageErrorf("--ref-error %g: want a fraction between -1 and 1", f.refError)
	case f.divTol < 0 || f.divTol >= 1:
		return usageErrorf("--div-tol %g: want a fraction from 0 to below 1", f.divTol)
	case f.slowHz <= 0 || f.fastHz <= 0:
		return usageErrorf("--slow-hz and --fast-hz must be more than zero")
	case f.rateHz < 0:
		return usageErrorf("--rate-hz %g: must not be negative", f.rateHz)
	}
	return nil
}

// open makes the model source and the virtual board for the flags; the board is
// open (its path exists) but not running. It returns the speed the board runs at (the
// link's budget when --speed is auto) and the link budget of its boot settings.
func (f *robotFlags) open(rig *model.Rig) (*model.RigSource, *virtualboard.Board, float64, virtualboard.LinkBudget, error) {
	if f.bits != 0 {
		rig.Bits = f.bits
	}
	rate := f.rateHz
	if rate == 0 {
		rate = float64(f.fastHz)
	}
	src, err := model.NewRigSource(rig, f.hours*3600, rate)
	if err != nil {
		return nil, nil, 0, virtualboard.LinkBudget{}, inputError(fmt.Errorf("robot %s: %w", rig.Name, err))
	}
	ebits := f.ebits
	if ebits == 0 {
		ebits = min(16, rig.Bits+2)
	}
	cfg := boardConfig(rig, src, boardFlaws{EBits: ebits, NoiseV: f.noiseV.V, RefError: f.refError, DivTol: f.divTol, Seed: f.seed})
	cfg.SlowHz, cfg.FastHz, cfg.Link, cfg.Baud = f.slowHz, f.fastHz, f.link, f.baud
	// A deeper transmit queue than the board's default holds a burst's pre-trigger
	// ring whole; what the link cannot carry beyond it is dropped and counted.
	cfg.TxQueue = 1024
	lb, err := virtualboard.Budget(cfg)
	if err != nil {
		return nil, nil, 0, lb, usageErrorf("robot: %w", err)
	}
	cfg.Speed = f.speed.X
	if f.speed.Auto {
		cfg.Speed = virtualboard.AutoSpeed(lb.MaxSpeed)
	}
	b, err := virtualboard.Open(cfg)
	if err != nil {
		return nil, nil, 0, lb, usageErrorf("robot: %w", err)
	}
	return src, b, cfg.Speed, lb, nil
}

func runRobot(ctx context.Context, args []string, e *env) error {
	fs, f := newRobotFlags(e.stderr)
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return usageErrorf("unexpected argument %q", fs.Arg(0))
	}
	if err := f.check(); err != nil {
		return err
	}
	rig, err := f.rig()
	if err != nil {
		return err
	}
	if rig.StartS, err = units.ParseClock(f.start); err != nil {
		return usageErrorf("--start: %w", err)
	}
	src, b, speed, lb, err := f.open(rig)
	if err != nil {
		return err
	}
	defer b.Close()

	// The path alone on stdout, so that a script can read one line.
	fmt.Fprintln(e.stdout, b.Path())
	pace := virtualboard.DescribePace(speed, f.speed.Auto, f.baud, lb)
	fmt.Fprintf(e.stderr, "capcycle robot: %s on %s, %s, %g h of model time from %s; Ctrl-C stops\n",
		rig.Name, b.Path(), pace[0], f.hours, f.start)
	for _, w := range pace[1:] {
		fmt.Fprintf(e.stderr, "capcycle robot: %s\n", w)
	}

	runCtx, stop := context.WithCancel(ctx)
	defer stop()
	done := make(chan error, 1)
	go func() { done <- b.Run(runCtx) }()
	tick := time.NewTicker(robotStatusEvery(e.stderr))
	defer tick.Stop()
	term := cli.IsTerminal(e.stderr)
	for {
		select {
		case err := <-done:
			if term {
				fmt.Fprint(e.stderr, "\r\033[K")
			}
			fmt.Fprintf(e.stderr, "capcycle robot: %s\n", robotStatus(src, b))
			if err != nil && !errors.Is(err, context.Canceled) {
				return workErrorf("robot: %w", err)
			}
			if err := src.Err(); err != nil {
				return workErrorf("robot %s: model: %w", rig.Name, err)
			}
			if ctx.Err() != nil {
				fmt.Fprintln(e.stderr, "capcycle robot: stopped")
				return nil
			}
			// The model time is over: give the host a moment for the last frames.
			select {
			case <-ctx.Done():
			case <-time.After(f.linger):
			}
			fmt.Fprintln(e.stderr, "capcycle robot: the model time is over; port closed")
			return nil
		case <-tick.C:
			if term {
				fmt.Fprintf(e.stderr, "\r\033[K%s", robotStatus(src, b))
			} else {
				fmt.Fprintf(e.stderr, "capcycle robot: %s\n", robotStatus(src, b))
			}
		}
	}
}

// demoBoardHook, when a test sets it, adjusts the demo's virtual board configuration
// just before the board opens: the test injects stalls into the board's clock and
// source to show that the demo's verdicts do not depend on how busy the machine is.
var demoBoardHook func(*virtualboard.Config)

// robotStatusEvery is how often the status is shown: four times a second in place on a
// terminal, every ten seconds as a plain line elsewhere.
func robotStatusEvery(w io.Writer) time.Duration {
	if cli.IsTerminal(w) {
		return 250 * time.Millisecond
	}
	return 10 * time.Second
}
