package emulator_test

// Integration tests: the real firmware image in simavr, read through the real serial
// stack (go.bug.st/serial on the harness's pseudo-terminal) and the wire codec.
//
// Datasheet figures used below (ATmega328P datasheet, ADC chapter; from memory):
//   - ADC result = Vin * 1024 / Vref for a 10-bit conversion ("ADC Conversion Result").
//   - a conversion takes 13 ADC clocks, the first after enabling the ADC 25 ("Prescaling
//     and Conversion Timing", table "ADC Conversion Time"); at 125 kHz that is 104 us and
//     200 us. The firmware budgets 14 clocks per chained conversion (adc.c).
//   - the internal band-gap reference is 1.1 V nominal, 1.0 V to 1.2 V over parts
//     ("Electrical Characteristics", ADC characteristics, V_INT). simavr models the
//     nominal 1.1 V; a real board's band-gap must be calibrated (>ref ref_uv=...).

import (
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"go.bug.st/serial"

	"capcycle/firmware-protocol/emulator"
	"capcycle/firmware-protocol/wire"
)

var (
	bins     emulator.Binaries
	buildErr error
	skipMsg  string
)

func TestMain(m *testing.M) {
	if err := emulator.Available(); err != nil {
		skipMsg = err.Error()
		os.Exit(m.Run())
	}
	dir, err := os.MkdirTemp("", "capcycle-emulator-")
	if err != nil {
		buildErr = err
	} else {
		bins, buildErr = emulator.Build(context.Background(), "", dir)
	}
	code := m.Run()
	if dir != "" {
		os.RemoveAll(dir)
	}
	os.Exit(code)
}

// holdS is how long, in device seconds, every test's waveform lasts: far longer than any
// test reads. The harness runs ahead of its host by at most its 16 KB queue and the
// pseudo-terminal's buffer (under a minute of device time at the default rates), then
// waits for the host to read; so a test, however slowly a busy machine runs it, reads
// everything it waits for before the waveform ends and the harness exits (taking the
// unread bytes in the pseudo-terminal with it). The test's cleanup stops the harness.
const holdS = 600

// divider is the ratio of the emulated resistor divider in front of ADC0, the same as
// the firmware's default CH div (PROTOCOL.md, CH example).
const divider = 0.333333

// board is an emulated board with the host side of its serial link.
type board struct {
	t    *testing.T
	emu  *emulator.Board
	port serial.Port
	dec  *wire.Decoder
	tr   *boardReader
}

// boardReader turns go.bug.st/serial's (0, nil) read timeouts (STYLE.md: the go-serial
// read-timeout trap) into an error once no more bytes can come: the harness has exited,
// and its pseudo-terminal with it. There is no wall-clock budget: the emulated board is
// paced by these reads (the harness waits for a slow host), so a slow test only slows the
// board down. A board that stays silent while its harness runs is a firmware fault that
// go test's -timeout catches; the reader gives up a little before that deadline so that
// the test reports which frame it was waiting for.
type boardReader struct {
	p        serial.Port
	done     <-chan struct{} // closed when the harness exits
	deadline time.Time       // zero: go test has no deadline
}

var (
	errHarnessExited = errors.New("the emulator harness exited")
	errDeadline      = errors.New("go test's -timeout is near")
)

func (r *boardReader) Read(b []byte) (int, error) {
	for {
		n, err := r.p.Read(b)
		if n > 0 || err != nil {
			return n, err
		}
		select {
		case <-r.done:
			return 0, errHarnessExited
		default:
		}
		if !r.deadline.IsZero() && time.Now().After(r.deadline) {
			return 0, errDeadline
		}
	}
}

// startBoard writes the waveform, starts the emulated board and opens its port.
func startBoard(t *testing.T, wave string) *board {
	t.Helper()
	return startBoardEE(t, wave, "")
}

// startBoardEE is startBoard with an EEPROM image file ("" for a blank EEPROM).
func startBoardEE(t *testing.T, wave, eeprom string) *board {
	t.Helper()
	if skipMsg != "" {
		t.Skip("emulated board unavailable: " + skipMsg)
	}
	if buildErr != nil {
		t.Fatalf("building the emulated board: %v", buildErr)
	}
	path := filepath.Join(t.TempDir(), "wave.txt")
	if err := os.WriteFile(path, []byte(wave), 0o644); err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	emu, err := emulator.Start(ctx, bins, &emulator.Config{Waveform: path, Div: []float64{divider}, EEPROM: eeprom})
	if err != nil {
		cancel()
		t.Fatal(err)
	}
	b := &board{t: t, emu: emu}
	t.Cleanup(func() {
		if b.port != nil {
			b.port.Close()
		}
		emu.Close()
		cancel()
		if t.Failed() {
			t.Logf("harness stderr:\n%s", emu.Stderr())
		}
	})
	b.open()
	return b
}

func (b *board) open() {
	b.t.Helper()
	p, err := serial.Open(b.emu.Path, &serial.Mode{BaudRate: 1000000})
	if err != nil {
		b.t.Fatalf("open %s: %v", b.emu.Path, err)
	}
	if err := p.SetReadTimeout(50 * time.Millisecond); err != nil {
		b.t.Fatal(err)
	}
	b.port = p
	b.tr = &boardReader{p: p, done: b.emu.Done()}
	if d, ok := b.t.Deadline(); ok {
		b.tr.deadline = d.Add(-10 * time.Second)
	}
	if b.dec == nil {
		b.dec = wire.NewDecoder(b.tr)
	} else {
		b.dec.Reset(b.tr)
	}
}

func (b *board) close() {
	b.t.Helper()
	if err := b.port.Close(); err != nil {
		b.t.Fatal(err)
	}
	b.port = nil
}

// next returns the next good frame; bad frames fail the test.
func (b *board) next() wire.Frame {
	b.t.Helper()
	for {
		f, err := b.dec.Next()
		var fe *wire.FrameError
		if errors.As(err, &fe) {
			b.t.Fatalf("bad frame from the board: %v", err)
		}
		if err != nil {
			b.t.Fatalf("reading the board: %v", err)
		}
		return f
	}
}

// until reads frames, passing each to fn, until fn returns true.
func (b *board) until(what string, fn func(wire.Frame) bool) {
	b.t.Helper()
	for i := 0; i < 200000; i++ {
		if fn(b.next()) {
			return
		}
	}
	b.t.Fatalf("never saw %s", what)
}

func (b *board) send(cmd wire.Frame) {
	b.t.Helper()
	if _, err := b.port.Write(wire.Append(nil, cmd)); err != nil {
		b.t.Fatalf("send %s: %v", cmd.Tag(), err)
	}
}

// expectReply reads up to the reply to cmd and returns it (Ack or Nak).
func (b *board) expectReply(tag string) wire.Frame {
	b.t.Helper()
	var reply wire.Frame
	b.until("the reply to >"+tag, func(f wire.Frame) bool {
		switch r := f.(type) {
		case wire.Ack:
			if r.Cmd == tag {
				reply = r
				return true
			}
		case wire.Nak:
			if r.Cmd == tag {
				reply = r
				return true
			}
		}
		return false
	})
	return reply
}

// bootFrames reads the frames sent at reset: ID (boot=1), CH, ST.
func (b *board) bootFrames() (wire.Identity, wire.Channel, wire.Status) {
	b.t.Helper()
	id, ok := b.next().(wire.Identity)
	if !ok {
		b.t.Fatal("the first frame is not ID")
	}
	ch, ok := b.next().(wire.Channel)
	if !ok {
		b.t.Fatal("ID is not followed by CH")
	}
	st, ok := b.next().(wire.Status)
	if !ok {
		b.t.Fatal("CH is not followed by ST")
	}
	return id, ch, st
}

// flat is a waveform holding v volts at the input for holdS seconds of device time.
func flat(v float64) string {
	return fmt.Sprintf("time_s vcap_v\n0 %g\n%d %g\n", v, holdS, v)
}

func TestIdentity(t *testing.T) {
	b := startBoard(t, flat(7.5))
	id, ch, st := b.bootFrames()
	want := wire.Identity{
		Proto: 1, Firmware: "0.1.0", Board: "328p16", Bits: 10, EBits: 12,
		Ref: wire.RefAVcc, RefUV: 5000000, NCh: 1, ClockHz: 16000000,
		SlowHz: 10, FastHz: 500, Thr: 8, Pre: 32, Post: 32, Boot: true,
	}
	id.MaxHz, want.MaxHz = 0, 0 // checked below
	id.Extra = nil
	if fmt.Sprint(id) != fmt.Sprint(want) {
		t.Errorf("boot ID\n got %+v\nwant %+v", id, want)
	}
	if ch.Ch != 0 || ch.Div != 333333 || ch.Gain != 1000000 || ch.OffUV != 0 {
		t.Errorf("CH = %+v, want ch 0, div 0.333333, gain 1, off 0", ch)
	}
	// simavr starts the core with the power-on reset flag set.
	if st.Reset != wire.ResetPowerOn || !st.Running || st.Overruns != 0 || st.Dropped != 0 {
		t.Errorf("boot ST = %+v, want reset=por run=1 ovr=0 drop=0", st)
	}

	b.send(wire.CmdID{})
	if r, ok := b.expectReply("id").(wire.Ack); !ok {
		t.Fatalf("reply to >id: %+v", r)
	}
	id2, ok := b.next().(wire.Identity)
	if !ok || id2.Boot {
		t.Fatalf("after OK to >id: %+v, want ID boot=0", id2)
	}
	// max_hz: 16 conversions of at most 14 ADC clocks at 125 kHz (112 us each) and
	// 64 us of interrupt time: 1e6 / (16*112 + 64) = 538 Hz.
	if id2.MaxHz != 538 {
		t.Errorf("max_hz = %d, want 538", id2.MaxHz)
	}
	if _, ok := b.next().(wire.Channel); !ok {
		t.Error("ID after >id is not followed by CH")
	}
}

// averages collects n A frames after skipping `skip`.
func (b *board) averages(skip, n int) []wire.Average {
	b.t.Helper()
	var out []wire.Average
	b.until(fmt.Sprintf("%d A frames", n), func(f wire.Frame) bool {
		if a, ok := f.(wire.Average); ok {
			if skip > 0 {
				skip--
				return false
			}
			out = append(out, a)
		}
		return len(out) == n
	})
	return out
}

func TestSampleSpacing(t *testing.T) {
	// Steady 6 V, then a slow ramp that bursts at every step of thr counts is not needed:
	// a 4 V step at 3 s gives one burst of S frames at the fast rate.
	b := startBoard(t, fmt.Sprintf("0 6\n3 6\n3.001 2\n%d 2\n", holdS))
	b.bootFrames()
	as := b.averages(1, 20)
	// Slow rate: A frames start 1/slow_hz apart, each the mean of fast/slow samples.
	for i, a := range as {
		if a.N != 50 {
			t.Fatalf("A %d: n = %d, want 500/10 = 50", i, a.N)
		}
	}
	span := float64(as[len(as)-1].TimeUS-as[0].TimeUS) / 1e6
	rate := float64(len(as)-1) / span
	if rel := math.Abs(rate-10) / 10; rel > 0.001 {
		t.Errorf("A rate %.6f Hz, want 10 Hz within 0.1 %%", rate)
	}
	// Fast rate: the S frames of the burst.
	var ss []wire.Sample
	b.until("a burst with 40 S frames", func(f wire.Frame) bool {
		if s, ok := f.(wire.Sample); ok {
			ss = append(ss, s)
		}
		return len(ss) == 40
	})
	for i := 1; i < len(ss); i++ {
		if ss[i].Seq != ss[i-1].Seq+1 {
			t.Fatalf("S seq %d follows %d", ss[i].Seq, ss[i-1].Seq)
		}
	}
	span = float64(ss[len(ss)-1].TimeUS-ss[0].TimeUS) / 1e6
	rate = float64(len(ss)-1) / span
	if rel := math.Abs(rate-500) / 500; rel > 0.001 {
		t.Errorf("S rate %.6f Hz, want 500 Hz within 0.1 %%", rate)
	}
}

// lsb is one 10-bit step at the input: ref/1024 at the pin, over the divider.
func lsb(refV float64) float64 { return refV / 1024 / divider }

func TestValues(t *testing.T) {
	// Input levels held 0.6 s each; bursts off so every level gives A frames.
	levels := []float64{0.5, 3.3, 7.25, 11.9, 14.2}
	var w strings.Builder
	w.WriteString("0 0.5\n1 0.5\n")
	t0 := 1.0
	for _, v := range levels {
		fmt.Fprintf(&w, "%g %g\n%g %g\n", t0+0.001, v, t0+0.6, v)
		t0 += 0.6
	}
	fmt.Fprintf(&w, "%d %g\n", holdS, levels[len(levels)-1])
	b := startBoard(t, w.String())
	_, ch, _ := b.bootFrames()
	b.send(wire.CmdBurst{Thr: 0, Pre: 32, Post: 32})
	if _, ok := b.expectReply("burst").(wire.Ack); !ok {
		t.Fatal(">burst thr=0 refused")
	}
	checked := 0
	b.until("A frames over every level", func(f wire.Frame) bool {
		a, ok := f.(wire.Average)
		if !ok {
			return false
		}
		start := float64(a.TimeUS) / 1e6
		end := start + float64(a.N-1)/500
		if start < 1.0 {
			return false
		}
		k := int((start - 1.0) / 0.6)
		if k >= len(levels) {
			return true
		}
		lo, hi := 1.0+float64(k)*0.6+0.002, 1.0+float64(k+1)*0.6
		if start < lo || end > hi {
			return false // straddles a step
		}
		v := ch.Volts(float64(a.Mean[0]), 12, 5000000)
		// ADC result = Vin*1024/Vref (datasheet); decoding by the same formula is
		// within one 10-bit step of the input (the truncation), at the input that step
		// is 5 V/1024/div = 14.6 mV.
		if d := math.Abs(v - levels[k]); d > lsb(5) {
			t.Errorf("level %.3f V: decoded %.4f V, off by %.2f LSB", levels[k], v, d/lsb(5))
		}
		if a.Min[0] != a.Mean[0] || a.Max[0] != a.Mean[0] {
			t.Errorf("level %.3f V: steady input but lo %d mean %d hi %d", levels[k], a.Min[0], a.Mean[0], a.Max[0])
		}
		checked++
		return false
	})
	if checked < 20 {
		t.Errorf("only %d A frames inside the levels", checked)
	}
}

func TestBandGapReference(t *testing.T) {
	// 2.4 V at the input is 0.8 V at the pin, inside the 1.1 V band-gap range.
	b := startBoard(t, flat(2.4))
	_, ch, _ := b.bootFrames()
	b.send(wire.CmdRef{Src: wire.RefInternal})
	if _, ok := b.expectReply("ref").(wire.Ack); !ok {
		t.Fatal(">ref src=int refused")
	}
	id, ok := b.next().(wire.Identity)
	if !ok || id.Ref != wire.RefInternal || id.RefUV != 1100000 {
		t.Fatalf("after >ref: %+v, want ref=int ref_uv=1100000 (nominal band-gap)", id)
	}
	as := b.averages(1, 5)
	for _, a := range as {
		v := ch.Volts(float64(a.Mean[0]), id.EBits, id.RefUV)
		if d := math.Abs(v - 2.4); d > lsb(1.1) {
			t.Errorf("band-gap reference: decoded %.4f V for 2.4 V, off by %.2f LSB", v, d/lsb(1.1))
		}
	}
}

func TestBurst(t *testing.T) {
	// 9 V, then a fall to 3 V in 20 ms at 1.5 s, as when a trigger fires into a motor.
	b := startBoard(t, fmt.Sprintf("0 9\n1.5 9\n1.52 3\n%d 3\n", holdS))
	_, ch, _ := b.bootFrames()
	var begin wire.BurstBegin
	var lastA wire.Average
	b.until("B", func(f wire.Frame) bool {
		switch f := f.(type) {
		case wire.Average:
			lastA = f
		case wire.BurstBegin:
			begin = f
			return true
		}
		return false
	})
	tb := float64(begin.TimeUS) / 1e6
	// A sample's time is its timer tick; its 16 conversions (at most 14 ADC clocks =
	// 112 us each) fill the 1.8 ms after it. The device clock starts at the first tick,
	// after the boot's reference settling (25 + 3*13 ADC clocks = 0.5 ms, datasheet
	// conversion times) and set-up, so it runs up to about 1 ms behind the waveform's
	// time. The triggering sample (8 counts past the reference: 29 mV at the input) is
	// the first whose conversions reach into the fall: its tick lies between 2.8 ms
	// before and 0.2 ms after 1.5 s.
	if tb < 1.5-0.0028 || tb > 1.5+0.0002 {
		t.Errorf("burst triggered at %.6f s, want within [-2.8 ms, +0.2 ms] of 1.5 s", tb)
	}
	if begin.Pre != 32 {
		t.Errorf("B pre = %d, want 32", begin.Pre)
	}
	if begin.Seq != lastA.Seq+1 {
		t.Errorf("B seq %d after A seq %d", begin.Seq, lastA.Seq)
	}
	var ss []wire.Sample
	var end wire.BurstEnd
	b.until("E", func(f wire.Frame) bool {
		switch f := f.(type) {
		case wire.Sample:
			ss = append(ss, f)
		case wire.BurstEnd:
			end = f
			return true
		case wire.Average:
			t.Fatal("A frame inside a burst")
		}
		return false
	})
	if len(ss) < 32+10+32 {
		t.Fatalf("burst has %d S frames, want the 32 pre-trigger, the 10 of the fall and 32 quiet ones", len(ss))
	}
	for i, s := range ss {
		if s.Seq != begin.Seq+uint32(i) {
			t.Fatalf("S %d: seq %d, want %d", i, s.Seq, begin.Seq+uint32(i))
		}
		want := begin.TimeUS + uint32((i-32)*2000)
		if s.TimeUS != want {
			t.Fatalf("S %d: t_us %d, want %d (2000 us steps around the trigger)", i, s.TimeUS, want)
		}
	}
	for i := 0; i < 32; i++ {
		if v := ch.Volts(float64(ss[i].Counts[0]), 12, 5000000); math.Abs(v-9) > lsb(5) {
			t.Errorf("pre-trigger S %d: %.4f V, want 9 V", i, v)
		}
	}
	if v := ch.Volts(float64(ss[len(ss)-1].Counts[0]), 12, 5000000); math.Abs(v-3) > lsb(5) {
		t.Errorf("last S: %.4f V, want 3 V", v)
	}
	if end.Seq != ss[len(ss)-1].Seq+1 || end.TimeUS != ss[len(ss)-1].TimeUS {
		t.Errorf("E = %+v after last S %+v", end, ss[len(ss)-1])
	}
	a := b.averages(0, 1)[0]
	if a.Seq != end.Seq {
		t.Errorf("first A after E has seq %d, want %d", a.Seq, end.Seq)
	}
}

func TestRateCommand(t *testing.T) {
	b := startBoard(t, flat(5))
	b.bootFrames()
	// Refused: 400 is not a multiple of 7; 2000 Hz is above max_hz.
	for _, c := range []wire.CmdRate{{SlowHz: 7, FastHz: 400}, {SlowHz: 10, FastHz: 2000}} {
		b.send(c)
		r, ok := b.expectReply("rate").(wire.Nak)
		if !ok || r.Code != wire.CodeRange {
			t.Errorf("%+v: reply %+v, want ER code=2", c, r)
		}
	}
	b.send(wire.CmdRate{SlowHz: 25, FastHz: 250})
	if _, ok := b.expectReply("rate").(wire.Ack); !ok {
		t.Fatal(">rate slow_hz=25 fast_hz=250 refused")
	}
	id, ok := b.next().(wire.Identity)
	if !ok || id.SlowHz != 25 || id.FastHz != 250 || id.Boot {
		t.Fatalf("after >rate: %+v, want ID slow_hz=25 fast_hz=250 boot=0", id)
	}
	as := b.averages(1, 25)
	for _, a := range as {
		if a.N != 10 {
			t.Fatalf("A n = %d, want 250/25 = 10", a.N)
		}
	}
	rate := float64(len(as)-1) / (float64(as[len(as)-1].TimeUS-as[0].TimeUS) / 1e6)
	if math.Abs(rate-25)/25 > 0.001 {
		t.Errorf("A rate %.6f Hz after >rate, want 25 Hz within 0.1 %%", rate)
	}
	b.send(wire.CmdStatus{})
	b.expectReply("status")
	st, ok := b.next().(wire.Status)
	if !ok || st.Overruns != 0 || st.Dropped != 0 || !st.Running {
		t.Errorf("ST after the test: %+v, want ovr=0 drop=0 run=1", st)
	}
}

func TestReconnect(t *testing.T) {
	b := startBoard(t, flat(6))
	b.bootFrames()
	b.averages(0, 5)
	b.close()
	time.Sleep(150 * time.Millisecond) // the board runs on; its output goes nowhere
	b.open()
	// The first bytes after reopening may be the tail of a frame cut by the disconnect
	// (the decoder skips them). From the first A on, nothing may be missing.
	var first wire.Average
	b.until("an A after reconnecting", func(f wire.Frame) bool {
		a, ok := f.(wire.Average)
		first = a
		return ok
	})
	if first.TimeUS < 800000 {
		t.Logf("first A after reconnecting at %.3f s device time", float64(first.TimeUS)/1e6)
	}
	prev := first
	for _, a := range b.averages(0, 30) {
		if a.Seq != prev.Seq+1 || a.TimeUS-prev.TimeUS != 100000 {
			t.Fatalf("after reconnecting: A seq %d t %d follows seq %d t %d", a.Seq, a.TimeUS, prev.Seq, prev.TimeUS)
		}
		prev = a
	}
}

func TestFourChannels(t *testing.T) {
	// Four inputs at different steady levels, each through the same divider.
	b := startBoard(t, fmt.Sprintf("0 1.5 4.25 9.75 13.5\n%d 1.5 4.25 9.75 13.5\n", holdS))
	b.bootFrames()
	// 500 Hz is above max_hz for four channels: the rate must come down first.
	b.send(wire.CmdChan{N: 4})
	if r, ok := b.expectReply("chan").(wire.Nak); !ok || r.Code != wire.CodeRange {
		t.Fatalf(">chan n=4 at 500 Hz: %+v, want ER code=2", r)
	}
	b.send(wire.CmdRate{SlowHz: 10, FastHz: 100})
	b.expectReply("rate")
	b.send(wire.CmdChan{N: 4})
	if _, ok := b.expectReply("chan").(wire.Ack); !ok {
		t.Fatal(">chan n=4 at 100 Hz refused")
	}
	id, ok := b.next().(wire.Identity)
	if !ok || id.NCh != 4 {
		t.Fatalf("after >chan: %+v, want nch=4", id)
	}
	// 16 conversions per channel plus one discarded after each mux change, 112 us
	// each: 1e6 / (68*112 + 64) = 130 Hz. The 272-byte ring holds 22 four-channel
	// samples (4 + 2*4 bytes each), so pre comes down to 20.
	if id.MaxHz != 130 || id.Pre != 20 {
		t.Errorf("four channels: max_hz %d pre %d, want 130 and 20", id.MaxHz, id.Pre)
	}
	chans := make([]wire.Channel, 4)
	for k := range chans {
		c, ok := b.next().(wire.Channel)
		if !ok || c.Ch != uint32(k) {
			t.Fatalf("CH %d missing after ID: %+v", k, c)
		}
		chans[k] = c
	}
	want := []float64{1.5, 4.25, 9.75, 13.5}
	for _, a := range b.averages(1, 5) {
		if a.NCh != 4 || a.N != 10 {
			t.Fatalf("A: %d channels of %d samples, want 4 of 10", a.NCh, a.N)
		}
		for k, w := range want {
			v := chans[k].Volts(float64(a.Mean[k]), 12, 5000000)
			if d := math.Abs(v - w); d > lsb(5) {
				t.Errorf("channel %d: decoded %.4f V for %.2f V, off by %.2f LSB", k, v, w, d/lsb(5))
			}
		}
	}
}

func TestCommandErrors(t *testing.T) {
	b := startBoard(t, flat(5))
	b.bootFrames()
	// A person typing in a terminal: no CRC, accepted.
	if _, err := b.port.Write([]byte(">status\n")); err != nil {
		t.Fatal(err)
	}
	if _, ok := b.expectReply("status").(wire.Ack); !ok {
		t.Error(">status without CRC refused")
	}
	cases := []struct {
		line string
		tag  string
		code wire.ErrorCode
	}{
		{">status *0000\n", "status", wire.CodeCRC},
		{">fly\n", "fly", wire.CodeUnknown},
		{">rate fast_hz=abc\n", "rate", wire.CodeSyntax},
		{">burst post=0\n", "burst", wire.CodeRange},
		{">ref src=moon\n", "ref", wire.CodeRange},
		{">cal div=0.5\n", "cal", wire.CodeSyntax}, // ch is required
	}
	for _, c := range cases {
		if _, err := b.port.Write([]byte(c.line)); err != nil {
			t.Fatal(err)
		}
		r, ok := b.expectReply(c.tag).(wire.Nak)
		if !ok || r.Code != c.code {
			t.Errorf("%q: reply %+v, want ER code=%d", strings.TrimSpace(c.line), r, c.code)
		}
	}
	// Calibration goes into the CH frames and survives >save.
	b.send(wire.CmdCal{Ch: 0, Div: 250000, Gain: 1001200, OffUV: -3000})
	b.expectReply("cal")
	b.next() // ID
	ch, ok := b.next().(wire.Channel)
	if !ok || ch.Div != 250000 || ch.Gain != 1001200 || ch.OffUV != -3000 {
		t.Errorf("CH after >cal: %+v", ch)
	}
	b.send(wire.CmdSave{})
	if _, ok := b.expectReply("save").(wire.Ack); !ok {
		t.Error(">save refused")
	}
}

func TestBadWaveform(t *testing.T) {
	if skipMsg != "" {
		t.Skip("emulated board unavailable: " + skipMsg)
	}
	if buildErr != nil {
		t.Fatalf("building the emulated board: %v", buildErr)
	}
	path := filepath.Join(t.TempDir(), "wave.txt")
	// Line 3 has a time but no volts.
	if err := os.WriteFile(path, []byte("time_s vcap_v\n0 1\n0.01 x\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	emu, err := emulator.Start(context.Background(), bins, &emulator.Config{Waveform: path, NoWait: true})
	if err != nil {
		t.Fatal(err)
	}
	defer emu.Close()
	<-emu.Done() // it stops at the bad line; go test's -timeout catches a harness that does not
	if want := "wave.txt:3: expected volts after the time"; !strings.Contains(emu.Stderr(), want) {
		t.Errorf("harness stderr %q does not say %q", emu.Stderr(), want)
	}
}

func TestStopDuringBurst(t *testing.T) {
	// Steady for 1 s, then a 125 Hz triangle of 1 V: every fast sample moves by more
	// than thr, so the burst would never end by itself.
	var w strings.Builder
	w.WriteString("0 5\n1 5\n")
	for i := 0; i < 2000; i++ {
		fmt.Fprintf(&w, "%g %g\n", 1+0.004*float64(i+1), 5+float64((i+1)%2))
	}
	// While stopped the board sends nothing, so nothing paces the harness: device time
	// runs as fast as the host machine allows. A day of it keeps the board alive.
	w.WriteString("86400 5\n")
	b := startBoard(t, w.String())
	b.bootFrames()
	b.until("B", func(f wire.Frame) bool { _, ok := f.(wire.BurstBegin); return ok })
	// last is the newest sample seen, before or after >stop: when the board handles
	// the command right after the 100th sample, no sample comes between it and OK.
	var last wire.Sample
	n := 0
	b.until("100 burst samples", func(f wire.Frame) bool {
		if s, ok := f.(wire.Sample); ok {
			last = s
			n++
		}
		return n == 100
	})
	b.send(wire.CmdStop{})
	// Burst frames already made may still arrive; then OK, then E, and nothing more.
	b.until("the OK to >stop", func(f wire.Frame) bool {
		switch f := f.(type) {
		case wire.Sample:
			last = f
		case wire.Ack:
			return f.Cmd == "stop"
		case wire.BurstEnd:
			t.Fatal("E before the OK to >stop")
		}
		return false
	})
	end, ok := b.next().(wire.BurstEnd)
	if !ok || end.Seq != last.Seq+1 || end.TimeUS != last.TimeUS {
		t.Fatalf("after OK: %+v, want E seq %d t %d", end, last.Seq+1, last.TimeUS)
	}
	b.send(wire.CmdStatus{})
	b.until("the OK to >status", func(f wire.Frame) bool {
		switch f := f.(type) {
		case wire.Sample, wire.Average, wire.BurstBegin:
			t.Fatalf("%T while stopped", f)
		case wire.Ack:
			return f.Cmd == "status"
		}
		return false
	})
	if st, ok := b.next().(wire.Status); !ok || st.Running {
		t.Errorf("ST after >stop: %+v, want run=0", st)
	}
	b.send(wire.CmdStart{})
	b.expectReply("start")
	// Sampling resumes where seq left off; the input still swings, so a new burst
	// (B) may come before any A.
	b.until("A or B after >start", func(f wire.Frame) bool {
		var seq uint32
		switch f := f.(type) {
		case wire.Average:
			seq = f.Seq
		case wire.BurstBegin:
			seq = f.Seq
		default:
			return false
		}
		if seq != end.Seq {
			t.Errorf("first %s after >start: seq %d, want %d", f.Tag(), seq, end.Seq)
		}
		return true
	})
}

// stop ends the emulated board now (the harness writes its EEPROM image).
func (b *board) stop() {
	b.t.Helper()
	b.close()
	if err := b.emu.Close(); err != nil {
		b.t.Fatal(err)
	}
}

func TestEEPROMPersists(t *testing.T) {
	ee := filepath.Join(t.TempDir(), "eeprom.bin")
	b := startBoardEE(t, flat(5), ee)
	b.bootFrames()
	b.send(wire.CmdRate{SlowHz: 5, FastHz: 250})
	b.expectReply("rate")
	b.send(wire.CmdCal{Ch: 0, Div: 250000, Gain: 1001200, OffUV: -3000})
	b.expectReply("cal")
	b.send(wire.CmdSave{})
	if _, ok := b.expectReply("save").(wire.Ack); !ok {
		t.Fatal(">save refused")
	}
	b.stop()

	// Power it up again with the same EEPROM: the saved settings are in force.
	b = startBoardEE(t, flat(5), ee)
	id, ch, _ := b.bootFrames()
	if id.SlowHz != 5 || id.FastHz != 250 || ch.Div != 250000 || ch.Gain != 1001200 || ch.OffUV != -3000 {
		t.Errorf("after a restart: ID %+v CH %+v, want the saved rate and calibration", id, ch)
	}
	b.stop()

	// A damaged copy fails its CRC: the defaults apply.
	img, err := os.ReadFile(ee)
	if err != nil {
		t.Fatal(err)
	}
	img[10] ^= 0x01 // inside the stored settings
	if err := os.WriteFile(ee, img, 0o644); err != nil {
		t.Fatal(err)
	}
	b = startBoardEE(t, flat(5), ee)
	id, ch, _ = b.bootFrames()
	if id.SlowHz != 10 || id.FastHz != 500 || ch.Div != 333333 {
		t.Errorf("damaged EEPROM: ID %+v CH %+v, want the defaults", id, ch)
	}
}

func TestMaxRates(t *testing.T) {
	// At max_hz for each channel count the board keeps up: no overrun, no drop, no
	// seq gap, even with an A frame per fast sample (slow_hz = fast_hz).
	b := startBoard(t, fmt.Sprintf("0 2 4 6 8\n%d 2 4 6 8\n", holdS))
	b.bootFrames()
	for n := uint32(1); n <= 4; n++ {
		b.send(wire.CmdRate{SlowHz: 1, FastHz: 1})
		b.expectReply("rate")
		b.send(wire.CmdChan{N: n})
		b.expectReply("chan")
		id, ok := b.next().(wire.Identity)
		if !ok {
			t.Fatal("no ID after >chan")
		}
		b.send(wire.CmdRate{SlowHz: id.MaxHz, FastHz: id.MaxHz})
		if _, ok := b.expectReply("rate").(wire.Ack); !ok {
			t.Fatalf("%d channels: >rate at max_hz %d refused", n, id.MaxHz)
		}
		as := b.averages(2, 200)
		for i := 1; i < len(as); i++ {
			if as[i].Seq != as[i-1].Seq+1 {
				t.Fatalf("%d channels at %d Hz: seq %d after %d", n, id.MaxHz, as[i].Seq, as[i-1].Seq)
			}
		}
		rate := float64(len(as)-1) / (float64(as[len(as)-1].TimeUS-as[0].TimeUS) / 1e6)
		if math.Abs(rate-float64(id.MaxHz))/float64(id.MaxHz) > 0.001 {
			t.Errorf("%d channels: %.3f Hz, want %d Hz within 0.1 %%", n, rate, id.MaxHz)
		}
		b.send(wire.CmdStatus{})
		b.expectReply("status")
		st, ok := b.next().(wire.Status)
		if !ok || st.Overruns != 0 || st.Dropped != 0 {
			t.Errorf("%d channels at %d Hz: ST %+v, want ovr=0 drop=0", n, id.MaxHz, st)
		}
	}
}
