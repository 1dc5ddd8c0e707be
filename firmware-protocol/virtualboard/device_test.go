package virtualboard

import (
	"fmt"
	"strings"
	"sync/atomic"
	"testing"

	"capcycle/firmware-protocol/wire"
)

// newTestDevice returns a device with one channel, 10 Hz slow, 100 Hz fast, thr 8,
// pre 4, post 3, recording the frames it sends.
func newTestDevice() (*device, *[]wire.Frame) {
	var out []wire.Frame
	var drop uint32
	d := &device{out: func(f wire.Frame) { out = append(out, f) }, drop: &drop,
		bursts: new(atomic.Int64), saveErr: new(atomic.Bool),
		ident: wire.Identity{Firmware: "t", Board: "t", Bits: 10, EBits: 12, ClockHz: 16000000}}
	d.defaults = settings{nch: 1, slowHz: 10, fastHz: 100, thr: 8, pre: 4, post: 3, ref: wire.RefAVcc,
		refUV: map[wire.Ref]uint32{wire.RefAVcc: 5000000, wire.RefInternal: 1100000, wire.RefExternal: 2500000}}
	d.defaults.div[0], d.defaults.gain[0] = 1000000, 1000000
	d.boot(wire.ResetPowerOn)
	out = out[:0]
	return d, &out
}

// summary writes frames compactly: A(seq:mean), B(seq:pre), S(seq:count), E(seq).
func summary(fs []wire.Frame) string {
	var parts []string
	for _, f := range fs {
		switch f := f.(type) {
		case wire.Average:
			parts = append(parts, fmt.Sprintf("A%d:%d", f.Seq, f.Mean[0]))
		case wire.Sample:
			parts = append(parts, fmt.Sprintf("S%d:%d", f.Seq, f.Counts[0]))
		case wire.BurstBegin:
			parts = append(parts, fmt.Sprintf("B%d:%d", f.Seq, f.Pre))
		case wire.BurstEnd:
			parts = append(parts, fmt.Sprintf("E%d", f.Seq))
		default:
			parts = append(parts, f.Tag())
		}
	}
	return strings.Join(parts, " ")
}

func TestAdaptiveCapture(t *testing.T) {
	d, out := newTestDevice()
	// 10 samples at 1000 (one A frame), 5 more at 1000, then a fall to 900 in two
	// steps, quiet at 900 for 3 samples (ends the burst), then 10 at 900.
	counts := []uint16{1000, 1000, 1000, 1000, 1000, 1000, 1000, 1000, 1000, 1000,
		1000, 1001, 1000, 1002, 1000,
		950, 900, 901, 900,
		900, 900, 900, 900, 900, 900, 900, 900, 900, 900}
	for i, c := range counts {
		d.sample(uint32(i*10000), [4]uint16{c})
	}
	// The ring holds the 4 samples before the trigger (1001 1000 1002 1000); the
	// quiet window (spread <= 8) is 900 901 900.
	want := "A0:1000 B1:4 S1:1001 S2:1000 S3:1002 S4:1000 S5:950 S6:900 S7:901 S8:900 E9 A9:900"
	if got := summary(*out); got != want {
		t.Errorf("got  %s\nwant %s", got, want)
	}
	a := (*out)[0].(wire.Average)
	if a.N != 10 || a.TimeUS != 0 || a.Min[0] != 1000 || a.Max[0] != 1000 {
		t.Errorf("first A frame %+v", a)
	}
	last := (*out)[len(*out)-1].(wire.Average)
	if last.TimeUS != 190000 {
		t.Errorf("A after the burst starts at %d µs, want 190000 (the sample after E)", last.TimeUS)
	}
	b := (*out)[1].(wire.BurstBegin)
	if b.TimeUS != 150000 {
		t.Errorf("B at %d µs, want the triggering sample's 150000", b.TimeUS)
	}
}

func TestAverageMinMaxAndRounding(t *testing.T) {
	d, out := newTestDevice()
	d.set.thr = 0 // no bursts
	for i, c := range []uint16{10, 11, 10, 11, 10, 11, 10, 11, 10, 12} {
		d.sample(uint32(i), [4]uint16{c})
	}
	a := (*out)[0].(wire.Average)
	// sum 106 over 10: (106 + 5) / 10 = 11 (rounded half up)
	if a.Mean[0] != 11 || a.Min[0] != 10 || a.Max[0] != 12 {
		t.Errorf("A %+v", a)
	}
}

func TestCommandsReplyFirst(t *testing.T) {
	d, out := newTestDevice()
	tests := []struct {
		cmd     wire.Frame
		want    string
		restart bool
	}{
		{wire.CmdRate{SlowHz: 5, FastHz: 100}, "OK ID CH", true},
		{wire.CmdRate{SlowHz: 3, FastHz: 100}, "ER", false},   // 100 not a multiple of 3
		{wire.CmdRate{SlowHz: 10, FastHz: 5000}, "ER", false}, // above max_hz
		{wire.CmdChan{N: 5}, "ER", false},
		{wire.CmdChan{N: 2}, "OK ID CH CH", true},
		{wire.CmdBurst{Thr: 4, Pre: 8, Post: 0}, "ER", false},
		{wire.CmdRef{Src: "vcc"}, "ER", false},
		{wire.CmdRef{Src: wire.RefInternal, RefUV: 1093000}, "OK ID CH CH", true},
		{wire.CmdStatus{}, "OK ST", false},
		{wire.CmdStop{}, "OK", false},
		{wire.CmdStart{}, "OK", true},
		{wire.Unknown{Start: '>', Name: "blink"}, "ER", false},
	}
	for _, tt := range tests {
		*out = (*out)[:0]
		restart := d.command(tt.cmd, 0)
		if got := summary(*out); got != tt.want || restart != tt.restart {
			t.Errorf("%#v: got %q restart %v, want %q %v", tt.cmd, got, restart, tt.want, tt.restart)
		}
	}
	if id := findID(t, d); id.Ref != wire.RefInternal || id.RefUV != 1093000 || id.NCh != 2 || id.SlowHz != 5 {
		t.Errorf("settings after the commands: %+v", id)
	}
}

func findID(t *testing.T, d *device) wire.Identity {
	var id wire.Identity
	old := d.out
	d.out = func(f wire.Frame) {
		if i, ok := f.(wire.Identity); ok {
			id = i
		}
	}
	d.identify(false)
	d.out = old
	return id
}

func TestSaveSurvivesReset(t *testing.T) {
	d, _ := newTestDevice()
	d.command(wire.CmdRate{SlowHz: 2, FastHz: 100}, 0)
	d.boot(wire.ResetPin)
	if d.set.slowHz != 10 {
		t.Fatalf("unsaved rate survived a reset: %d", d.set.slowHz)
	}
	d.command(wire.CmdRate{SlowHz: 2, FastHz: 100}, 0)
	d.command(wire.CmdSave{}, 0)
	d.command(wire.CmdRef{Src: wire.RefInternal, RefUV: 1}, 0)
	d.boot(wire.ResetWatchdog)
	if d.set.slowHz != 2 || d.set.refUV[wire.RefInternal] != 1100000 {
		t.Errorf("after save and reset: slow %d, int ref %d", d.set.slowHz, d.set.refUV[wire.RefInternal])
	}
}

func TestADCOversampling(t *testing.T) {
	// Without noise every conversion truncates to the same code: oversampling adds
	// no information (the app note's point), the result is 4*floor(x).
	a := adc{bits: 10, ebits: 12}
	if got := a.sample(1.5, 5); got != 4*307 { // 1.5/5*1024 = 307.2
		t.Errorf("noiseless: %d, want %d", got, 4*307)
	}
	// With about 1 LSB of noise the fraction is resolved. Two truncations bias the
	// mean: each conversion's floor (-0.5 LSB of 10 bits, so -2 of 12 bits) and the
	// right shift of the 16-sample sum by 2 (its remainder 0..3 is dropped, -1.5/4 on
	// average): the mean approaches 4*(x-0.5) - 0.375.
	a = adc{bits: 10, ebits: 12, noiseLSB: 1, rng: newRand(1)}
	sum := 0.0
	const n = 4000
	for range n {
		sum += float64(a.sample(1.5, 5))
	}
	want := 4*(307.2-0.5) - 0.375
	// The sd of one result is about sqrt(16)/4 = 1 count (16 conversions with 1 LSB
	// of noise each, the sum divided by 4); over 4000 results the mean's sd is 0.016: allow 0.1.
	if mean := sum / n; mean < want-0.1 || mean > want+0.1 {
		t.Errorf("noisy mean %.3f, want %.3f ± 0.1", mean, want)
	}
	if got := (&adc{bits: 10, ebits: 12}).sample(6, 5); got != 4092 {
		t.Errorf("above the reference: %d, want 4092 (1023 << 2)", got)
	}
}
