package logger

import (
	"context"
	"errors"
	"math"
	"math/rand"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"capcycle/firmware-protocol/wire"
	"capcycle/logger/capture"
)

// TestBitFlipsAndGarbage: damaged frames are counted and dropped, never written as
// values; every written row is one the board sent.
func TestBitFlipsAndGarbage(t *testing.T) {
	pb := newPtyBoard(t)
	cfg := ptyConfig(pb)
	r := startRecording(t, cfg)
	r.waitFor("0 samples")
	frames := pb.slow(nil, 1000, func(i int) uint16 { return uint16(i) })
	lines := strings.SplitAfter(string(frames), "\n")
	rng := rand.New(rand.NewSource(1))
	var out []byte
	flipped := 0
	for i, l := range lines {
		b := []byte(l)
		if i%10 == 5 && len(b) > 4 {
			j := 1 + rng.Intn(len(b)-2)
			b[j] ^= 1 << uint(rng.Intn(7)) // one bit flip inside the frame
			flipped++
		}
		out = append(out, b...)
		if i%97 == 0 {
			out = append(out, "\x00\xff garbage !!! ?? \r\n"...)
		}
	}
	pb.write(out)
	r.waitFor(" samples")
	time.Sleep(300 * time.Millisecond)
	sum := r.stop()
	ts, vs, _ := readCapture(t, cfg.Out)
	if int64(len(ts)) != sum.Stats.Samples {
		t.Fatalf("%d rows, stats say %d", len(ts), sum.Stats.Samples)
	}
	// Every row's value is count i at time i*0.1 s from the first: check the pairing.
	for k := range ts {
		i := math.Round((ts[k] - ts[0]) / 0.1)
		if want := boardVolts(uint16(i)); math.Abs(vs[k]-want) > 1e-5 {
			t.Fatalf("row %d at %v s: %v V, want %v (a damaged frame got through)", k, ts[k], vs[k], want)
		}
	}
	if sum.Stats.BadFrames < int64(flipped)/2 || sum.Stats.Samples < 1000-int64(flipped) {
		t.Errorf("stats %+v after %d flips", sum.Stats, flipped)
	}
	// A flip in a frame's seq or time field that the CRC catches is a lost sample too.
	if sum.Stats.Samples+sum.Stats.Lost != 1000 {
		t.Errorf("samples %d + lost %d != 1000", sum.Stats.Samples, sum.Stats.Lost)
	}
}

// TestSequenceGaps: skipped sequence numbers become lost samples and gap lines.
func TestSequenceGaps(t *testing.T) {
	pb := newPtyBoard(t)
	cfg := ptyConfig(pb)
	r := startRecording(t, cfg)
	r.waitFor("0 samples")
	out := pb.slow(nil, 10, func(int) uint16 { return 100 })
	pb.skip(5) // five samples the board could not send
	out = pb.slow(out, 10, func(int) uint16 { return 200 })
	pb.write(out)
	r.waitFor("20 samples")
	sum := r.stop()
	if sum.Stats.Lost != 5 || sum.Stats.Gaps != 1 {
		t.Errorf("stats %+v, want 5 lost in 1 gap", sum.Stats)
	}
	b, _ := os.ReadFile(cfg.Out)
	if !strings.Contains(string(b), "reason=lost-samples lost=5\n") {
		t.Errorf("no gap line:\n%s", b)
	}
	_, _, rd := readCapture(t, cfg.Out)
	if rd.Lost() != 5 {
		t.Errorf("reader sees %d lost", rd.Lost())
	}
}

// TestClockWrap: the device clock wraps past 2^32 us mid-run; the time axis goes on.
func TestClockWrap(t *testing.T) {
	pb := newPtyBoard(t)
	pb.tUS = math.MaxUint32 - 450000 // wraps after 5 frames
	cfg := ptyConfig(pb)
	r := startRecording(t, cfg)
	r.waitFor("0 samples")
	pb.write(pb.slow(nil, 20, func(int) uint16 { return 100 }))
	r.waitFor("20 samples")
	r.stop()
	ts, _, _ := readCapture(t, cfg.Out)
	for i := 1; i < len(ts); i++ {
		if d := ts[i] - ts[i-1]; math.Abs(d-0.1) > 1.5e-6 {
			t.Fatalf("row %d: step %v s across the wrap, want 0.1", i, d)
		}
	}
}

// TestUnplugAndReturn: the device side closes; the file keeps what it has, notes the
// gap, and the recording resumes in the same file when the board comes back. (The test
// board sends 5 s of device time at once, ahead of the host clock; time_s never goes
// back.)
func TestUnplugAndReturn(t *testing.T) {
	pb := newPtyBoard(t)
	cfg := ptyConfig(pb)
	r := startRecording(t, cfg)
	r.waitFor("0 samples")
	pb.write(pb.slow(nil, 50, func(int) uint16 { return 1000 }))
	r.waitFor("50 samples")
	pb.unplug()
	time.Sleep(300 * time.Millisecond)
	pb.plug() // the same board returns (no reset): seq and clock go on
	r.waitFor("1 reconnects")
	pb.skip(20) // made while unplugged, never sent
	pb.write(pb.slow(nil, 50, func(int) uint16 { return 2000 }))
	r.waitFor("100 samples")
	sum := r.stop()
	if sum.Reconnects != 1 || sum.Stats.Samples != 100 || sum.Stats.Lost != 20 {
		t.Errorf("summary %+v", sum)
	}
	ts, vs, rd := readCapture(t, cfg.Out)
	if len(ts) != 100 || math.Abs(vs[49]-boardVolts(1000)) > 1e-5 || math.Abs(vs[50]-boardVolts(2000)) > 1e-5 {
		t.Fatalf("%d rows; around the gap %v %v", len(ts), vs[49], vs[50])
	}
	gaps := rd.Gaps()
	if len(gaps) != 1 || gaps[0].Reason != capture.GapUnplugged || gaps[0].Lost != 20 ||
		gaps[0].StartS != ts[49] || math.Abs(gaps[0].EndS-ts[50]) > 1e-6 || ts[50] <= ts[49] {
		t.Errorf("gaps %+v around rows %v %v", gaps, ts[49], ts[50])
	}
}

// TestGapMeasuredByHostClock: the board's clock runs ahead of the host's (5 s of device
// time arrive at once), then the cable is out for 5 s of host time. The gap in the file is
// those 5 s, measured by the host clock; the board's timestamps only space the rows within
// each connected stretch.
func TestGapMeasuredByHostClock(t *testing.T) {
	pb := newPtyBoard(t)
	cfg := ptyConfig(pb)
	base := time.Date(2026, 12, 1, 12, 0, 0, 0, time.UTC)
	clk := &fakeClock{t: base}
	cfg.Now = clk.Now
	r := startRecording(t, cfg)
	r.waitFor("0 samples")
	pb.write(pb.slow(nil, 50, func(int) uint16 { return 1000 })) // 4.9 s of device time, at host time 0
	r.waitFor("50 samples")
	pb.unplug()
	r.waitFor("reopening the port") // the recorder saw the loss
	clk.Set(base.Add(5 * time.Second))
	pb.plug()
	r.waitFor("1 reconnects")
	pb.write(pb.slow(nil, 10, func(int) uint16 { return 2000 }))
	r.waitFor("60 samples")
	r.stop()
	ts, _, rd := readCapture(t, cfg.Out)
	if len(ts) != 60 {
		t.Fatalf("%d rows", len(ts))
	}
	if d := ts[1] - ts[0]; math.Abs(d-0.1) > 1.5e-6 {
		t.Errorf("inside a stretch the rows are %v s apart, want the board's 0.1 s", d)
	}
	if d := ts[50] - ts[49]; math.Abs(d-5) > 1.5e-6 {
		t.Errorf("the 5 s outage is %v s in the file (rows at %v and %v)", d, ts[49], ts[50])
	}
	if g := rd.Gaps(); len(g) != 1 || g[0].StartS != ts[49] || math.Abs(g[0].EndS-ts[50]) > 1e-6 {
		t.Errorf("gaps %+v", g)
	}
}

// TestResetOnReconnect: the board resets when the port is opened again (as most do on
// DTR): the file gets one reset line with its board line, not a second board line from
// the handshake.
func TestResetOnReconnect(t *testing.T) {
	pb := newPtyBoard(t)
	cfg := ptyConfig(pb)
	r := startRecording(t, cfg)
	r.waitFor("0 samples")
	pb.write(pb.slow(nil, 20, func(int) uint16 { return 1000 }))
	r.waitFor("20 samples")
	pb.unplug()
	pb.restart(0, 0)
	pb.mu.Lock()
	pb.bootNext = true
	pb.mu.Unlock()
	pb.plug()
	r.waitFor("1 reconnects")
	pb.write(pb.slow(nil, 20, func(int) uint16 { return 500 }))
	r.waitFor("40 samples")
	sum := r.stop()
	b, _ := os.ReadFile(cfg.Out)
	text := string(b)
	if strings.Count(text, "# board:") != 2 || strings.Count(text, "# reset:") != 1 || sum.Segments != 2 {
		t.Errorf("want the header's board line and one reset with its board line; segments %d:\n%s", sum.Segments, text)
	}
}

// TestBoardReset: a boot identity mid-run starts a new segment; time_s stays increasing.
func TestBoardReset(t *testing.T) {
	pb := newPtyBoard(t)
	pb.tUS = 3000000000
	cfg := ptyConfig(pb)
	r := startRecording(t, cfg)
	r.waitFor("0 samples")
	pb.write(pb.slow(nil, 30, func(int) uint16 { return 1000 }))
	r.waitFor("30 samples")
	pb.restart(0, 1200) // counter and clock from zero
	out := pb.idFrames(true)
	out = append(out, wire.Append(nil, wire.Status{UptimeS: 0, Reset: wire.ResetPin, Running: true})...)
	out = pb.slow(out, 30, func(int) uint16 { return 500 })
	pb.write(out)
	r.waitFor("60 samples")
	sum := r.stop()
	if sum.Segments != 2 || sum.Stats.Lost != 0 {
		t.Errorf("summary %+v", sum)
	}
	ts, _, rd := readCapture(t, cfg.Out)
	if len(ts) != 60 {
		t.Fatalf("%d rows", len(ts))
	}
	rs := rd.Resets()
	if len(rs) != 1 || rs[0].Segment != 2 || rs[0].Cause != "ext" || rs[0].AtS != ts[30] {
		t.Errorf("resets %+v, row 30 at %v", rs, ts[30])
	}
}

// TestSilentBoard: a board that sends nothing for a while (the serial library's read
// timeouts return (0, nil) many times over) does not end or spoil the recording.
func TestSilentBoard(t *testing.T) {
	pb := newPtyBoard(t)
	cfg := ptyConfig(pb)
	cfg.Mode = &Mode{ReadTimeout: 10 * time.Millisecond} // 100 timeouts a second
	r := startRecording(t, cfg)
	r.waitFor("0 samples")
	pb.write(pb.slow(nil, 5, func(int) uint16 { return 1 }))
	r.waitFor("5 samples")
	time.Sleep(1500 * time.Millisecond) // > 100 empty reads: bufio would have given up
	pb.write(pb.slow(nil, 5, func(int) uint16 { return 2 }))
	r.waitFor("10 samples")
	if sum := r.stop(); sum.Reconnects != 0 {
		t.Errorf("a silent board caused %d reconnects", sum.Reconnects)
	}
}

// TestRetryPortNoProgress: a bufio reader over the wrapped port never sees
// io.ErrNoProgress however many timeouts come first.
func TestRetryPortWaits(t *testing.T) {
	pb := newPtyBoard(t)
	p, err := Open(pb.link, &Mode{ReadTimeout: 5 * time.Millisecond})
	if err != nil {
		t.Fatal(err)
	}
	defer p.Close()
	go func() { time.Sleep(800 * time.Millisecond); pb.write([]byte("hello\n")) }()
	b := make([]byte, 16)
	n, err := p.Read(b) // 160 library timeouts pass inside this call
	if err != nil || string(b[:n]) != "hello\n" {
		t.Fatalf("read %q %v", b[:n], err)
	}
	pb.unplug()
	if _, err := p.Read(b); err == nil {
		t.Fatal("read after unplug: no error")
	} else if pe := (*PortError)(nil); !errors.As(err, &pe) || pe.Kind != PortGone {
		t.Fatalf("read after unplug: %v, want a PortGone PortError", err)
	}
}

// TestDiskFull: a capture on a full disk stops the recording with a clear error.
func TestDiskFull(t *testing.T) {
	pb := newPtyBoard(t)
	cfg := ptyConfig(pb)
	cfg.Out = "/dev/full"
	cfg.Force = true
	if _, err := os.Stat("/dev/full"); err != nil {
		t.Skip("no /dev/full")
	}
	_, err := Record(context.Background(), cfg)
	if !errors.Is(err, syscall.ENOSPC) {
		t.Fatalf("recording to /dev/full: %v, want ENOSPC", err)
	}
}

func TestTextInput(t *testing.T) {
	pb := newPtyBoard(t)
	pb.setQuiet(true)
	cfg := ptyConfig(pb)
	cfg.Input = InputText
	cfg.Text = TextInput{Bits: 10, VrefV: 5, Divider: 0.5, Columns: 2}
	cfg.Columns = []string{"vcell_v"}
	r := startRecording(t, cfg)
	time.Sleep(100 * time.Millisecond)
	pb.write([]byte("hello from other firmware\n512,100\n256 200\r\n1023\t300\nbad,1\n1 2 3\n"))
	r.waitFor("4 samples")
	sum := r.stop()
	if sum.Stats.BadFrames != 2 {
		t.Errorf("bad lines %d, want 2", sum.Stats.BadFrames)
	}
	b, _ := os.ReadFile(cfg.Out)
	text := string(b)
	for _, want := range []string{"time_s,vcap_v,vcell_v\n", ",5.00000,0.97656\n", ",2.50000,1.95312\n", ",9.99023,2.92969\n", ",0.00977,0.01953\n"} {
		if !strings.Contains(text, want) {
			t.Errorf("capture lacks %q:\n%s", want, text)
		}
	}
	if got := pbCmds(pb); got != "" {
		t.Errorf("text input sent commands %q", got)
	}
}

func TestAppendContinues(t *testing.T) {
	pb := newPtyBoard(t)
	out := filepath.Join(t.TempDir(), "day.csv")
	cfg := ptyConfig(pb)
	cfg.Out = out
	r := startRecording(t, cfg)
	r.waitFor("0 samples")
	pb.write(pb.slow(nil, 20, func(int) uint16 { return 7 }))
	r.waitFor("20 samples")
	r.stop()
	// A torn last line, as a kill -9 mid-write leaves.
	f, _ := os.OpenFile(out, os.O_WRONLY|os.O_APPEND, 0)
	f.WriteString("99.000000,0.00")
	f.Close()
	cfg2 := ptyConfig(pb)
	cfg2.Out, cfg2.Append = out, true
	r2 := startRecording(t, cfg2)
	r2.waitFor("0 samples")
	pb.write(pb.slow(nil, 20, func(int) uint16 { return 9 }))
	r2.waitFor("20 samples")
	r2.stop()
	ts, _, rd := readCapture(t, out)
	if len(ts) != 40 || rd.Torn() {
		t.Fatalf("%d rows after append (torn %v)", len(ts), rd.Torn())
	}
	b, _ := os.ReadFile(out)
	if !strings.Contains(string(b), "# append: at=") || !strings.Contains(string(b), "reason=stopped") {
		t.Errorf("no append note:\n%s", b)
	}
}

// TestSilenceReopens: a link that stays connected but sends nothing for longer than
// Silence is reopened (a hung USB bridge), and the gap says read-error. The host clock is
// the test's: the silence lasts exactly as long as the test says, however slowly a busy
// machine runs the test's writes.
func TestSilenceReopens(t *testing.T) {
	pb := newPtyBoard(t)
	cfg := ptyConfig(pb)
	cfg.Silence = 500 * time.Millisecond
	base := time.Date(2026, 12, 1, 12, 0, 0, 0, time.UTC)
	clk := &fakeClock{t: base}
	cfg.Now = clk.Now
	r := startRecording(t, cfg)
	r.waitFor("0 samples")
	pb.write(pb.slow(nil, 5, func(int) uint16 { return 1 }))
	r.waitFor("5 samples")
	if s := r.last(); strings.Contains(s, "reconnects") {
		t.Fatalf("reconnected before any silence: %q", s)
	}
	clk.Set(base.Add(cfg.Silence + time.Millisecond)) // silent for just over Silence
	r.waitFor("1 reconnects")
	pb.write(pb.slow(nil, 5, func(int) uint16 { return 2 }))
	r.waitFor("10 samples")
	r.stop()
	_, _, rd := readCapture(t, cfg.Out)
	if g := rd.Gaps(); len(g) != 1 || g[0].Reason != capture.GapReadError {
		t.Errorf("gaps %+v", g)
	}
}

// fakeClock is a host clock the test moves.
type fakeClock struct {
	mu sync.Mutex
	t  time.Time
}

func (c *fakeClock) Now() time.Time {
	c.mu.Lock()
	defer c.mu.Unlock()
	return c.t
}

func (c *fakeClock) Set(t time.Time) {
	c.mu.Lock()
	c.t = t
	c.mu.Unlock()
}

// TestDriftRecorded: a board whose clock runs 5 % fast (105 ms of device time per 100 ms
// of host time) for 6 s: too short a fit for a drift, so the capture gets no clock line
// and the summary says why. The host clock is the test's, set before each frame is sent.
func TestDriftRecorded(t *testing.T) {
	pb := newPtyBoard(t)
	cfg := ptyConfig(pb)
	base := time.Date(2026, 12, 1, 12, 0, 0, 0, time.UTC)
	clk := &fakeClock{t: base}
	cfg.Now = clk.Now
	r := startRecording(t, cfg)
	r.waitFor("0 samples")
	for i := 0; i < 60; i++ {
		clk.Set(base.Add(time.Duration(i+1) * 100 * time.Millisecond))
		pb.write(pb.slow(nil, 1, func(int) uint16 { return 100 }))
		pb.mu.Lock()
		pb.tUS += 5000 // 105 ms per frame instead of 100
		pb.mu.Unlock()
		time.Sleep(20 * time.Millisecond)
	}
	clk.Set(base.Add(7 * time.Second)) // lets the status line redraw
	r.waitFor("60 samples")
	sum := r.stop()
	if sum.Clock.Points != 0 || !strings.Contains(sum.ClockNote, "needs at least 60 s") {
		t.Errorf("clock %+v note %q: a 6 s fit gave a drift", sum.Clock, sum.ClockNote)
	}
	b, _ := os.ReadFile(cfg.Out)
	if strings.Contains(string(b), "# clock:") {
		t.Errorf("a clock line from a 6 s fit:\n%s", b)
	}
}

// TestDriftInTrailer: two minutes of a board 5 % fast, fed to a session's stream at known
// host times, end in a clock line of +50000 ppm in the trailer.
func TestDriftInTrailer(t *testing.T) {
	base := time.Date(2026, 12, 1, 12, 0, 0, 0, time.UTC)
	cfg := (&Config{Out: filepath.Join(t.TempDir(), "drift.csv")}).defaults()
	cfg.Now = func() time.Time { return base.Add(2 * time.Minute) }
	ss := &session{cfg: cfg, ctx: context.Background(), begun: base, start: base, status: newStatusLine(nil, false, time.Minute)}
	ss.s = newStream(nil, 1, nil)
	board := newTestBoard(nil)
	if err := ss.s.feed(board.idFrames(true), 0); err != nil {
		t.Fatal(err)
	}
	if err := ss.openFile(ss.header(IdentityString(ss.s.id), ss.channels(1))); err != nil {
		t.Fatal(err)
	}
	ss.s.w = ss.w
	for i := 0; i < 1200; i++ {
		board.mu.Lock()
		board.tUS = uint32(i) * 105000 // 105 ms of the board's clock per 100 ms of the host's
		board.mu.Unlock()
		if err := ss.s.feed(board.slow(nil, 1, func(int) uint16 { return 100 }), float64(i)/10+0.0003*float64(i%4)); err != nil {
			t.Fatal(err)
		}
	}
	if err := ss.finish(nil); err != nil {
		t.Fatal(err)
	}
	if c := ss.sum.Clock; c.Points != 1200 || math.Abs(c.DriftPPM-50000) > 100 || c.FitS < 120 {
		t.Errorf("clock %+v (note %q), want +50000 ppm over 126 s", c, ss.sum.ClockNote)
	}
	b, _ := os.ReadFile(cfg.Out)
	if !strings.Contains(string(b), "# clock: drift_ppm=") {
		t.Errorf("no clock line:\n%s", b[len(b)-300:])
	}
}

// TestTextUnplug: text input survives an unplug too, with a gap line.
func TestTextUnplug(t *testing.T) {
	pb := newPtyBoard(t)
	pb.setQuiet(true)
	cfg := ptyConfig(pb)
	cfg.Input = InputText
	r := startRecording(t, cfg)
	time.Sleep(100 * time.Millisecond)
	pb.write([]byte("1.5\n1.6\n"))
	r.waitFor("2 samples")
	pb.unplug()
	time.Sleep(200 * time.Millisecond)
	pb.plug()
	r.waitFor("1 reconnects")
	pb.write([]byte("1.7\n"))
	r.waitFor("3 samples")
	r.stop()
	ts, vs, rd := readCapture(t, cfg.Out)
	if len(ts) != 3 || vs[2] != 1.7 || len(rd.Gaps()) != 1 || rd.Gaps()[0].Reason != capture.GapUnplugged {
		t.Errorf("rows %v %v gaps %+v", ts, vs, rd.Gaps())
	}
}

// TestAppendOtherChannels: appending a recording of other channels is refused, and
// the file is left as it was.
func TestAppendOtherChannels(t *testing.T) {
	pb := newPtyBoard(t)
	cfg := ptyConfig(pb)
	r := startRecording(t, cfg)
	r.waitFor("0 samples")
	pb.write(pb.slow(nil, 3, func(int) uint16 { return 1 }))
	r.waitFor("3 samples")
	r.stop()
	before, _ := os.ReadFile(cfg.Out)
	cfg2 := ptyConfig(pb)
	cfg2.Out, cfg2.Append, cfg2.Channels = cfg.Out, true, 2
	if _, err := Record(context.Background(), cfg2); err == nil || !strings.Contains(err.Error(), "columns") {
		t.Fatalf("append with 2 channels onto 1: %v", err)
	}
	after, _ := os.ReadFile(cfg.Out)
	if string(after) != string(before) {
		t.Error("the refused append changed the file")
	}
}
