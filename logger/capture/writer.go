package capture

import (
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

// Default intervals of a Writer; see Options.
const (
	DefaultFlushEvery = time.Second
	DefaultSyncEvery  = 10 * time.Second
)

// bufLimit is the buffer size at which a Writer writes through without waiting for Tick.
const bufLimit = 64 << 10

// ErrTimeOrder is returned by Row for a time that is not later than the last row's (after
// rounding to the microsecond the file holds). The row is not written; the Writer goes on.
var ErrTimeOrder = errors.New("capture: row time is not after the previous row")

// ErrClosed is returned by a Writer used after Close.
var ErrClosed = errors.New("capture: writer is closed")

// WriteError is a failed write, flush, sync or truncate of the capture file. After one,
// the Writer refuses every further call with the same error; the file holds only whole
// lines up to the failure (a partial line is cut off again when the file allows it).
type WriteError struct {
	Path string // "" for a Writer made with NewWriter
	Op   string // "write", "sync", "truncate", "close"
	Err  error
}

func (e *WriteError) Error() string {
	if e.Path == "" {
		return fmt.Sprintf("capture: %s failed: %v", e.Op, e.Err)
	}
	return fmt.Sprintf("capture: %s %s failed: %v (the rows written before it are kept)", e.Op, e.Path, e.Err)
}

func (e *WriteError) Unwrap() error { return e.Err }

// Options set how a Writer behaves. The zero value (or nil) means the defaults.
type Options struct {
	Force         bool          // Create replaces an existing file; default false: refuse
	FlushEvery    time.Duration // Tick writes buffered rows out this often; default 1 s
	SyncEvery     time.Duration // Tick syncs the file to disk this often; default 10 s
	ValueDecimals int           // decimals of the values; default 5 (10 uV); time always has 6
}

func (o *Options) withDefaults() Options {
	var r Options
	if o != nil {
		r = *o
	}
	if r.FlushEvery <= 0 {
		r.FlushEvery = DefaultFlushEvery
	}
	if r.SyncEvery <= 0 {
		r.SyncEvery = DefaultSyncEvery
	}
	if r.ValueDecimals <= 0 {
		r.ValueDecimals = 5
	}
	return r
}

// sink is what a Writer writes to: a file, or any io.Writer. Sync and Truncate are used
// when the underlying writer has them.
type sink interface {
	io.Writer
}

type syncer interface{ Sync() error }
type truncater interface{ Truncate(size int64) error }

// Writer writes one capture file. It is not safe for concurrent use.
//
// Rows are buffered; Tick(now) flushes them when FlushEvery has passed since the last
// flush and syncs when SyncEvery has passed since the last sync, on the caller's clock.
// Call Tick at least a few times a second.
type Writer struct {
	path    string
	w       sink
	opt     Options
	ncol    int
	buf     []byte
	written int64 // bytes known to be in the file (whole lines)
	lastUS  int64 // time of the last row, microseconds; math.MinInt64 before the first
	rows    int64
	pending *Gap // a gap to write before the next row, its EndS set from that row

	lastFlush, lastSync time.Time
	dirtySync           bool
	err                 error
	closed              bool
}

// Create makes a new capture file at path and writes h's header block and the header
// row. It refuses an existing file (the error wraps fs.ErrExist) unless opt.Force is set.
func Create(path string, h *Header, opt *Options) (*Writer, error) {
	if err := checkHeader(h); err != nil {
		return nil, err
	}
	o := opt.withDefaults()
	flags := os.O_WRONLY | os.O_CREATE | os.O_EXCL
	if o.Force {
		flags = os.O_WRONLY | os.O_CREATE | os.O_TRUNC
	}
	f, err := os.OpenFile(path, flags, 0o644)
	if err != nil {
		return nil, fmt.Errorf("capture: create %s: %w", path, err)
	}
	w := newWriter(path, f, len(h.Channels), o)
	hh := *h
	if hh.Start.IsZero() {
		hh.Start = time.Now()
	}
	w.header(&hh)
	if err := w.flush(); err != nil {
		f.Close()
		return nil, err
	}
	return w, nil
}

// NewWriter writes a capture to any io.Writer (a file it does not own, a buffer in a
// test). If dst has Sync() error it is synced; if it has Truncate(int64) error a partial
// line left by a failed write is cut off. h.Start must be set.
func NewWriter(dst io.Writer, h *Header, opt *Options) (*Writer, error) {
	if err := checkHeader(h); err != nil {
		return nil, err
	}
	if h.Start.IsZero() {
		return nil, errors.New("capture: header has no start time")
	}
	w := newWriter("", dst, len(h.Channels), opt.withDefaults())
	w.header(h)
	if err := w.flush(); err != nil {
		return nil, err
	}
	return w, nil
}

func newWriter(path string, dst sink, ncol int, o Options) *Writer {
	return &Writer{path: path, w: dst, opt: o, ncol: ncol, buf: make([]byte, 0, bufLimit+512),
		lastUS: math.MinInt64}
}

func checkHeader(h *Header) error {
	if h == nil || len(h.Channels) == 0 {
		return errors.New("capture: header has no channels")
	}
	for i, c := range h.Channels {
		if c.Column == "" || strings.ContainsAny(c.Column, ", \t\r\n#") {
			return fmt.Errorf("capture: channel %d has a bad column name %q", i, c.Column)
		}
		if c.Divider < 0 || c.Divider > 1 {
			return fmt.Errorf("capture: channel %s: divider %g is not a ratio in (0, 1]", c.Column, c.Divider)
		}
	}
	if h.Channels[0].Column != ColVcap {
		return fmt.Errorf("capture: the first channel must be %s, not %s", ColVcap, h.Channels[0].Column)
	}
	return nil
}

func (w *Writer) header(h *Header) {
	w.meta(KeyFormat, FormatVersion)
	w.meta(KeyStart, h.Start.UTC().Format(TimeLayout))
	if h.Source != "" {
		w.meta(KeySource, h.Source)
	}
	if h.Board != "" {
		w.meta(KeyBoard, h.Board)
	}
	if h.Profile != "" {
		w.meta(KeyProfile, h.Profile)
	}
	for _, c := range h.Channels {
		w.meta(KeyChannel, fmt.Sprintf("%s adc=%d bits=%d ref_v=%s divider=%s scale=%s",
			c.Column, c.ADC, c.Bits, g(c.RefV), g(or1(c.Divider)), g(or1(c.Scale))))
	}
	for _, c := range h.Channels {
		from := c.CalFrom
		if from == "" {
			from = "none"
		}
		w.meta(KeyCalibration, fmt.Sprintf("%s gain=%s offset_v=%s from=%s",
			c.Column, g(or1(c.Gain)), g(c.OffsetV), from))
	}
	if h.Rates != "" {
		w.meta(KeyRates, h.Rates)
	}
	for _, n := range h.Notes {
		w.meta(KeyNote, n)
	}
	w.buf = append(w.buf, ColTime...)
	for _, c := range h.Channels {
		w.buf = append(w.buf, ',')
		w.buf = append(w.buf, c.Column...)
	}
	w.buf = append(w.buf, '\n')
}

func or1(x float64) float64 {
	if x == 0 {
		return 1
	}
	return x
}

func g(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// meta appends a "# key: value" line; newlines in value become spaces.
func (w *Writer) meta(key, value string) {
	w.buf = append(w.buf, "# "...)
	w.buf = append(w.buf, key...)
	w.buf = append(w.buf, ": "...)
	for i := 0; i < len(value); i++ {
		c := value[i]
		if c == '\n' || c == '\r' {
			c = ' '
		}
		w.buf = append(w.buf, c)
	}
	w.buf = append(w.buf, '\n')
}

func (w *Writer) usable() error {
	if w.err != nil {
		return w.err
	}
	if w.closed {
		return ErrClosed
	}
	return nil
}

// Row buffers one data row: timeS (seconds from the start, later than the last row) and
// one value per channel, in the header's order. A NaN value is written as an empty cell.
// It panics if len(values) differs from the number of channels (a programming error).
func (w *Writer) Row(timeS float64, values []float64) error {
	if err := w.usable(); err != nil {
		return err
	}
	if len(values) != w.ncol {
		panic(fmt.Sprintf("capture: Row got %d values for %d channels", len(values), w.ncol))
	}
	us := int64(math.Round(timeS * 1e6))
	if us <= w.lastUS || math.IsNaN(timeS) {
		return ErrTimeOrder
	}
	if w.pending != nil {
		p := *w.pending
		w.pending = nil
		p.EndS = float64(us) / 1e6
		w.gapLine(p)
	}
	w.lastUS = us
	w.buf = appendMicros(w.buf, us)
	for _, v := range values {
		w.buf = append(w.buf, ',')
		if !math.IsNaN(v) && !math.IsInf(v, 0) {
			w.buf = strconv.AppendFloat(w.buf, v, 'f', w.opt.ValueDecimals, 64)
		}
	}
	w.buf = append(w.buf, '\n')
	w.rows++
	if len(w.buf) >= bufLimit {
		return w.flush()
	}
	return nil
}

// appendMicros writes us microseconds as seconds with 6 decimals ("-0.000001", "12.500000").
func appendMicros(b []byte, us int64) []byte {
	if us < 0 {
		b = append(b, '-')
		us = -us
	}
	b = strconv.AppendInt(b, us/1e6, 10)
	frac := us % 1e6
	b = append(b, '.',
		byte('0'+frac/100000), byte('0'+frac/10000%10), byte('0'+frac/1000%10),
		byte('0'+frac/100%10), byte('0'+frac/10%10), byte('0'+frac%10))
	return b
}

// LastTime is the time of the last row written (or found by Append), in seconds, and
// false if there is none.
func (w *Writer) LastTime() (float64, bool) {
	if w.lastUS == math.MinInt64 {
		return 0, false
	}
	return float64(w.lastUS) / 1e6, true
}

// Rows is the number of rows this Writer has written.
func (w *Writer) Rows() int64 { return w.rows }

// Size is the size of the file in bytes, counting what is still buffered.
func (w *Writer) Size() int64 { return w.written + int64(len(w.buf)) }

// Path is the file's path ("" for NewWriter).
func (w *Writer) Path() string { return w.path }

// Err is the error that stopped the Writer, or nil.
func (w *Writer) Err() error { return w.err }

// Gap writes a gap line now. Use it for a gap whose end is known; see GapUntilNextRow.
func (w *Writer) Gap(gp Gap) error {
	if err := w.usable(); err != nil {
		return err
	}
	w.gapLine(gp)
	return nil
}

// GapUntilNextRow notes a gap that started at startS; its line is written just before
// the next row, with end_s set to that row's time (or at Close, ending at Trailer.EndS).
// A second call before the next row keeps the first start and adds the lost counts.
func (w *Writer) GapUntilNextRow(startS float64, reason string, lost int64) error {
	if err := w.usable(); err != nil {
		return err
	}
	if w.pending != nil {
		w.pending.Lost += lost
		return nil
	}
	w.pending = &Gap{StartS: startS, Reason: reason, Lost: lost}
	return nil
}

func (w *Writer) gapLine(gp Gap) {
	b := w.buf
	b = append(b, "# gap: start_s="...)
	b = appendMicros(b, int64(math.Round(gp.StartS*1e6)))
	b = append(b, " end_s="...)
	b = appendMicros(b, int64(math.Round(gp.EndS*1e6)))
	b = append(b, " reason="...)
	b = append(b, gp.Reason...)
	if gp.Lost != 0 {
		b = append(b, " lost="...)
		b = strconv.AppendInt(b, gp.Lost, 10)
	}
	w.buf = append(b, '\n')
}

// Reset writes a reset line and, if board is not "", the new identity as a board line.
func (w *Writer) Reset(r Reset, board string) error {
	if err := w.usable(); err != nil {
		return err
	}
	cause := r.Cause
	if cause == "" {
		cause = "unknown"
	}
	w.meta(KeyReset, fmt.Sprintf("at_s=%s cause=%s segment=%d",
		appendMicros(nil, int64(math.Round(r.AtS*1e6))), cause, r.Segment))
	if board != "" {
		w.meta(KeyBoard, board)
	}
	return nil
}

// Meta writes a "# key: value" line among the rows (an event of the caller's own). key
// must be a valid metadata key.
func (w *Writer) Meta(key, value string) error {
	if err := w.usable(); err != nil {
		return err
	}
	if !validKey(key) {
		return fmt.Errorf("capture: %q is not a metadata key", key)
	}
	w.meta(key, value)
	return nil
}

// Tick flushes if FlushEvery has passed since the last flush and syncs if SyncEvery has
// passed since the last sync. The first call only starts the clocks.
func (w *Writer) Tick(now time.Time) error {
	if err := w.usable(); err != nil {
		return err
	}
	if w.lastFlush.IsZero() {
		w.lastFlush, w.lastSync = now, now
		return nil
	}
	if now.Sub(w.lastFlush) >= w.opt.FlushEvery {
		w.lastFlush = now
		if err := w.flush(); err != nil {
			return err
		}
	}
	if now.Sub(w.lastSync) >= w.opt.SyncEvery {
		w.lastSync = now
		return w.Sync()
	}
	return nil
}

// Flush writes the buffered lines to the file (not necessarily to the disk).
func (w *Writer) Flush() error {
	if err := w.usable(); err != nil {
		return err
	}
	return w.flush()
}

// Sync flushes and then asks the file system to put the file on the disk.
func (w *Writer) Sync() error {
	if err := w.usable(); err != nil {
		return err
	}
	if err := w.flush(); err != nil {
		return err
	}
	if s, ok := w.w.(syncer); ok && w.dirtySync {
		if err := s.Sync(); err != nil {
			return w.fail("sync", err)
		}
	}
	w.dirtySync = false
	return nil
}

func (w *Writer) flush() error {
	if len(w.buf) == 0 {
		return nil
	}
	n, err := w.w.Write(w.buf)
	if err == nil && n < len(w.buf) {
		err = io.ErrShortWrite
	}
	if err != nil {
		// Keep the file whole lines only: cut a partial line the failed write left.
		whole := bytes.LastIndexByte(w.buf[:n], '\n') + 1
		w.written += int64(whole)
		if t, ok := w.w.(truncater); ok && whole < n {
			if terr := t.Truncate(w.written); terr != nil {
				err = errors.Join(err, terr)
			}
		}
		return w.fail("write", err)
	}
	w.written += int64(n)
	w.buf = w.buf[:0]
	w.dirtySync = true
	return nil
}

func (w *Writer) fail(op string, err error) error {
	w.err = &WriteError{Path: w.path, Op: op, Err: err}
	return w.err
}

// Trailer is what Close writes at the end of a clean recording.
type Trailer struct {
	End   time.Time // host time of the stop; zero leaves the end line out
	EndS  float64   // time_s of the stop: the end of a gap still open
	Stats *Stats    // nil leaves the stats line out
	Clock *Clock    // nil (or zero Points) leaves the clock line out
}

// Close writes t (if not nil) and any open gap, flushes, syncs and closes the file (if
// the Writer opened it). A second Close returns ErrClosed. After a WriteError, Close
// still closes the file and returns that error.
func (w *Writer) Close(t *Trailer) error {
	if w.closed {
		return ErrClosed
	}
	err := w.err
	if err == nil {
		if w.pending != nil && t != nil {
			p := *w.pending
			p.EndS = t.EndS
			w.pending = nil
			w.gapLine(p)
		}
		if t != nil {
			w.trailer(t)
		}
		err = w.Sync()
	}
	w.closed = true
	if c, ok := w.w.(*os.File); ok {
		if cerr := c.Close(); cerr != nil && err == nil {
			err = &WriteError{Path: w.path, Op: "close", Err: cerr}
		}
	}
	return err
}

func (w *Writer) trailer(t *Trailer) {
	if !t.End.IsZero() {
		w.meta(KeyEnd, t.End.UTC().Format(TimeLayout))
	}
	if s := t.Stats; s != nil {
		w.meta(KeyStats, fmt.Sprintf("samples=%d bad_frames=%d lost=%d gaps=%d overlap=%d",
			s.Samples, s.BadFrames, s.Lost, s.Gaps, s.Overlap))
	}
	if c := t.Clock; c != nil && c.Points > 0 {
		w.meta(KeyClock, fmt.Sprintf("drift_ppm=%s fit_s=%s points=%d",
			strconv.FormatFloat(c.DriftPPM, 'f', 3, 64), strconv.FormatFloat(c.FitS, 'f', 3, 64), c.Points))
	}
}
