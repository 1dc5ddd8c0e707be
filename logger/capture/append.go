package capture

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
	"time"
)

// Existing describes the file Append continues.
type Existing struct {
	Start     time.Time // the file's start time (time_s = 0)
	Columns   []string  // the header row, time_s first
	LastS     float64   // time of the last whole data row; meaningful if HasRows
	HasRows   bool      // the file holds at least one whole data row
	TornBytes int64     // bytes of a cut last line that Append removed
	AtS       float64   // time_s of the append line: now - Start, but after LastS
}

// Append reopens the capture at path to continue it: it cuts a torn last line (one with
// no final "\n", left by a crash), reads the start time, the columns and the last row's
// time, writes "# append: at=NOW at_s=T" and notes a "stopped" gap from the last row to
// the first new one. Rows then continue on the same time axis: a caller stamps them
// NOW-relative from Existing.Start, and they must come after Existing.AtS.
//
// The file must be one of ours (a "start" line and a time_s column first).
func Append(path string, now time.Time, opt *Options) (*Writer, *Existing, error) {
	f, err := os.OpenFile(path, os.O_RDWR, 0)
	if err != nil {
		return nil, nil, fmt.Errorf("capture: append %s: %w", path, err)
	}
	ex, size, err := repair(f)
	if err != nil {
		f.Close()
		return nil, nil, fmt.Errorf("capture: append %s: %w", path, err)
	}
	if _, err := f.Seek(size, io.SeekStart); err != nil {
		f.Close()
		return nil, nil, fmt.Errorf("capture: append %s: %w", path, err)
	}
	w := newWriter(path, f, len(ex.Columns)-1, opt.withDefaults())
	w.written = size
	at := now.Sub(ex.Start).Seconds()
	if ex.HasRows {
		w.lastUS = int64(math.Round(ex.LastS * 1e6))
		if at*1e6 <= float64(w.lastUS) {
			at = float64(w.lastUS+1) / 1e6
		}
		w.pending = &Gap{StartS: ex.LastS, Reason: GapStopped}
	}
	ex.AtS = at
	w.meta(KeyAppend, fmt.Sprintf("at=%s at_s=%s", now.UTC().Format(TimeLayout),
		appendMicros(nil, int64(math.Round(at*1e6)))))
	if err := w.flush(); err != nil {
		f.Close()
		return nil, nil, err
	}
	return w, ex, nil
}

// Inspect reads what Append would continue, without changing the file: its start, its
// columns, its last whole row and the size of a torn last line. AtS is left 0.
func Inspect(path string) (*Existing, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("capture: inspect %s: %w", path, err)
	}
	defer f.Close()
	ex, _, err := examine(f)
	if err != nil {
		return nil, fmt.Errorf("capture: inspect %s: %w", path, err)
	}
	return ex, nil
}

// examine reads what Append needs from f; whole is the size up to the last "\n".
func examine(f *os.File) (ex *Existing, whole int64, err error) {
	st, err := f.Stat()
	if err != nil {
		return nil, 0, err
	}
	size := st.Size()
	if whole, err = lastNewline(f, size); err != nil {
		return nil, 0, err
	}
	ex = &Existing{TornBytes: size - whole}
	if err := readHead(io.NewSectionReader(f, 0, whole), ex); err != nil {
		return nil, 0, err
	}
	if err := readLastRow(f, whole, ex); err != nil {
		return nil, 0, err
	}
	return ex, whole, nil
}

// repair cuts a torn last line off f and reads what Append needs. It returns the new size.
func repair(f *os.File) (*Existing, int64, error) {
	ex, whole, err := examine(f)
	if err != nil {
		return nil, 0, err
	}
	if ex.TornBytes > 0 {
		if err := f.Truncate(whole); err != nil {
			return nil, 0, fmt.Errorf("cutting the torn last line: %w", err)
		}
	}
	return ex, whole, nil
}

// lastNewline returns the offset just past the last "\n" in the first size bytes of f
// (0 if there is none).
func lastNewline(f io.ReaderAt, size int64) (int64, error) {
	buf := make([]byte, 64<<10)
	for end := size; end > 0; {
		start := max(0, end-int64(len(buf)))
		b := buf[:end-start]
		if _, err := f.ReadAt(b, start); err != nil && !errors.Is(err, io.EOF) {
			return 0, err
		}
		if i := bytes.LastIndexByte(b, '\n'); i >= 0 {
			return start + int64(i) + 1, nil
		}
		end = start
	}
	return 0, nil
}

func readHead(r io.Reader, ex *Existing) error {
	br := bufio.NewReader(r)
	for line := 1; ; line++ {
		s, err := br.ReadString('\n')
		if err != nil {
			return errors.New("no header row (the file ends in its comment block)")
		}
		s = strings.TrimRight(s, "\r\n")
		if s == "" {
			continue
		}
		if s[0] == '#' {
			if k, v, ok := ParseComment(s); ok && k == KeyStart && ex.Start.IsZero() {
				t, err := time.Parse(time.RFC3339Nano, v)
				if err != nil {
					return fmt.Errorf("line %d: start %q is not an RFC 3339 time", line, v)
				}
				ex.Start = t
			}
			continue
		}
		ex.Columns = strings.Split(s, ",")
		if ex.Columns[0] != ColTime || len(ex.Columns) < 2 {
			return fmt.Errorf("line %d: header row %q does not start with %s and a channel", line, s, ColTime)
		}
		if ex.Start.IsZero() {
			return errors.New("no start line before the header row")
		}
		return nil
	}
}

// readLastRow finds the last whole data row in f[:size] and reads its time.
func readLastRow(f io.ReaderAt, size int64, ex *Existing) error {
	const chunk = 64 << 10
	var tail []byte // whole lines from some offset to size
	for end := size; end > 0; {
		start := max(0, end-chunk)
		b := make([]byte, end-start, int(end-start)+len(tail))
		if _, err := f.ReadAt(b, start); err != nil && !errors.Is(err, io.EOF) {
			return err
		}
		tail = append(b, tail...)
		end = start
		// Look at the lines that are complete in tail (the first may be cut unless start is 0).
		lines := bytes.Split(bytes.TrimSuffix(tail, []byte("\n")), []byte("\n"))
		first := 1
		if start == 0 {
			first = 0
		}
		for i := len(lines) - 1; i >= first; i-- {
			l := bytes.TrimRight(lines[i], "\r")
			if len(l) == 0 || l[0] == '#' {
				continue
			}
			cell, _, _ := bytes.Cut(l, []byte(","))
			if string(cell) == ColTime {
				return nil // reached the header row: no data rows
			}
			t, err := strconv.ParseFloat(string(cell), 64)
			if err != nil {
				return fmt.Errorf("last row %q: time is not a number", l)
			}
			ex.LastS, ex.HasRows = t, true
			return nil
		}
		if len(tail) > 4<<20 {
			return errors.New("no data row in the last 4 MiB")
		}
	}
	return nil
}
