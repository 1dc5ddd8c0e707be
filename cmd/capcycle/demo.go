package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"time"

	"capcycle/analyze"
	"capcycle/analyze/analysis"
	"capcycle/analyze/model"
	"capcycle/analyze/profile"
	htmlreport "capcycle/analyze/report"
	"capcycle/analyze/units"
	"capcycle/firmware-protocol/virtualboard"
	"capcycle/firmware-protocol/wire"
	"capcycle/logger"
)

// demoCommand is "capcycle demo".
func demoCommand() *command {
	return &command{
		name:    "demo",
		summary: "record an accelerated windowsill day from the virtual robot, analyse it and write reports",
		run:     runDemo,
	}
}

// The demo's board settings. The model runs at demoFastHz; the board sends an averaged
// row demoSlowHz times a second, and a burst at the fast rate when the storage voltage
// moves from the last row by more than half the trigger's nominal swing (demoThr: a
// fire, not the charging between two rows), so a day of thousands of cycles stays a file
// of a few hundred thousand rows. At speed 0 the board runs as fast as the recorder
// reads, which loses nothing and takes a few seconds per simulated day.
const (
	demoSpeed  = 0
	demoSlowHz = 2
	demoFastHz = 50
	demoPre    = 8
	demoPost   = 8
	// demoExtraBits is the oversampling of the virtual board: one extra bit from four
	// conversions per sample (AVR121), which keeps a simulated day quick.
	demoExtraBits = 1
)

// demoOptions are the demo's settings from its flags.
type demoOptions struct {
	out    string
	hours  float64
	start  string  // time of day the run starts, "HH:MM"
	startS float64 // the same in seconds from midnight
	board  string
	keep   bool
	speed  float64
	seed   uint64
	only   []string // scenarios to run; default all
}

// demoOutcome is what one scenario's run produced.
type demoOutcome struct {
	name     string
	capture  string
	bundle   htmlreport.Bundle
	result   *analysis.Result
	summary  *logger.Summary
	verdict  string
	finding  string // the first finding's message, or ""
	recordS  float64
	analyseS float64
}

func runDemo(ctx context.Context, args []string, e *env) error {
	fs := newFlags("demo", "[--out DIR] [--hours H] [--start HH:MM] [--board virtual|emulated] [--keep] [--speed X] [--seed N] [--scenario wren,fern]", e.stderr,
		"capcycle demo",
		"capcycle demo --out /tmp/demo --keep",
		"capcycle demo --board emulated --hours 0.25 --start 10:00")
	o := demoOptions{}
	outVar(fs, &o.out, "capcycle-demo", "directory for the reports (an earlier demo's files there are replaced)")
	fs.Float64Var(&o.hours, "hours", 24, "model time to record per scenario, hours")
	fs.StringVar(&o.start, "start", "00:00", "time of day (solar time, HH:MM) at which the robot is put on the sill, its storage empty")
	fs.StringVar(&o.board, "board", "virtual", "the board that measures the model: virtual (in-process) or emulated (the firmware in simavr)")
	fs.BoolVar(&o.keep, "keep", false, "keep the capture files in --out (by default they go to a temporary directory that is removed)")
	fs.Float64Var(&o.speed, "speed", demoSpeed, "how many times faster than real time the virtual robot runs; 0 runs as fast as the recorder reads")
	fs.Uint64Var(&o.seed, "seed", 1, "seed of the virtual board's noise and divider errors")
	scen := fs.String("scenario", "", "run only these scenarios (comma-separated: "+strings.Join(model.ScenarioNames(), ", ")+"); default all")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return usageErrorf("unexpected argument %q", fs.Arg(0))
	}
	switch {
	case !(o.hours > 0):
		return usageErrorf("--hours %g: must be more than zero", o.hours)
	case o.speed < 0:
		return usageErrorf("--speed %g: must not be negative", o.speed)
	case o.board != "virtual" && o.board != "emulated":
		return usageErrorf("--board %q: want virtual or emulated", o.board)
	}
	startS, err := units.ParseClock(o.start)
	if err != nil {
		return usageErrorf("--start: %w", err)
	}
	o.startS = startS
	o.only = model.ScenarioNames()
	if *scen != "" {
		o.only = nil
		for _, s := range recordSplit(*scen) {
			if _, err := model.ScenarioProfile(strings.ToLower(s)); err != nil {
				return usageErrorf("--scenario %q: want %s", s, strings.Join(model.ScenarioNames(), " or "))
			}
			o.only = append(o.only, strings.ToLower(s))
		}
	}
	return demo(ctx, &o, e)
}

// demo runs every scenario of o, concurrently, and prints the paths and verdicts.
func demo(ctx context.Context, o *demoOptions, e *env) error {
	if err := os.MkdirAll(o.out, 0o755); err != nil {
		return workErrorf("%w", err)
	}
	capDir := o.out
	if !o.keep {
		tmp, err := os.MkdirTemp("", "capcycle-demo-")
		if err != nil {
			return workErrorf("%w", err)
		}
		defer os.RemoveAll(tmp)
		capDir = tmp
	}
	var emu *emulatedBoards
	if o.board == "emulated" {
		var err error
		if emu, err = prepareEmulated(ctx, e.stderr); err != nil {
			return err
		}
		defer emu.close()
	}
	fmt.Fprintf(e.stderr, "capcycle demo: recording %g h of model time from %s per scenario (%s) through the serial stack; no hardware, no network\n",
		o.hours, o.start, strings.Join(o.only, ", "))
	start := time.Now()
	outs := make([]*demoOutcome, len(o.only))
	errs := make([]error, len(o.only))
	var wg sync.WaitGroup
	for i, name := range o.only {
		wg.Add(1)
		go func() {
			defer wg.Done()
			outs[i], errs[i] = demoScenario(ctx, name, o, capDir, emu)
		}()
	}
	wg.Wait()
	if ctx.Err() != nil {
		return workErrorf("stopped before the end; reports already written stay in %s", o.out)
	}
	if err := errors.Join(errs...); err != nil {
		return err
	}
	for _, out := range outs {
		printOutcome(e.stdout, out, o.keep)
	}
	fmt.Fprintf(e.stderr, "capcycle demo: done in %.1f s\n", time.Since(start).Seconds())
	return nil
}

func printOutcome(w io.Writer, out *demoOutcome, keep bool) {
	r := out.result
	full, _ := analysis.CountCycles(r.Cycles)
	fmt.Fprintf(w, "%s: %s\n", r.Source.Profile, out.verdict)
	if out.finding != "" {
		fmt.Fprintf(w, "  first finding: %s\n", out.finding)
	}
	fmt.Fprintf(w, "  %d samples over %s, %d cycles (%d full); recorded in %.1f s, analysed in %.1f s\n",
		r.Samples, units.Duration(r.DurationS), len(r.Cycles), full, out.recordS, out.analyseS)
	if s := out.summary; s != nil && (s.Stats.Lost > 0 || s.Stats.BadFrames > 0) {
		fmt.Fprintf(w, "  the recorder lost %d samples and dropped %d bad frames\n", s.Stats.Lost, s.Stats.BadFrames)
	}
	fmt.Fprintf(w, "  report:   %s\n  analysis: %s\n  cycles:   %s\n", out.bundle.HTML, out.bundle.JSON, out.bundle.CSV)
	if keep {
		fmt.Fprintf(w, "  capture:  %s\n", out.capture)
	}
}

// demoScenario records, analyses and reports one scenario.
func demoScenario(ctx context.Context, name string, o *demoOptions, capDir string, emu *emulatedBoards) (*demoOutcome, error) {
	raw, err := model.ScenarioProfile(name)
	if err != nil {
		return nil, workErrorf("%w", err)
	}
	p, err := profile.Parse(name+".toml", raw)
	if err != nil {
		return nil, workErrorf("built-in profile: %w", err)
	}
	rig, err := model.RigFromProfile(p, wire.MaxChannels)
	if err != nil {
		return nil, workErrorf("%s: %w", name, err)
	}
	rig.StartS = o.startS
	out := &demoOutcome{name: name, capture: filepath.Join(capDir, name+".capture.csv")}
	t0 := time.Now()
	if emu != nil {
		out.summary, err = recordEmulated(ctx, emu, rig, p, o, out.capture)
	} else {
		out.summary, err = recordVirtual(ctx, rig, p, o, out.capture)
	}
	if err != nil {
		return nil, err
	}
	out.recordS = time.Since(t0).Seconds()

	t1 := time.Now()
	res, err := analyseDemo(ctx, p, out.capture)
	if err != nil {
		return nil, err
	}
	out.analyseS = time.Since(t1).Seconds()
	out.result = res
	out.verdict = htmlreport.Verdict(res).String()
	if len(res.Findings) > 0 {
		out.finding = res.Findings[0].Message
	}
	title := fmt.Sprintf("capcycle demo: %s, a day on the windowsill (%s board)", p.Name, o.board)
	if o.hours != 24 || o.startS != 0 {
		title = fmt.Sprintf("capcycle demo: %s, %s on the windowsill from %s (%s board)", p.Name, units.Duration(o.hours*3600), o.start, o.board)
	}
	out.bundle, err = htmlreport.WriteBundle(o.out, name, res, &htmlreport.Options{Title: title, Overwrite: true})
	if err != nil {
		return nil, workErrorf("%s: %w", name, err)
	}
	return out, nil
}

// analyseDemo analyses a demo capture with its profile. (The ADC step comes from the
// capture's channel line, so the night's hours at 0 V need no help.)
func analyseDemo(ctx context.Context, p *profile.Profile, path string) (*analysis.Result, error) {
	res, err := analyze.File(ctx, path, &analyze.Options{Profile: p, Declared: analyze.Declare(p)})
	if err != nil {
		return nil, workErrorf("%s: analysis: %w", p.Name, err)
	}
	return res, nil
}

// demoFlaws are the virtual board's imperfections in the demo: a little noise, a
// reference 0.2 % off its nominal volts and dividers within 0.5 %.
func demoFlaws(seed uint64) boardFlaws {
	return boardFlaws{NoiseV: 2e-3, RefError: 0.002, DivTol: 0.005, Seed: seed}
}

// recordVirtual runs the model behind a virtual board on a pseudo-terminal and records
// it with the logger over the real serial stack until the model time is over and every
// byte the board wrote has been read.
func recordVirtual(ctx context.Context, rig *model.Rig, p *profile.Profile, o *demoOptions, path string) (*logger.Summary, error) {
	src, err := model.NewRigSource(rig, o.hours*3600, demoFastHz)
	if err != nil {
		return nil, workErrorf("%s: %w", rig.Name, err)
	}
	fl := demoFlaws(o.seed)
	fl.EBits = min(16, rig.Bits+demoExtraBits)
	bcfg := boardConfig(rig, src, fl)
	bcfg.Speed = o.speed
	bcfg.SlowHz, bcfg.FastHz, bcfg.Thr, bcfg.Pre, bcfg.Post = demoSlowHz, demoFastHz, p.BurstThreshold(rig.Div[0], rig.RefV, fl.EBits), demoPre, demoPost
	bcfg.TxQueue = 4096
	var written logger.ByteCounter
	bcfg.Tap = &written
	if demoBoardHook != nil {
		demoBoardHook(bcfg)
	}
	b, err := virtualboard.Open(bcfg)
	if err != nil {
		return nil, workErrorf("%s: %w", rig.Name, err)
	}
	defer b.Close()

	var read logger.ByteCounter
	lcfg := &logger.Config{
		Port: b.Path(), Open: logger.CountingOpen(nil, &read), Out: path, Force: true,
		Notes: []string{"demo: the virtual robot (circuit model) on a virtual board, " + fmt.Sprintf("%gx real time", o.speed)},
	}
	if err := recordFromProfile(lcfg, p, false); err != nil {
		return nil, err
	}
	run := func(ctx context.Context) error {
		if err := b.Run(ctx); err != nil {
			return err
		}
		return src.Err()
	}
	return recordUntilDrained(ctx, lcfg, rig.Name, run, func() bool { return read.N() >= written.N() })
}

// recordUntilDrained records while run drives the board (logger.RecordWhile), until
// drained says the host has read everything.
func recordUntilDrained(ctx context.Context, lcfg *logger.Config, name string, run func(context.Context) error, drained func() bool) (*logger.Summary, error) {
	s, err := logger.RecordWhile(ctx, lcfg, run, drained, 100*time.Millisecond)
	if err != nil {
		return nil, workErrorf("%s: %w", name, err)
	}
	return s, nil
}
