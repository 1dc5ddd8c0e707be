package logger

import (
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"capcycle/firmware-protocol/emulator"
)

var (
	emuOnce sync.Once
	emuBins emulator.Binaries
	emuErr  error
	emuDir  string
)

// emulatorBins builds the firmware and the simavr harness once per test binary.
func emulatorBins(t *testing.T) emulator.Binaries {
	t.Helper()
	if err := emulator.Available(); err != nil {
		t.Skip(err)
	}
	emuOnce.Do(func() {
		emuDir, emuErr = os.MkdirTemp("", "capcycle-logger-emulator-")
		if emuErr != nil {
			return
		}
		emuBins, emuErr = emulator.Build(context.Background(), "", emuDir)
	})
	if emuErr != nil {
		t.Fatal(emuErr)
	}
	return emuBins
}

// TestEmulatedFirmware records the real firmware running in simavr, its ADC0 driven by
// a sawtooth through a 1:3 divider: nothing lost or damaged, the volts follow the
// waveform, and the bursts come at the fast rate.
//
// The test waits on events, not on time: the harness is paced by the recorder's reads
// (it waits for a slow host), exits when the waveform ends, and the recorder notes the
// lost port at once. The recorder then never retries (RetryMin of an hour), so nothing
// but this board is ever recorded, and the handshake and silence limits are far beyond
// what a busy machine needs.
func TestEmulatedFirmware(t *testing.T) {
	if testing.Short() {
		t.Skip("runs the AVR emulator")
	}
	bins := emulatorBins(t)
	// A sawtooth in device seconds: 1.6 V to 2.7 V over 10 s, back to 1.6 V in 20 ms.
	var b strings.Builder
	b.WriteString("time_s vcap_v\n")
	for k := 0; k < 6; k++ {
		t0 := float64(k) * 10.02
		fmt.Fprintf(&b, "%.3f 1.6\n%.3f 2.7\n", t0, t0+10)
	}
	wave := filepath.Join(t.TempDir(), "saw.txt")
	if err := os.WriteFile(wave, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	emu, err := emulator.Start(ctx, bins, &emulator.Config{Waveform: wave, Div: []float64{1.0 / 3}})
	if err != nil {
		t.Fatal(err)
	}
	defer emu.Close()
	cfg := &Config{Port: emu.Path, Silence: time.Hour, Handshake: time.Hour,
		RetryMin: time.Hour, RetryMax: time.Hour}
	r := startRecording(t, cfg)
	select {
	case <-emu.Done():
	case <-r.done:
		t.Fatalf("the recording ended (%v) before the waveform; status %q", r.err, r.status.String())
	}
	// The harness closed the port when it exited: wait for the recorder to see that.
	for lost := "lost " + emu.Path; !strings.Contains(r.status.String(), lost); {
		select {
		case <-r.done:
			t.Fatalf("the recording ended (%v) without noting the lost port; status %q", r.err, r.status.String())
		case <-time.After(20 * time.Millisecond): // polls the status: an interval, not a limit
		}
	}
	sum := r.stop()
	if sum.Stats.Lost != 0 || sum.Stats.BadFrames != 0 {
		t.Errorf("stats %+v", sum.Stats)
	}
	ts, vs, rd := readCapture(t, cfg.Out)
	if len(ts) < 100 {
		t.Fatalf("%d rows", len(ts))
	}
	fast, maxV, minV := 0, 0.0, math.Inf(1)
	for i := 1; i < len(ts); i++ {
		if dt := ts[i] - ts[i-1]; dt < 0.003 {
			fast++
		}
		maxV, minV = math.Max(maxV, vs[i]), math.Min(minV, vs[i])
	}
	// The ADC resolves 5 V / 4096 / (1/3) = 3.7 mV at the node (12 bits after
	// oversampling); allow a few counts for the divider's rounding and interpolation.
	if math.Abs(maxV-2.7) > 0.03 || math.Abs(minV-1.6) > 0.03 {
		t.Errorf("volts from %v to %v, want 1.6 to 2.7", minV, maxV)
	}
	if fast == 0 {
		t.Errorf("no burst rows (fast spacing) in %d rows", len(ts))
	}
	t.Logf("%d rows (%d fast steps) over %.1f s, board %s; %+v", len(ts), fast, ts[len(ts)-1]-ts[0], rd.Meta()["board"], sum.Stats)
}
