package capture

import (
	"bytes"
	"errors"
	"fmt"
	"io/fs"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"
)

var t0 = time.Date(2026, 12, 1, 9, 30, 0, 0, time.UTC)

func testHeader() *Header {
	return &Header{
		Start:   t0,
		Source:  "serial port=/dev/ttyUSB0 baud=115200",
		Board:   "proto=1 fw=0.1.0 board=328p16",
		Profile: "wren",
		Channels: []Channel{
			{Column: "vcap_v", ADC: 0, Bits: 12, RefV: 5, Divider: 0.3333, Gain: 1.0012, OffsetV: -0.003, CalFrom: "board"},
			{Column: "vcell_v", ADC: 1, Bits: 12, RefV: 5},
		},
	}
}

// checkCapture is a small independent check of a capture's text: whole lines, one header
// row starting with time_s, rows of ncol numbers with increasing time. It returns the
// data rows and the metadata lines after the header row, and drops a torn last line.
func checkCapture(t *testing.T, data []byte) (rows [][]float64, events []string) {
	t.Helper()
	text := string(data)
	if i := strings.LastIndexByte(text, '\n'); i != len(text)-1 {
		text = text[:i+1] // a torn last line is not part of the capture
	}
	var header []string
	last := math.Inf(-1)
	for n, line := range strings.Split(strings.TrimSuffix(text, "\n"), "\n") {
		switch {
		case line == "":
		case line[0] == '#':
			if header != nil {
				if _, _, ok := ParseComment(line); !ok {
					t.Fatalf("line %d: %q is not a metadata line", n+1, line)
				}
				events = append(events, line)
			}
		case header == nil:
			header = strings.Split(line, ",")
			if header[0] != ColTime {
				t.Fatalf("line %d: header %q", n+1, line)
			}
		default:
			cells := strings.Split(line, ",")
			if len(cells) != len(header) {
				t.Fatalf("line %d: %d cells, header has %d: %q", n+1, len(cells), len(header), line)
			}
			row := make([]float64, len(cells))
			for i, c := range cells {
				v, err := strconv.ParseFloat(c, 64)
				if err != nil {
					t.Fatalf("line %d: cell %d %q: %v", n+1, i, c, err)
				}
				row[i] = v
			}
			if row[0] <= last {
				t.Fatalf("line %d: time %v not after %v", n+1, row[0], last)
			}
			last = row[0]
			rows = append(rows, row)
		}
	}
	if header == nil {
		t.Fatal("no header row")
	}
	return rows, events
}

func TestWriterContent(t *testing.T) {
	var b bytes.Buffer
	w, err := NewWriter(&b, testHeader(), nil)
	if err != nil {
		t.Fatal(err)
	}
	must(t, w.Row(0, []float64{2.415134, 0.5}))
	must(t, w.Row(0.1, []float64{2.416, math.NaN()}))
	must(t, w.GapUntilNextRow(0.1, GapLostSamples, 2))
	must(t, w.Row(0.4, []float64{-0.00001, 1}))
	must(t, w.Reset(Reset{AtS: 12.5, Cause: "ext", Segment: 2}, "proto=1 fw=0.1.1"))
	must(t, w.Row(12.5, []float64{1234.5, 1}))
	must(t, w.Close(&Trailer{End: t0.Add(time.Minute), EndS: 60,
		Stats: &Stats{Samples: 4, Lost: 2, Gaps: 1}, Clock: &Clock{DriftPPM: -412.6, FitS: 12, Points: 3}}))
	want := `# format: capcycle.capture/1
# start: 2026-12-01T09:30:00.000000Z
# source: serial port=/dev/ttyUSB0 baud=115200
# board: proto=1 fw=0.1.0 board=328p16
# profile: wren
# channel: vcap_v adc=0 bits=12 ref_v=5 divider=0.3333 scale=1
# channel: vcell_v adc=1 bits=12 ref_v=5 divider=1 scale=1
# calibration: vcap_v gain=1.0012 offset_v=-0.003 from=board
# calibration: vcell_v gain=1 offset_v=0 from=none
time_s,vcap_v,vcell_v
0.000000,2.41513,0.50000
0.100000,2.41600,
# gap: start_s=0.100000 end_s=0.400000 reason=lost-samples lost=2
0.400000,-0.00001,1.00000
# reset: at_s=12.500000 cause=ext segment=2
# board: proto=1 fw=0.1.1
12.500000,1234.50000,1.00000
# end: 2026-12-01T09:31:00.000000Z
# stats: samples=4 bad_frames=0 lost=2 gaps=1 overlap=0
# clock: drift_ppm=-412.600 fit_s=12.000 points=3
`
	if got := b.String(); got != want {
		t.Errorf("got\n%s\nwant\n%s", got, want)
	}
	if err := w.Close(nil); !errors.Is(err, ErrClosed) {
		t.Errorf("second Close: %v, want ErrClosed", err)
	}
	if err := w.Row(13, []float64{1, 1}); !errors.Is(err, ErrClosed) {
		t.Errorf("Row after Close: %v, want ErrClosed", err)
	}
}

func must(t *testing.T, err error) {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
}

func TestAppendMicros(t *testing.T) {
	for _, c := range []struct {
		us   int64
		want string
	}{{0, "0.000000"}, {1, "0.000001"}, {999999, "0.999999"}, {1000000, "1.000000"},
		{86400123456, "86400.123456"}, {-1, "-0.000001"}, {-2500000, "-2.500000"}} {
		if got := string(appendMicros(nil, c.us)); got != c.want {
			t.Errorf("appendMicros(%d) = %q, want %q", c.us, got, c.want)
		}
	}
}

func TestRowTimeOrder(t *testing.T) {
	var b bytes.Buffer
	w, err := NewWriter(&b, testHeader(), nil)
	must(t, err)
	must(t, w.Row(1, []float64{1, 1}))
	for _, ts := range []float64{1, 0.5, 1.0000004, math.NaN()} { // 1.0000004 rounds to 1.000000
		if err := w.Row(ts, []float64{1, 1}); !errors.Is(err, ErrTimeOrder) {
			t.Errorf("Row(%v) = %v, want ErrTimeOrder", ts, err)
		}
	}
	must(t, w.Row(1.000001, []float64{1, 1}))
	if w.Rows() != 2 {
		t.Errorf("Rows = %d, want 2", w.Rows())
	}
}

func TestCreateRefusesExisting(t *testing.T) {
	path := filepath.Join(t.TempDir(), "c.csv")
	must(t, os.WriteFile(path, []byte("precious\n"), 0o644))
	_, err := Create(path, testHeader(), nil)
	if !errors.Is(err, fs.ErrExist) {
		t.Fatalf("Create over a file: %v, want fs.ErrExist", err)
	}
	if b, _ := os.ReadFile(path); string(b) != "precious\n" {
		t.Fatalf("file changed: %q", b)
	}
	w, err := Create(path, testHeader(), &Options{Force: true})
	must(t, err)
	must(t, w.Close(nil))
	b, _ := os.ReadFile(path)
	if !strings.HasPrefix(string(b), "# format: "+FormatVersion+"\n") {
		t.Fatalf("forced file starts %q", b[:20])
	}
}

// countingSink records what reaches it and how often it is synced.
type countingSink struct {
	bytes.Buffer
	writes, syncs int
}

func (s *countingSink) Write(p []byte) (int, error) { s.writes++; return s.Buffer.Write(p) }
func (s *countingSink) Sync() error                 { s.syncs++; return nil }

func TestTickFlushAndSync(t *testing.T) {
	s := &countingSink{}
	w, err := NewWriter(s, testHeader(), nil)
	must(t, err)
	base := s.writes
	now := t0
	must(t, w.Tick(now))        // starts the clocks
	for i := 1; i <= 120; i++ { // 12 s of rows at 10 Hz, a Tick after each
		must(t, w.Row(float64(i)/10, []float64{1, 2}))
		now = now.Add(100 * time.Millisecond)
		must(t, w.Tick(now))
		// Flushed at least every second: what is still buffered is less than 1 s of rows.
		if buffered := w.Size() - int64(s.Len()); i%10 == 0 && buffered != 0 {
			t.Fatalf("after %v, %d bytes still buffered", now.Sub(t0), buffered)
		}
	}
	if got := s.writes - base; got != 12 {
		t.Errorf("%d writes in 12 s, want 12 (one per second)", got)
	}
	if s.syncs != 1 {
		t.Errorf("%d syncs in 12 s, want 1 (every 10 s)", s.syncs)
	}
	must(t, w.Close(nil))
	if s.syncs != 2 {
		t.Errorf("Close did not sync (syncs %d)", s.syncs)
	}
	rows, _ := checkCapture(t, s.Bytes())
	if len(rows) != 120 {
		t.Errorf("%d rows, want 120", len(rows))
	}
}

// fullSink accepts limit bytes and then fails like a full disk; it can be truncated.
type fullSink struct {
	data  []byte
	limit int
}

func (s *fullSink) Write(p []byte) (int, error) {
	room := s.limit - len(s.data)
	if room >= len(p) {
		s.data = append(s.data, p...)
		return len(p), nil
	}
	s.data = append(s.data, p[:max(room, 0)]...)
	return max(room, 0), syscall.ENOSPC
}

func (s *fullSink) Truncate(n int64) error { s.data = s.data[:n]; return nil }

func TestDiskFull(t *testing.T) {
	s := &fullSink{limit: 2000}
	w, err := NewWriter(s, testHeader(), nil)
	must(t, err)
	var werr error
	for i := 0; i < 1000 && werr == nil; i++ {
		if werr = w.Row(float64(i), []float64{1.5, 2.5}); werr == nil && i%10 == 9 {
			werr = w.Flush()
		}
	}
	var we *WriteError
	if !errors.As(werr, &we) || !errors.Is(werr, syscall.ENOSPC) {
		t.Fatalf("error %v, want a *WriteError wrapping ENOSPC", werr)
	}
	if err := w.Row(5000, []float64{1, 1}); err != werr {
		t.Errorf("Row after the failure: %v, want the same error", err)
	}
	if len(s.data) == 0 || s.data[len(s.data)-1] != '\n' {
		t.Fatalf("file does not end in a whole line: %q", s.data[max(0, len(s.data)-30):])
	}
	rows, _ := checkCapture(t, s.data)
	if len(rows) == 0 {
		t.Fatal("no rows kept")
	}
	if int64(len(s.data)) != w.Size()-int64(len(w.buf)) {
		t.Errorf("Size bookkeeping: file %d, writer says %d", len(s.data), w.Size()-int64(len(w.buf)))
	}
	if err := w.Close(nil); err != werr {
		t.Errorf("Close: %v, want the write error", err)
	}
}

func TestDevFull(t *testing.T) {
	f, err := os.OpenFile("/dev/full", os.O_WRONLY, 0)
	if err != nil {
		t.Skip("no /dev/full:", err)
	}
	defer f.Close()
	_, err = NewWriter(f, testHeader(), nil)
	if !errors.Is(err, syscall.ENOSPC) {
		t.Fatalf("writing to /dev/full: %v, want ENOSPC", err)
	}
}

func TestAppendRepairsTornLine(t *testing.T) {
	path := filepath.Join(t.TempDir(), "c.csv")
	w, err := Create(path, testHeader(), nil)
	must(t, err)
	for i := 0; i < 5; i++ {
		must(t, w.Row(float64(i), []float64{1, 2}))
	}
	must(t, w.Flush())
	// A crash in mid-line: append half a row by hand, never close w.
	f, _ := os.OpenFile(path, os.O_WRONLY|os.O_APPEND, 0)
	f.WriteString("5.000000,1.23")
	f.Close()

	st0, _ := os.Stat(path)
	in, err := Inspect(path)
	must(t, err)
	if st1, _ := os.Stat(path); in.TornBytes != 13 || in.LastS != 4 || st1.Size() != st0.Size() {
		t.Fatalf("Inspect: %+v, size %d -> %d", in, st0.Size(), st1.Size())
	}
	now := t0.Add(time.Hour)
	w2, ex, err := Append(path, now, nil)
	must(t, err)
	if ex.TornBytes != int64(len("5.000000,1.23")) || !ex.HasRows || ex.LastS != 4 || !ex.Start.Equal(t0) ||
		strings.Join(ex.Columns, ",") != "time_s,vcap_v,vcell_v" || ex.AtS != 3600 {
		t.Fatalf("Existing = %+v", ex)
	}
	if err := w2.Row(3.5, []float64{1, 2}); !errors.Is(err, ErrTimeOrder) {
		t.Errorf("a row before the old last row: %v, want ErrTimeOrder", err)
	}
	must(t, w2.Row(3600.25, []float64{3, 4}))
	must(t, w2.Close(&Trailer{End: now.Add(time.Second), EndS: 3601}))
	b, _ := os.ReadFile(path)
	rows, events := checkCapture(t, b)
	if len(rows) != 6 || rows[5][0] != 3600.25 {
		t.Errorf("rows %v", rows)
	}
	want := []string{
		"# append: at=2026-12-01T10:30:00.000000Z at_s=3600.000000",
		"# gap: start_s=4.000000 end_s=3600.250000 reason=stopped",
		"# end: 2026-12-01T10:30:01.000000Z",
	}
	if strings.Join(events, "\n") != strings.Join(want, "\n") {
		t.Errorf("events\n%s\nwant\n%s", strings.Join(events, "\n"), strings.Join(want, "\n"))
	}
}

func TestAppendClockBehind(t *testing.T) {
	// The host clock now reads earlier than the last row (it was set back): the time
	// axis still goes on increasing.
	path := filepath.Join(t.TempDir(), "c.csv")
	w, err := Create(path, testHeader(), nil)
	must(t, err)
	must(t, w.Row(100, []float64{1, 2}))
	must(t, w.Close(nil))
	_, ex, err := Append(path, t0.Add(10*time.Second), nil)
	must(t, err)
	if ex.AtS <= 100 {
		t.Errorf("AtS = %v, want after the last row at 100", ex.AtS)
	}
}

func TestAppendRefuses(t *testing.T) {
	dir := t.TempDir()
	for name, text := range map[string]string{
		"no header row": "# format: capcycle.capture/1\n# start: 2026-12-01T09:30:00Z\n",
		"no start":      "time_s,vcap_v\n0,1\n",
		"foreign order": "# start: 2026-12-01T09:30:00Z\nvcap_v,time_s\n1,0\n",
		"bad start":     "# start: yesterday\ntime_s,vcap_v\n",
	} {
		path := filepath.Join(dir, strings.ReplaceAll(name, " ", "_"))
		must(t, os.WriteFile(path, []byte(text), 0o644))
		if _, _, err := Append(path, t0, nil); err == nil {
			t.Errorf("%s: Append accepted %q", name, text)
		}
	}
	if _, _, err := Append(filepath.Join(dir, "missing"), t0, nil); !errors.Is(err, fs.ErrNotExist) {
		t.Errorf("missing file: %v", err)
	}
}

// TestKill9 writes rows in a child process that the test kills with SIGKILL at a random
// point, then checks that the file parses and that Append repairs and continues it.
func TestKill9(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a child process")
	}
	path := filepath.Join(t.TempDir(), "killed.csv")
	cmd := exec.Command(os.Args[0], "-test.run=^TestKillChild$")
	cmd.Env = append(os.Environ(), "CAPTURE_KILL_CHILD="+path)
	stdout, _ := cmd.StdoutPipe()
	must(t, cmd.Start())
	buf := make([]byte, 6)
	if _, err := stdout.Read(buf); err != nil || string(buf[:5]) != "ready" {
		t.Fatalf("child did not start: %q %v", buf, err)
	}
	time.Sleep(150 * time.Millisecond)
	cmd.Process.Kill() // SIGKILL: no deferred code runs in the child
	cmd.Wait()

	b, err := os.ReadFile(path)
	must(t, err)
	rows, _ := checkCapture(t, b)
	if len(rows) == 0 {
		t.Fatal("no rows survived the kill")
	}
	w, ex, err := Append(path, t0.Add(24*time.Hour), nil)
	must(t, err)
	must(t, w.Row(ex.AtS+0.5, []float64{9, 9}))
	must(t, w.Close(nil))
	b, _ = os.ReadFile(path)
	rows2, _ := checkCapture(t, b)
	if b[len(b)-1] != '\n' || len(rows2) != len(rows)+1 {
		t.Fatalf("after append: %d rows (had %d), torn %d bytes", len(rows2), len(rows), ex.TornBytes)
	}
	t.Logf("killed after %d rows; %d torn bytes cut", len(rows), ex.TornBytes)
}

// TestKillChild is the child of TestKill9: it writes rows until it is killed, flushing
// small pieces often so that the kill is likely to cut a line.
func TestKillChild(t *testing.T) {
	path := os.Getenv("CAPTURE_KILL_CHILD")
	if path == "" {
		t.Skip("child process of TestKill9")
	}
	f, err := os.Create(path)
	must(t, err)
	w, err := NewWriter(f, testHeader(), nil)
	must(t, err)
	fmt.Println("ready")
	for i := 0; ; i++ {
		must(t, w.Row(float64(i)*1e-3, []float64{float64(i % 1000), 1}))
		if i%7 == 0 {
			// Write the buffer a few bytes at a time through the file, as a slow disk might.
			b := w.buf
			for len(b) > 0 {
				n := min(len(b), 5)
				f.Write(b[:n])
				b = b[n:]
			}
			w.written += int64(len(w.buf))
			w.buf = w.buf[:0]
		}
	}
}
