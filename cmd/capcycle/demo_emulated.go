package main

import (
	"bufio"
	"context"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
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
		return nil, workErrorf("the emulated board is not available here: %v (install gcc-avr, avr-libc and libsimavr-dev, or use --board virtual)", err)
	}
	src, err := emulator.SourceDir()
	if err != nil {
		return nil, workErrorf("the emulated board needs the capcycle source tree (firmware-protocol/), which this binary cannot find: %v; use --board virtual", err)
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
	var read counter
	lcfg := &logger.Config{
		Port: board.Path, Open: countingOpen(&read), Out: path, Force: true,
		SlowHz: demoSlowHz, FastHz: demoFastHz, Burst: &logger.Burst{Thr: uint32(demoThr(p, rig, emulatedEBits)), Pre: demoPre, Post: demoPost},
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
	last, quiet := read.n.Load(), time.Now()
	drained := func() bool {
		if n := read.n.Load(); n != last {
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

// writeWaveform samples the model of rig at the demo's fast rate and writes the points
// a piecewise-linear waveform needs to stay within waveTolV of every sample (and at
// least one a minute), in the emulator's format: time, then volts per input.
func writeWaveform(path string, rig *model.Rig, durationS float64) error {
	src, err := model.NewRigSource(rig, durationS, demoFastHz)
	if err != nil {
		return err
	}
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	w := bufio.NewWriter(f)
	fmt.Fprint(w, "time_s")
	for _, n := range rig.Nodes {
		fmt.Fprintf(w, " %s_v", n)
	}
	fmt.Fprintln(w)
	row := func(t float64, v []float64) {
		w.WriteString(strconv.FormatFloat(t, 'f', 4, 64))
		for _, x := range v {
			w.WriteByte(' ')
			w.WriteString(strconv.FormatFloat(x, 'f', 5, 64))
		}
		w.WriteByte('\n')
	}
	n := len(rig.Nodes)
	last, prev, cur := make([]float64, n), make([]float64, n), make([]float64, n)
	lastT, prevT := 0.0, 0.0
	step := 1.0 / demoFastHz
	first := true
	for i := 0; ; i++ {
		t := float64(i) * step
		clear(cur)
		if !src.Sample(t, cur) {
			break
		}
		if first {
			row(t, cur)
			copy(last, cur)
			lastT, first = t, false
		} else if t-lastT > 60 || far(last, cur, waveTolV) {
			// The voltage moved: the previous sample ends the straight stretch.
			if prevT > lastT {
				row(prevT, prev)
				copy(last, prev)
				lastT = prevT
			}
			if far(last, cur, waveTolV) || t-lastT > 60 {
				row(t, cur)
				copy(last, cur)
				lastT = t
			}
		}
		copy(prev, cur)
		prevT = t
	}
	if prevT > lastT {
		row(prevT, prev)
	}
	if err := src.Err(); err != nil {
		f.Close()
		return err
	}
	if err := w.Flush(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

func far(a, b []float64, tol float64) bool {
	for k := range a {
		if math.Abs(a[k]-b[k]) > tol {
			return true
		}
	}
	return false
}
