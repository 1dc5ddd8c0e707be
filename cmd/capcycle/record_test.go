package main

import (
	"bytes"
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/creack/pty"
	"golang.org/x/term"

	"capcycle/firmware-protocol/wire"
	"capcycle/logger/capture"
	"capcycle/logger/loggertest"
)

// recBoard is a small capcycle board on a pseudo-terminal for the command tests: it
// answers commands and, once started, sends A frames at 50 Hz in real time.
type recBoard struct {
	mu     sync.Mutex
	master *os.File
	slave  *os.File
	path   string
	id     wire.Identity
	ch     [2]wire.Channel
	count  uint16
	cmds   []wire.Frame
	stop   chan struct{}
	wg     sync.WaitGroup
	paused atomic.Bool // stream sends nothing while set (a board gone quiet)
	closed sync.Once
}

func newRecBoard(t *testing.T, nch uint32) *recBoard {
	m, s, err := loggertest.OpenPty()
	if errors.Is(err, loggertest.ErrNoPty) {
		t.Skip(err)
	}
	if err != nil {
		t.Fatal(err)
	}
	b := &recBoard{master: m, slave: s, path: s.Name(), count: 2048, stop: make(chan struct{}),
		id: wire.Identity{Proto: 1, Firmware: "0.1.0", Board: "recboard", Bits: 10, EBits: 12, Ref: wire.RefAVcc,
			RefUV: 5000000, NCh: nch, ClockHz: 16000000, MaxHz: 1000, SlowHz: 50, FastHz: 500, Thr: 8, Pre: 32, Post: 32}}
	for k := range b.ch {
		b.ch[k] = wire.Channel{Ch: uint32(k), Div: wire.MicroOf(1), Gain: wire.MicroOf(1)}
	}
	b.wg.Add(2)
	go b.serve()
	go b.stream()
	t.Cleanup(func() {
		close(b.stop)
		b.unplug()
		b.wg.Wait()
	})
	return b
}

// unplug closes the board's side of the pseudo-terminal, as a pulled cable: the host's
// reads fail and the device node goes away.
func (b *recBoard) unplug() {
	b.closed.Do(func() {
		b.master.Close()
		b.slave.Close()
	})
}

func (b *recBoard) send(p []byte) {
	b.master.Write(p)
}

func (b *recBoard) idFrames() []byte {
	p := wire.Append(nil, b.id)
	for k := 0; k < int(b.id.NCh); k++ {
		p = wire.Append(p, b.ch[k])
	}
	return p
}

func (b *recBoard) serve() {
	defer b.wg.Done()
	buf := make([]byte, 256)
	var pend []byte
	for {
		n, err := b.master.Read(buf)
		pend = append(pend, buf[:n]...)
		for {
			i := bytes.IndexByte(pend, '\n')
			if i < 0 {
				break
			}
			line := pend[:i+1]
			pend = pend[i+1:]
			j := bytes.IndexByte(line, '>')
			if j < 0 {
				continue
			}
			f, err := wire.Parse(line[j:])
			if err != nil {
				continue
			}
			b.mu.Lock()
			b.cmds = append(b.cmds, f)
			out := wire.Append(nil, wire.Ack{Cmd: f.Tag()})
			switch c := f.(type) {
			case wire.CmdCal:
				b.ch[c.Ch] = wire.Channel{Ch: c.Ch, Div: c.Div, Gain: c.Gain, OffUV: c.OffUV}
				out = append(out, b.idFrames()...)
			case wire.CmdRef:
				b.id.Ref = c.Src
				out = append(out, b.idFrames()...)
			case wire.CmdChan:
				b.id.NCh = c.N
				out = append(out, b.idFrames()...)
			case wire.CmdID:
				out = append(out, b.idFrames()...)
			}
			b.mu.Unlock()
			b.send(out)
		}
		if err != nil {
			return
		}
	}
}

// stream sends one A frame every 20 ms of real time.
func (b *recBoard) stream() {
	defer b.wg.Done()
	tick := time.NewTicker(20 * time.Millisecond)
	defer tick.Stop()
	var seq, tUS uint32
	for {
		select {
		case <-b.stop:
			return
		case <-tick.C:
		}
		if b.paused.Load() {
			continue
		}
		b.mu.Lock()
		a := wire.Average{Seq: seq, TimeUS: tUS, N: 10, NCh: int(b.id.NCh)}
		for k := 0; k < a.NCh; k++ {
			a.Mean[k], a.Min[k], a.Max[k] = b.count, b.count, b.count
		}
		b.mu.Unlock()
		b.send(wire.Append(nil, a))
		seq++
		tUS += 20000
	}
}

func (b *recBoard) commands() []wire.Frame {
	b.mu.Lock()
	defer b.mu.Unlock()
	return append([]wire.Frame(nil), b.cmds...)
}

func TestRecordCommand(t *testing.T) {
	b := newRecBoard(t, 2)
	out := filepath.Join(t.TempDir(), "wren.csv")
	code, _, errs := runCmd(t, "record", "--port", b.path, "--profile", "../../analyze/model/scenarios/wren.toml",
		"--out", out, "--duration", "700ms", "--quiet")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	f, err := os.Open(out)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	r := capture.NewReader(f, out)
	ts, vs := make([]float64, 1000), make([]float64, 1000)
	n, err := r.Read(ts, vs)
	if err != io.EOF {
		t.Fatalf("read: %v", err)
	}
	if n < 10 {
		t.Fatalf("%d rows in 700 ms at 50 Hz", n)
	}
	// 2048 counts of 4096 at 5 V through the profile's 1:2 divider (1 MΩ over 1 MΩ).
	for i := 0; i < n; i++ {
		if vs[i] != 5.0 {
			t.Fatalf("row %d: %v V, want 5", i, vs[i])
		}
	}
	m := r.Meta()
	if m["profile"] != "Wren" || !strings.Contains(m["channel"], "divider=0.5") {
		t.Errorf("metadata %v", m)
	}
	if cols := r.Columns(); strings.Join(cols, ",") != "time_s,vcap_v,vcell_v" {
		t.Errorf("columns %v", cols)
	}
	text, _ := os.ReadFile(out)
	if !strings.Contains(string(text), "# end: ") || !strings.Contains(string(text), "# stats: samples=") {
		t.Errorf("no trailer:\n%s", text)
	}
}

func TestRecordRefusesOverwrite(t *testing.T) {
	b := newRecBoard(t, 1)
	out := filepath.Join(t.TempDir(), "keep.csv")
	os.WriteFile(out, []byte("precious\n"), 0o644)
	code, _, errs := runCmd(t, "record", "--port", b.path, "--out", out, "--duration", "300ms", "--quiet")
	if code != exitUsage || !strings.Contains(errs, "--force") {
		t.Fatalf("exit %d, stderr %q", code, errs)
	}
	if got, _ := os.ReadFile(out); string(got) != "precious\n" {
		t.Fatal("the file was changed")
	}
}

func TestRecordUsageErrors(t *testing.T) {
	for _, args := range [][]string{
		{"--force", "--append"},
		{"--until", "25:99"},
		{"--input", "morse"},
		{"--input", "text"},
		{"--input", "text", "--port", "/dev/null", "--bits", "10"},
		{"--divider", "3"},
		{"--ref", "mains"},
		{"--channels", "7"},
		{"--burst-thr", "4"},
		{"stray"},
	} {
		code, _, errs := runCmd(t, append([]string{"record", "--out", "/nonexistent/x.csv"}, args...)...)
		if code != exitUsage {
			t.Errorf("%v: exit %d (%s), want %d", args, code, errs, exitUsage)
		}
	}
}

func TestRecordUntil(t *testing.T) {
	loc := time.FixedZone("here", 3600)
	now := time.Date(2026, 12, 1, 17, 40, 0, 0, loc)
	for s, want := range map[string]time.Time{
		"18:30": time.Date(2026, 12, 1, 18, 30, 0, 0, loc),
		"09:15": time.Date(2026, 12, 2, 9, 15, 0, 0, loc),
		"17:40": time.Date(2026, 12, 2, 17, 40, 0, 0, loc),
	} {
		got, err := recordUntil(s, now)
		if err != nil || !got.Equal(want) {
			t.Errorf("recordUntil(%q) = %v, %v; want %v", s, got, err, want)
		}
	}
}

func TestRecordDefaultName(t *testing.T) {
	fs, f := newRecordFlags(io.Discard)
	fs.Parse(nil)
	cfg, err := recordConfig(f, map[string]bool{}, nil, time.Date(2026, 12, 1, 9, 5, 0, 0, time.UTC))
	if err != nil || cfg.Out != "capture-20261201-0905.csv" {
		t.Errorf("out %q, %v", cfg.Out, err)
	}
	if got := recordFileWord("Wren on the sill"); got != "wren-on-the-sill" {
		t.Errorf("recordFileWord = %q", got)
	}
}

// TestRecordTextInput: a board running other firmware prints counts; --input text with
// --bits, --vref and --divider converts them, and no command is sent to it.
func TestRecordTextInput(t *testing.T) {
	m, s, err := pty.Open()
	if err != nil {
		t.Skip("no pseudo-terminals:", err)
	}
	defer m.Close()
	defer s.Close()
	term.MakeRaw(int(s.Fd()))
	out := filepath.Join(t.TempDir(), "text.csv")
	go func() {
		for i := 0; i < 20; i++ {
			time.Sleep(20 * time.Millisecond)
			m.Write([]byte("512\r\n"))
		}
	}()
	code, _, errs := runCmd(t, "record", "--port", s.Name(), "--input", "text", "--bits", "10", "--vref", "5",
		"--divider", "0.5", "--out", out, "--duration", "800ms", "--quiet")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	text, _ := os.ReadFile(out)
	// 512 of 1024 at 5 V is 2.5 V at the pin, 5 V at the node through the 0.5 divider.
	if n := strings.Count(string(text), ",5.00000\n"); n < 15 {
		t.Errorf("%d rows of 5 V:\n%s", n, text)
	}
	if !strings.Contains(string(text), "# channel: vcap_v adc=0 bits=10 ref_v=5 divider=0.5 scale=1") {
		t.Errorf("channel line missing:\n%s", text)
	}
}

// TestRecordPathErrorsFirst: a capture path in a missing folder and an append onto a
// file that is not a capture are bad input (exit 2), found before the board is asked
// anything, and change nothing.
func TestRecordPathErrorsFirst(t *testing.T) {
	dir := t.TempDir()
	notes := filepath.Join(dir, "notes.txt")
	os.WriteFile(notes, []byte("Wren: moved to the left of the sill\n"), 0o644)
	for _, tc := range []struct {
		name string
		args []string
		want string
	}{
		{"missing folder", []string{"--out", filepath.Join(dir, "no-such-folder", "wren.csv")}, "does not exist"},
		{"append onto notes", []string{"--out", notes, "--append"}, "not a capture file"},
	} {
		b := newRecBoard(t, 1)
		code, _, errs := runCmd(t, append([]string{"record", "--port", b.path, "--duration", "2s", "--quiet"}, tc.args...)...)
		if code != exitUsage || !strings.Contains(errs, tc.want) {
			t.Errorf("%s: exit %d, stderr %q; want %d and %q", tc.name, code, errs, exitUsage, tc.want)
		}
		if cmds := b.commands(); len(cmds) != 0 {
			t.Errorf("%s: the board was asked %v before the path was checked", tc.name, cmds)
		}
	}
	if b, _ := os.ReadFile(notes); string(b) != "Wren: moved to the left of the sill\n" {
		t.Errorf("the notes changed: %q", b)
	}
}
