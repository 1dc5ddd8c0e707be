package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"time"

	"capcycle/analyze/model"
	"capcycle/analyze/profile"
	"capcycle/firmware-protocol/emulator"
	"capcycle/logger"
)

// emulatedBoards is the built firmware and harness of "capcycle demo --board emulated".
type emulatedBoards struct {
	bins emulator.Binaries
	dir  string
}

func (b *emulatedBoards) close() { os.RemoveAll(b.dir) }

// prepareEmulated builds the firmware and the simavr harness, or says plainly why the
// emulated board is not available here.
func prepareEmulated(ctx context.Context, status io.Writer) (*emulatedBoards, error) {
	if err := emulator.Available(); err != nil {
		return nil, workErrorf("the emulated board is not available here: %w (install gcc-avr, avr-libc and libsimavr-dev, or use --board virtual)", err)
	}
	src, err := emulator.SourceDir()
	if err != nil {
		return nil, workErrorf("the emulated board needs the capcycle source tree (firmware-protocol/), which this binary cannot find: %w; use --board virtual", err)
	}
	dir, err := os.MkdirTemp("", "capcycle-emulator-")
	if err != nil {
		return nil, workErrorf("%w", err)
	}
	fmt.Fprintln(status, "capcycle demo: building the firmware (avr-gcc) and the simavr harness")
	fmt.Fprintln(status, "capcycle demo: the emulated board runs the firmware instruction by instruction, about 100 times faster than real time on a 2-core machine: a 24-hour day takes about a quarter of an hour (try --hours 1 --start 10:00)")
	bctx, cancel := context.WithTimeout(ctx, 3*time.Minute)
	defer cancel()
	bins, err := emulator.Build(bctx, src, dir)
	if err != nil {
		os.RemoveAll(dir)
		return nil, workErrorf("building the emulated board: %w", err)
	}
	return &emulatedBoards{bins: bins, dir: dir}, nil
}

// recordEmulated writes the model's node voltages as a waveform file, runs the real
// firmware in simavr driven by it, and records the emulated board with the logger over
// the real serial stack until the waveform ends.
func recordEmulated(ctx context.Context, emu *emulatedBoards, rig *model.Rig, p *profile.Profile, o *demoOptions, path string) (*logger.Summary, error) {
	wave := filepath.Join(emu.dir, rig.Name+".wave")
	if err := writeWaveform(wave, rig, o.hours*3600); err != nil {
		return nil, workErrorf("%s: waveform: %w", rig.Name, err)
	}
	board, err := emulator.Start(ctx, emu.bins, &emulator.Config{Waveform: wave, Div: rig.Div, AVccMV: int(math.Round(rig.RefV * 1000))})
	if err != nil {
		return nil, workErrorf("%s: emulated board: %w", rig.Name, err)
	}
	defer board.Close()
	var read logger.ByteCounter
	lcfg := &logger.Config{
		Port: board.Path, Open: logger.CountingOpen(nil, &read), Out: path, Force: true,
		SlowHz: demoSlowHz, FastHz: demoFastHz, Burst: &logger.Burst{Thr: uint32(p.BurstThreshold(rig.Div[0], rig.RefV, emulatedEBits)), Pre: demoPre, Post: demoPost},
		Notes: []string{"demo: the board firmware in simavr, its ADC driven by the circuit model"},
	}
	if err := recordFromProfile(lcfg, p, false); err != nil {
		return nil, err
	}
	run := func(ctx context.Context) error {
		select {
		case <-board.Done():
			return nil
		case <-ctx.Done():
			return ctx.Err()
		}
	}
	// The harness has exited with the waveform: whatever it wrote is in the
	// pseudo-terminal or already read; a quiet port for a moment means it is all read.
	last, quiet := read.N(), time.Now()
	drained := func() bool {
		if n := read.N(); n != last {
			last, quiet = n, time.Now()
		}
		return time.Since(quiet) > 300*time.Millisecond
	}
	return recordUntilDrained(ctx, lcfg, rig.Name, run, drained)
}

// emulatedEBits is the firmware's resolution after oversampling (its default).
const emulatedEBits = 12

// waveTolV is how far the waveform file may stray from the model between its points.
const waveTolV = 2e-3

// writeWaveform samples the model of rig at the demo's fast rate into the emulator's
// waveform file (emulator.WriteWaveform), within waveTolV of every sample.
func writeWaveform(path string, rig *model.Rig, durationS float64) error {
	src, err := model.NewRigSource(rig, durationS, demoFastHz)
	if err != nil {
		return err
	}
	names := make([]string, len(rig.Nodes))
	for k, n := range rig.Nodes {
		names[k] = n.String()
	}
	if err := emulator.WriteWaveform(path, names, demoFastHz, waveTolV, src.Sample); err != nil {
		return err
	}
	return src.Err()
}
