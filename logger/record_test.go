package logger

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
	"time"

	"capcycle/logger/loggertest"
)

// recording runs Record in the background; wait for conditions on its status line.
type recording struct {
	t      *testing.T
	status *loggertest.Buffer
	cancel context.CancelFunc
	done   chan struct{}
	sum    *Summary
	err    error
	cfg    *Config
}

func startRecording(t *testing.T, cfg *Config) *recording {
	t.Helper()
	ctx, cancel := context.WithCancel(context.Background())
	r := &recording{t: t, status: &loggertest.Buffer{}, cancel: cancel, done: make(chan struct{}), cfg: cfg}
	cfg.Status, cfg.Terminal = r.status, true
	if cfg.Out == "" {
		cfg.Out = filepath.Join(t.TempDir(), "out.csv")
	}
	go func() {
		r.sum, r.err = Record(ctx, cfg)
		close(r.done)
	}()
	t.Cleanup(func() { cancel(); <-r.done })
	return r
}

// waitFor polls the status line until it holds want (e.g. "100 samples").
func (r *recording) waitFor(want string) {
	r.t.Helper()
	deadline := time.Now().Add(10 * time.Second)
	for time.Now().Before(deadline) {
		if strings.Contains(r.last(), want) {
			return
		}
		select {
		case <-r.done:
			r.t.Fatalf("recording ended (%v) before %q; status %q", r.err, want, r.last())
		case <-time.After(20 * time.Millisecond):
		}
	}
	r.t.Log(strings.ReplaceAll(r.status.String(), "\r", "\n"))
	r.t.Fatalf("no %q in the status within 10 s; last %q", want, r.last())
}

func (r *recording) last() string {
	s := r.status.String()
	if i := strings.LastIndexByte(s, '\r'); i >= 0 {
		s = s[i+1:]
	}
	return s
}

func (r *recording) stop() *Summary {
	r.t.Helper()
	r.cancel()
	select {
	case <-r.done:
	case <-time.After(10 * time.Second):
		r.t.Fatal("Record did not stop within 10 s of the cancel")
	}
	if r.err != nil {
		r.t.Fatalf("Record: %v", r.err)
	}
	return r.sum
}

func ptyConfig(pb *ptyBoard) *Config {
	return &Config{Port: pb.link, RetryMin: 20 * time.Millisecond, RetryMax: 100 * time.Millisecond,
		Handshake: 2 * time.Second}
}

// volts of count c for the test board: c/4096 * 5 V / 0.5.
func boardVolts(c uint16) float64 { return float64(c) / 4096 * 5 / 0.5 }

func TestRecordOverPty(t *testing.T) {
	pb := newPtyBoard(t)
	cfg := ptyConfig(pb)
	cfg.Profile = "wren"
	r := startRecording(t, cfg)
	r.waitFor("0 samples")
	pb.write(pb.slow(nil, 200, func(i int) uint16 { return uint16(1000 + i) }))
	r.waitFor("200 samples")
	// Flushed at least every second while recording: the rows are in the file before
	// the recording stops.
	time.Sleep(1300 * time.Millisecond)
	if b, _ := os.ReadFile(cfg.Out); bytes.Count(b, []byte("\n")) < 200 {
		t.Errorf("after 1.3 s only %d lines on disk", bytes.Count(b, []byte("\n")))
	}
	sum := r.stop()
	if sum.Stats.Samples != 200 || sum.Stats.Lost != 0 || sum.Stats.BadFrames != 0 {
		t.Errorf("stats %+v", sum.Stats)
	}
	ts, vs, rd := readCapture(t, cfg.Out)
	if len(ts) != 200 {
		t.Fatalf("%d rows, want 200", len(ts))
	}
	for i := range ts {
		if want := boardVolts(uint16(1000 + i)); math.Abs(vs[i]-want) > 1e-5 {
			t.Fatalf("row %d: %v V, want %v", i, vs[i], want)
		}
		if i > 0 {
			// A rows are 100 ms apart on the device clock (slow_hz=10).
			if d := ts[i] - ts[i-1]; math.Abs(d-0.1) > 1.5e-6 {
				t.Fatalf("row %d: spacing %v s, want 0.1", i, d)
			}
		}
	}
	m := rd.Meta()
	if m["profile"] != "wren" || !strings.Contains(m["board"], "board=test") ||
		!strings.Contains(m["channel"], "divider=0.5") || m["format"] != "capcycle.capture/1" {
		t.Errorf("metadata %v", m)
	}
	if got := string(pbCmds(pb)); !strings.HasPrefix(got, "id") {
		t.Errorf("commands %q, want id first", got)
	}
}

func pbCmds(pb *ptyBoard) string {
	pb.mu.Lock()
	defer pb.mu.Unlock()
	return strings.Join(pb.cmds, ",")
}

func TestRecordSendsSettings(t *testing.T) {
	pb := newPtyBoard(t)
	cfg := ptyConfig(pb)
	cfg.SlowHz, cfg.FastHz = 20, 1000
	cfg.Burst = &Burst{Thr: 4, Pre: 16, Post: 8}
	cfg.Channels = 2
	cfg.Columns = []string{"vcell_v"}
	r := startRecording(t, cfg)
	r.waitFor("0 samples")
	pb.write(pb.slow(nil, 10, func(i int) uint16 { return 2048 }))
	r.waitFor("10 samples")
	r.stop()
	if got := pbCmds(pb); got != "id,chan,rate,burst" {
		t.Errorf("commands %q", got)
	}
	b, _ := os.ReadFile(cfg.Out)
	text := string(b)
	if !strings.Contains(text, "time_s,vcap_v,vcell_v\n") || !strings.Contains(text, "slow_hz=20 fast_hz=1000 thr=4 pre=16 post=8") {
		t.Errorf("capture:\n%s", text)
	}
	// 2048 of 4096 counts at 5 V: vcap through its 0.5 divider is 5 V, vcell (divider 1)
	// 2.5 V. The settings sent in the handshake are in the header's board line only.
	if strings.Count(text, ",5.00000,2.50000\n") != 10 || strings.Count(text, "# board:") != 1 {
		t.Errorf("values:\n%s", text)
	}
}

func TestRecordUntil(t *testing.T) {
	pb := newPtyBoard(t)
	cfg := ptyConfig(pb)
	cfg.Out = filepath.Join(t.TempDir(), "until.csv")
	cfg.Until = time.Now().Add(400 * time.Millisecond)
	start := time.Now()
	sum, err := Record(context.Background(), cfg)
	if err != nil || sum.Stop != "until" {
		t.Fatalf("stop %q, %v", sum.Stop, err)
	}
	if d := time.Since(start); d < 400*time.Millisecond || d > 2*time.Second {
		t.Errorf("stopped after %v", d)
	}
}

func TestRecordRefusedSetting(t *testing.T) {
	pb := newPtyBoard(t)
	cfg := ptyConfig(pb)
	cfg.Channels = 9
	if _, err := Record(context.Background(), cfg); err == nil {
		t.Fatal("9 channels accepted")
	}
	cfg = ptyConfig(pb)
	cfg.FastHz = 5000 // above the board's max_hz
	cfg.Out = filepath.Join(t.TempDir(), "refused.csv")
	_, err := Record(context.Background(), cfg)
	if err == nil || !strings.Contains(err.Error(), "refused >rate: range") {
		t.Fatalf("a refused rate: %v", err)
	}
	if _, serr := os.Stat(cfg.Out); serr == nil {
		t.Error("a capture was created although the board refused the settings")
	}
}

func TestRecordNoHandshake(t *testing.T) {
	pb := newPtyBoard(t)
	pb.setQuiet(true)
	cfg := ptyConfig(pb)
	cfg.Handshake = 300 * time.Millisecond
	cfg.StartWait = 700 * time.Millisecond // the start asks again until this limit
	cfg.Out = filepath.Join(t.TempDir(), "x.csv")
	_, err := Record(context.Background(), cfg)
	if !errors.Is(err, ErrHandshake) {
		t.Fatalf("silent board: %v, want ErrHandshake", err)
	}
	if _, err := os.Stat(cfg.Out); err == nil {
		t.Error("a capture was created without a handshake")
	}
}

// TestSecondRecorderLocked: a second recorder on a port that one is recording from is
// refused at once (as root too, where the exclusive open of the serial library does not
// hold), with the holder's process id; the first goes on undisturbed, and once it stops
// the port is free.
func TestSecondRecorderLocked(t *testing.T) {
	pb := newPtyBoard(t)
	cfg := ptyConfig(pb)
	r := startRecording(t, cfg)
	r.waitFor("0 samples")
	cfg2 := ptyConfig(pb)
	cfg2.Out = filepath.Join(t.TempDir(), "second.csv")
	_, err := Record(context.Background(), cfg2)
	var pe *PortError
	var le *LockedError
	if !errors.As(err, &pe) || pe.Kind != PortBusy || !errors.As(err, &le) {
		t.Fatalf("second recorder: %v, want a busy PortError with a LockedError", err)
	}
	if runtime.GOOS == "linux" && (le.Pid != os.Getpid() || !strings.Contains(err.Error(), fmt.Sprintf("process %d", os.Getpid()))) {
		t.Errorf("second recorder: %v; want the holder's pid %d", err, os.Getpid())
	}
	if _, serr := os.Stat(cfg2.Out); serr == nil {
		t.Error("the refused recorder created a capture")
	}
	pb.write(pb.slow(nil, 20, func(int) uint16 { return 5 }))
	r.waitFor("20 samples")
	if sum := r.stop(); sum.Stats.Samples != 20 || sum.Reconnects != 0 {
		t.Errorf("the first recorder: %+v", sum)
	}
	p, err := Open(pb.link, nil)
	if err != nil {
		t.Fatalf("the port after the first recorder stopped: %v", err)
	}
	p.Close()
}

// TestOutputCheckedFirst: a capture path in a missing folder, an existing file without
// force or append, and an append onto a file that is not a capture are refused before
// the board is asked for anything, with ErrOutput, and change nothing.
func TestOutputCheckedFirst(t *testing.T) {
	dir := t.TempDir()
	notCapture := filepath.Join(dir, "notes.txt")
	os.WriteFile(notCapture, []byte("shopping list\nmilk\n"), 0o644)
	existing := filepath.Join(dir, "kept.csv")
	os.WriteFile(existing, []byte("precious\n"), 0o644)
	for _, tc := range []struct {
		name   string
		out    string
		append bool
		want   string
	}{
		{"missing folder", filepath.Join(dir, "no-such-folder", "x.csv"), false, "does not exist"},
		{"append onto a text file", notCapture, true, "not a capture file"},
		{"existing file", existing, false, "exists"},
		{"a folder", dir, false, "is a folder"},
	} {
		pb := newPtyBoard(t)
		cfg := ptyConfig(pb)
		cfg.Out, cfg.Append = tc.out, tc.append
		before, _ := os.ReadFile(tc.out)
		_, err := Record(context.Background(), cfg)
		if !errors.Is(err, ErrOutput) || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: %v, want ErrOutput saying %q", tc.name, err, tc.want)
		}
		if got := pbCmds(pb); got != "" {
			t.Errorf("%s: the board was asked %q before the path was checked", tc.name, got)
		}
		if after, _ := os.ReadFile(tc.out); string(after) != string(before) {
			t.Errorf("%s: the file changed", tc.name)
		}
	}
}

// TestFlushWithinAQuarterSecond: rows the recorder has are in the file once a quarter of a
// second passes on the host clock (the test's clock: it moves 300 ms and no more, so
// with the former 1 s flush the rows never reach the file).
func TestFlushWithinAQuarterSecond(t *testing.T) {
	pb := newPtyBoard(t)
	cfg := ptyConfig(pb)
	base := time.Date(2026, 12, 1, 12, 0, 0, 0, time.UTC)
	clk := &fakeClock{t: base}
	cfg.Now = clk.Now
	r := startRecording(t, cfg)
	r.waitFor("0 samples")
	pb.write(pb.slow(nil, 30, func(int) uint16 { return 9 }))
	r.waitFor("30 samples")
	clk.Set(base.Add(300 * time.Millisecond))
	deadline := time.Now().Add(20 * time.Second)
	for {
		b, _ := os.ReadFile(cfg.Out)
		if strings.Count(string(b), ",0.02197\n") == 30 {
			break
		}
		if time.Now().After(deadline) {
			t.Fatalf("300 ms of host time after the rows came, the file holds:\n%s", b)
		}
		time.Sleep(20 * time.Millisecond)
	}
	r.stop()
}

// TestStartNoisyLink: the first identity replies arrive damaged. The start keeps asking,
// with the state on the status line, and the recording begins once one gets through
// (it used to give up after one handshake time).
func TestStartNoisyLink(t *testing.T) {
	pb := newPtyBoard(t)
	pb.mu.Lock()
	pb.garble = 3
	pb.mu.Unlock()
	cfg := ptyConfig(pb)
	cfg.Handshake = 500 * time.Millisecond
	r := startRecording(t, cfg)
	r.waitFor("asking the board for its identity")
	r.waitFor("0 samples")
	pb.write(pb.slow(nil, 10, func(int) uint16 { return 3 }))
	r.waitFor("10 samples")
	sum := r.stop()
	if n := strings.Count(pbCmds(pb), "id"); n < 4 || sum.Stats.Samples != 10 {
		t.Errorf("%d identity requests, %+v", n, sum.Stats)
	}
	if !strings.Contains(r.status.String(), "no answer from") {
		t.Errorf("no note of the retries: %q", r.status.String())
	}
}

// TestStartStoppedWhileAsking: a cancel while the board has not answered ends the start
// with ErrHandshake and no capture.
func TestStartStoppedWhileAsking(t *testing.T) {
	pb := newPtyBoard(t)
	pb.setQuiet(true)
	cfg := ptyConfig(pb)
	r := startRecording(t, cfg)
	r.waitFor("asking the board for its identity (")
	r.waitFor("try 2)")
	r.cancel()
	<-r.done
	if !errors.Is(r.err, ErrHandshake) || !strings.Contains(r.err.Error(), "no capture was written") {
		t.Errorf("stopped while asking: %v", r.err)
	}
	if _, err := os.Stat(cfg.Out); err == nil {
		t.Error("a capture was created without a handshake")
	}
}
