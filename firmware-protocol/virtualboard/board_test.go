//go:build unix

package virtualboard

import (
	"bytes"
	"context"
	"errors"
	"path/filepath"
	"reflect"
	"sync"
	"testing"
	"time"

	"go.bug.st/serial"

	"capcycle/firmware-protocol/wire"
)

var errReadTimeout = errors.New("test: serial read timed out")

// host is the test's side of the link: the real serial stack on the pty path, and
// the package's own Decoder.
type host struct {
	t    *testing.T
	port serial.Port
	dec  *wire.Decoder
}

// timeoutReader turns go.bug.st/serial's (0, nil) on a read timeout into an error.
type timeoutReader struct{ p serial.Port }

func (r timeoutReader) Read(b []byte) (int, error) {
	n, err := r.p.Read(b)
	if n == 0 && err == nil {
		return 0, errReadTimeout
	}
	return n, err
}

func openHost(t *testing.T, path string) *host {
	t.Helper()
	p, err := serial.Open(path, &serial.Mode{BaudRate: 1000000})
	if err != nil {
		t.Fatalf("serial.Open(%s): %v", path, err)
	}
	if err := p.SetReadTimeout(3 * time.Second); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { p.Close() })
	return &host{t: t, port: p, dec: wire.NewDecoder(timeoutReader{p})}
}

// next returns the next good frame, failing the test on a read error.
func (h *host) next() wire.Frame {
	h.t.Helper()
	for {
		f, err := h.dec.Next()
		var fe *wire.FrameError
		if errors.As(err, &fe) {
			continue
		}
		if err != nil {
			h.t.Fatalf("reading frames: %v", err)
		}
		return f
	}
}

// until returns the frames up to and including the first one for which stop is true.
func (h *host) until(stop func(wire.Frame) bool) []wire.Frame {
	h.t.Helper()
	var fs []wire.Frame
	for {
		f := h.next()
		fs = append(fs, f)
		if stop(f) {
			return fs
		}
	}
}

func (h *host) send(f wire.Frame) {
	h.t.Helper()
	if _, err := h.port.Write(wire.Append(nil, f)); err != nil {
		h.t.Fatal(err)
	}
}

func isTag(tag string) func(wire.Frame) bool {
	return func(f wire.Frame) bool { return f.Tag() == tag }
}

// constant is a Source holding every channel at v volts for dur seconds.
func constant(v, dur float64) Source {
	return SourceFunc(func(t float64, out []float64) bool {
		for k := range out {
			out[k] = v
		}
		return t <= dur
	})
}

func startBoard(t *testing.T, cfg *Config) *Board {
	t.Helper()
	b, err := Open(cfg)
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error, 1)
	go func() { done <- b.Run(ctx) }()
	t.Cleanup(func() {
		cancel()
		<-done
		b.Close()
	})
	return b
}

func TestBootAndSlowSamples(t *testing.T) {
	// 1.5 V through a 1:2 divider on a 5 V reference: 0.75/5*1024 = 153.6, so every
	// conversion reads 153 and each 12-bit sample 153*16>>2 = 612.
	b := startBoard(t, &Config{Source: constant(1.5, 100), Div: []float64{0.5}})
	h := openHost(t, b.Path())
	id, ok := h.next().(wire.Identity)
	if !ok || !id.Boot || id.Proto != 1 || id.EBits != 12 || id.Bits != 10 || id.RefUV != 5000000 ||
		id.NCh != 1 || id.SlowHz != 10 || id.FastHz != 500 {
		t.Fatalf("first frame %#v, want the boot ID", id)
	}
	ch, ok := h.next().(wire.Channel)
	if !ok || ch.Div != 500000 || ch.Gain != 1000000 {
		t.Fatalf("then %#v, want CH div=0.5", ch)
	}
	st, ok := h.next().(wire.Status)
	if !ok || st.Reset != wire.ResetPowerOn || !st.Running {
		t.Fatalf("then %#v, want ST reset=por run=1", st)
	}
	var prev wire.Average
	for i := range 5 {
		a, ok := h.next().(wire.Average)
		if !ok {
			t.Fatalf("frame %d after boot is not A", i)
		}
		if a.Mean[0] != 612 || a.Min[0] != 612 || a.Max[0] != 612 || a.N != 50 || a.Seq != uint32(i) {
			t.Errorf("A %+v, want seq %d mean 612 n 50", a, i)
		}
		if i > 0 && a.TimeUS-prev.TimeUS != 100000 {
			t.Errorf("A spacing %d µs, want 100000", a.TimeUS-prev.TimeUS)
		}
		prev = a
	}
	if v := ch.Volts(float64(prev.Mean[0]), id.EBits, id.RefUV); v < 1.5-4*5.0/4096/0.5 || v > 1.5 {
		t.Errorf("volts %.4f, want 1.5 less at most 4 counts of truncation", v)
	}
}

func TestBurstOverPTY(t *testing.T) {
	// 2 V for 1 s, a fire that drops to 1 V within 4 ms, then 1 V.
	w, err := NewWaveform([]float64{0, 1, 1.004, 3}, [][]float64{{2}, {2}, {1}, {1}})
	if err != nil {
		t.Fatal(err)
	}
	b := startBoard(t, &Config{Source: w})
	h := openHost(t, b.Path())
	fs := h.until(isTag("E"))
	var burst wire.BurstBegin
	var nS, nA int
	for _, f := range fs {
		switch f := f.(type) {
		case wire.BurstBegin:
			burst = f
		case wire.Sample:
			nS++
		case wire.Average:
			if burst.Seq == 0 {
				nA++
			}
		}
	}
	if burst.Pre != 32 {
		t.Errorf("B pre=%d, want the full ring of 32", burst.Pre)
	}
	// The fall starts at 1.000 s: the trigger is the first sample more than 8 counts
	// (about 10 mV) below the last mean, 2 ms after the fall starts at 500 Hz.
	if tr := float64(burst.TimeUS) / 1e6; tr < 1.0 || tr > 1.004 {
		t.Errorf("trigger at %.4f s, want within the fall (1.000..1.004 s)", tr)
	}
	if nA != 10 {
		t.Errorf("%d A frames before the burst, want 10 (1 s at 10 Hz)", nA)
	}
	// Ring (32) + the fall (2 samples) + the quiet window (32) at least.
	if nS < 32+2+32-1 {
		t.Errorf("%d S frames in the burst", nS)
	}
	if st := h.dec.Stats(); st.Lost != 0 || st.BadCRC != 0 || st.Malformed != 0 {
		t.Errorf("host stats %+v", st)
	}
	if b.Stats().Bursts != 1 {
		t.Errorf("board counted %d bursts", b.Stats().Bursts)
	}
}

func TestCommandsOverPTY(t *testing.T) {
	b := startBoard(t, &Config{Source: constant(1, 1000)})
	h := openHost(t, b.Path())
	h.until(isTag("ST")) // the boot frames
	h.send(wire.CmdRate{SlowHz: 5, FastHz: 100})
	fs := h.until(isTag("ID"))
	ack, _ := fs[len(fs)-2].(wire.Ack)
	if ack.Cmd != "rate" {
		t.Fatalf("frames before the new ID: %v", fs)
	}
	if id := fs[len(fs)-1].(wire.Identity); id.SlowHz != 5 || id.FastHz != 100 || id.Boot {
		t.Errorf("ID after >rate: %+v", id)
	}
	h.next() // CH
	fs = h.until(isTag("A"))
	a1 := fs[len(fs)-1].(wire.Average)
	fs = h.until(isTag("A"))
	a2 := fs[len(fs)-1].(wire.Average)
	if a1.N != 20 || a2.TimeUS-a1.TimeUS != 200000 {
		t.Errorf("A frames after >rate: %+v %+v", a1, a2)
	}
	// A command typed by hand (no CRC), one with a bad CRC, an unknown one.
	for _, c := range []struct {
		line string
		want wire.Frame
	}{
		{">status\n", wire.Ack{Cmd: "status"}},
		{">status *0000\n", wire.Nak{Cmd: "status", Code: wire.CodeCRC, Msg: "crc"}},
		{string(wire.Append(nil, wire.Unknown{Start: '>', Name: "blink"})), wire.Nak{Cmd: "blink", Code: wire.CodeUnknown, Msg: "unknown"}},
		{string(wire.Append(nil, wire.CmdChan{N: 9})), wire.Nak{Cmd: "chan", Code: wire.CodeRange, Msg: "range"}},
	} {
		if _, err := h.port.Write([]byte(c.line)); err != nil {
			t.Fatal(err)
		}
		fs := h.until(func(f wire.Frame) bool { return f.Tag() == "OK" || f.Tag() == "ER" })
		if got := fs[len(fs)-1]; got != c.want {
			t.Errorf("%q: reply %#v, want %#v", c.line, got, c.want)
		}
	}
}

func TestUnplugAndPlugWithLink(t *testing.T) {
	link := filepath.Join(t.TempDir(), "ttyWren")
	b := startBoard(t, &Config{Source: constant(1, 1e6), Link: link})
	if b.Path() != link {
		t.Fatalf("Path %q, want the link", b.Path())
	}
	h := openHost(t, link)
	h.until(isTag("A"))
	b.Unplug()
	// The host's read fails: the frames still buffered come first, then an error.
	var err error
	for err == nil {
		_, err = h.dec.Next()
		var fe *wire.FrameError
		if errors.As(err, &fe) {
			err = nil
		}
	}
	if errors.Is(err, errReadTimeout) {
		t.Fatalf("after Unplug the host read %v, want a port error", err)
	}
	if _, err := serial.Open(link, &serial.Mode{BaudRate: 1000000}); err == nil {
		t.Fatal("the link still opens while unplugged")
	}
	if err := b.Plug(); err != nil {
		t.Fatal(err)
	}
	h2 := openHost(t, link)
	id, ok := h2.next().(wire.Identity)
	if !ok || !id.Boot {
		t.Fatalf("after Plug: %#v, want a boot ID", id)
	}
	fs := h2.until(isTag("A"))
	if st := fs[len(fs)-2].(wire.Status); st.Reset != wire.ResetPowerOn {
		t.Errorf("ST after replug: %+v", st)
	}
	if a := fs[len(fs)-1].(wire.Average); a.Seq != 0 {
		t.Errorf("first A after replug has seq %d, want 0", a.Seq)
	}
}

func TestResetAndFaults(t *testing.T) {
	b := startBoard(t, &Config{Source: constant(1, 1e6)})
	h := openHost(t, b.Path())
	h.until(isTag("A"))
	b.InjectGarbage([]byte("\x00\xffnoise\r\n"))
	b.Corrupt(1)
	// Read on until the decoder has seen the corrupted frame.
	for h.dec.Stats().BadCRC+h.dec.Stats().Malformed == 0 {
		if _, err := h.dec.Next(); err != nil && !errors.As(err, new(*wire.FrameError)) {
			t.Fatal(err)
		}
	}
	if b.Stats().Corrupted != 1 {
		t.Errorf("board corrupted %d frames", b.Stats().Corrupted)
	}
	// The garbage goes out between two frames within a batch of the board's loop.
	for i := 0; h.dec.Stats().Skipped < 9 && i < 2*batch; i++ {
		h.next()
	}
	if h.dec.Stats().Skipped != 9 {
		t.Errorf("host skipped %d bytes of garbage, want 9", h.dec.Stats().Skipped)
	}
	b.Reset(wire.ResetWatchdog)
	h.until(func(f wire.Frame) bool { id, ok := f.(wire.Identity); return ok && id.Boot })
	fs := h.until(isTag("ST"))
	st := fs[len(fs)-1].(wire.Status)
	if st.Reset != wire.ResetWatchdog || st.UptimeS != 0 {
		t.Errorf("ST after reset: %+v", st)
	}
	if a := h.next().(wire.Average); a.Seq != 0 || a.TimeUS != 0 {
		t.Errorf("first A after reset: %+v, want seq 0 at t 0", a)
	}
}

func TestRealTimePace(t *testing.T) {
	// At Speed 20, 4 world seconds take 0.2 s of the board's wall clock: no frame
	// reaches the host before its time, and the run ends when the clock has moved
	// 0.2 s (within a round's sleep). The clock moves only when the board sleeps on
	// it, so the test measures the pace, not the machine.
	clk := newStallClock(0, 0)
	t0 := clk.Now()
	b, h, done := runBoard(t, &Config{Source: constant(1, 4), Speed: 20, Clock: clk})
	n := 0
	readAll(t, b, h, done, func(f wire.Frame) {
		a, ok := f.(wire.Average)
		if !ok {
			return
		}
		n++
		// The host reads after the board made the frame, so the clock must already
		// be past the frame's last fast sample.
		last := float64(a.TimeUS)/1e6 + float64(a.N-1)/500
		if el := clk.Now().Sub(t0).Seconds(); el < last/20 {
			t.Errorf("A seq %d (to %.3f s of world time) read at %.3f s of wall time: ahead of its pace", a.Seq, last, el)
		}
	})
	if el := clk.Now().Sub(t0); n != 40 || el < 200*time.Millisecond || el > 200*time.Millisecond+2*tick {
		t.Errorf("%d A frames, the clock moved %v; want 40 in 0.2 s", n, el)
	}
}

func TestReferenceAndDividerErrors(t *testing.T) {
	// The true reference is 2 % high: a true 2.0 V reads 2.0/(5*1.02)*1024 = 401.57,
	// truncated 401, 4*401 = 1604 counts, which a host using the nominal 5 V turns into
	// 1.958 V: a gain error that >cal corrects.
	b := startBoard(t, &Config{Source: constant(2, 100), RefError: 0.02})
	h := openHost(t, b.Path())
	fs := h.until(isTag("A"))
	if a := fs[len(fs)-1].(wire.Average); a.Mean[0] != 1604 {
		t.Errorf("mean %d, want 1604", a.Mean[0])
	}
	// A 5 % divider tolerance draws each true ratio within ±5 % of nominal, the
	// same for the same seed.
	for seed := uint64(0); seed < 20; seed++ {
		b1, err := Open(&Config{Source: constant(1, 1), Div: []float64{0.5}, DivTolerance: 0.05, Seed: seed})
		if err != nil {
			t.Fatal(err)
		}
		b2, _ := Open(&Config{Source: constant(1, 1), Div: []float64{0.5}, DivTolerance: 0.05, Seed: seed})
		if r := b1.trueDiv[0]; r < 0.475 || r > 0.525 || r != b2.trueDiv[0] {
			t.Errorf("seed %d: true ratio %v (and %v)", seed, r, b2.trueDiv[0])
		}
		b1.Close()
		b2.Close()
	}
}

func TestFramesLostWithoutHost(t *testing.T) {
	// At Speed > 0 frames made while no host has the port open are lost, as on a real
	// link; the board counts them, and the Tap sees only what went out.
	var tap syncBuffer
	// The board's clock moves only as it sleeps, so the board makes frames with no
	// host however busy the machine; the test waits for 50 of them to be lost.
	b := startBoard(t, &Config{Source: constant(1, 1e6), Speed: 50, Tap: &tap, Clock: newStallClock(0, 0)})
	for b.Stats().Discarded < 50 {
		time.Sleep(time.Millisecond)
	}
	h := openHost(t, b.Path())
	fs := h.until(isTag("A"))
	if st := b.Stats(); st.Discarded < 50 {
		t.Errorf("board stats %+v: want at least 50 frames discarded", st)
	}
	if a := fs[len(fs)-1].(wire.Average); a.Seq < 50 {
		t.Errorf("first A the host saw has seq %d, want the ones before lost", a.Seq)
	}
	// The tap gets the bytes just after the pseudo-terminal took them.
	for tap.Len() == 0 {
		time.Sleep(time.Millisecond)
	}
	d := wire.NewDecoder(&tap)
	if f, err := d.Next(); err != nil || !reflect.DeepEqual(f, fs[0]) {
		t.Errorf("the tap starts with %v %v, want the host's first frame %v", f, err, fs[0])
	}
}

// syncBuffer is a bytes.Buffer safe for the board's writer and the test.
type syncBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *syncBuffer) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *syncBuffer) Len() int {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Len()
}

func (s *syncBuffer) Read(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Read(p)
}

func TestHostReconnectAtSpeed0(t *testing.T) {
	// The host closes its port mid-stream and opens it again. At Speed 0 the board
	// waits for it: every sample frame sent after the reopen arrives, in order.
	b := startBoard(t, &Config{Source: constant(1, 1e6)})
	h := openHost(t, b.Path())
	fs := h.until(isTag("A"))
	last := fs[len(fs)-1].(wire.Average).Seq
	h.port.Close()
	time.Sleep(100 * time.Millisecond)
	h2 := openHost(t, b.Path())
	first := h2.until(isTag("A"))
	seq := first[len(first)-1].(wire.Average).Seq
	if seq <= last {
		t.Fatalf("after the reopen seq %d, before %d", seq, last)
	}
	for range 500 {
		h2.next()
	}
	st := h2.dec.Stats()
	if st.Lost != 0 || st.BadCRC != 0 {
		t.Errorf("after the reopen: %+v", st)
	}
	t.Logf("seq %d before closing, %d first after reopening (%d lost in between); host stats %+v",
		last, seq, seq-last-1, st)
}

func TestDefaultFastRateFitsChannels(t *testing.T) {
	// 4 channels at 12 bits: 9615 conversions/s / 4 / 16 = 150 Hz at most.
	b, err := Open(&Config{Source: constant(1, 1), Channels: 4})
	if err != nil {
		t.Fatal(err)
	}
	defer b.Close()
	if b.cfg.FastHz != 150 {
		t.Errorf("FastHz %d, want 150", b.cfg.FastHz)
	}
	if _, err := Open(&Config{Source: constant(1, 1), Channels: 4, FastHz: 500}); err == nil {
		t.Error("FastHz 500 with 4 channels accepted")
	}
}

func TestBitErrorsOverPTY(t *testing.T) {
	// One flipped bit per thousand bytes: the host's decoder resynchronises, reports
	// the damaged frames, and counts the samples they carried as lost.
	w, err := NewWaveform([]float64{0, 0.5, 0.502, 1, 1.002, 60}, [][]float64{{2}, {2}, {1}, {1}, {2}, {2}})
	if err != nil {
		t.Fatal(err)
	}
	b := startBoard(t, &Config{Source: w, BitErrorRate: 1e-3, NoiseLSB: 0.7, Seed: 3})
	h := openHost(t, b.Path())
	bad := 0
	for bad < 5 {
		_, err := h.dec.Next()
		var fe *wire.FrameError
		switch {
		case errors.As(err, &fe):
			bad++
		case err != nil:
			t.Fatal(err)
		}
	}
	// A damaged sample frame is lost: reported bad, or, if its start character was
	// hit, skipped as garbage (at least one byte each). A flipped "\n" cuts its frame
	// at the next start character, and the next frame still decodes.
	st := h.dec.Stats()
	if st.BadCRC+st.Malformed != 5 || st.Good == 0 || st.Lost < 1 || st.Lost > st.BadCRC+st.Malformed+st.Skipped {
		t.Errorf("host stats %+v", st)
	}
	if b.Stats().Corrupted < 5 {
		t.Errorf("board corrupted %d frames, the host saw 5 bad ones", b.Stats().Corrupted)
	}
}

func TestCloseEndsRun(t *testing.T) {
	// At Speed 0 with no host, Run waits for one; Close must still end it.
	b, err := Open(&Config{Source: constant(1, 1e6)})
	if err != nil {
		t.Fatal(err)
	}
	done := make(chan error, 1)
	go func() { done <- b.Run(context.Background()) }()
	time.Sleep(50 * time.Millisecond)
	b.Close()
	b.Close()
	select {
	case err := <-done:
		if !errors.Is(err, ErrClosed) {
			t.Errorf("Run returned %v, want ErrClosed", err)
		}
	case <-time.After(2 * time.Second):
		t.Fatal("Run still running after Close")
	}
}
