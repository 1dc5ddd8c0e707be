package capture

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"
)

// TimeFormat says how the time column is written.
type TimeFormat int

const (
	// TimeAuto decides from the first data row: a number means seconds, anything that
	// parses as RFC 3339 means timestamps.
	TimeAuto TimeFormat = iota
	// TimeSeconds: the time column holds seconds (times the column's unit factor).
	TimeSeconds
	// TimeRFC3339: the time column holds RFC 3339 timestamps ("2026-12-01T09:30:00.25Z",
	// a space instead of the "T" is accepted); times become seconds from the first row.
	TimeRFC3339
)

func (f TimeFormat) String() string {
	switch f {
	case TimeSeconds:
		return "seconds"
	case TimeRFC3339:
		return "rfc3339"
	}
	return "auto"
}

// ParseTimeFormat turns "seconds", "rfc3339" or "" / "auto" into a TimeFormat.
func ParseTimeFormat(s string) (TimeFormat, error) {
	switch strings.ToLower(s) {
	case "", "auto":
		return TimeAuto, nil
	case "seconds", "s":
		return TimeSeconds, nil
	case "rfc3339":
		return TimeRFC3339, nil
	}
	return TimeAuto, fmt.Errorf("capture: unknown time format %q (want seconds or rfc3339)", s)
}

// Errors a Reader reports, each inside a *ParseError that says where.
var (
	ErrEmpty         = errors.New("empty file: no header row")
	ErrNoRows        = errors.New("no data rows after the header row")
	ErrBinary        = errors.New("binary data, not a text CSV")
	ErrLineTooLong   = errors.New("line too long")
	ErrMissingColumn = errors.New("missing column")
	ErrFieldCount    = errors.New("row has the wrong number of fields")
	ErrNotNumber     = errors.New("not a number")
	ErrNotFinite     = errors.New("not a finite number (NaN or Inf)")
	ErrEmptyCell     = errors.New("empty cell")
	ErrBadTime       = errors.New("not a time")
	ErrTimeBackwards = errors.New("time goes backwards")
	ErrDuplicateTime = errors.New("duplicate time")
	// ErrTimeRange: a time stamp whose whole part has more than 18 digits (in the time
	// column's unit) cannot be held to the resolution of its own text.
	ErrTimeRange = errors.New("time stamp too large to keep its resolution (more than 18 digits before the point)")
)

// Warnings a Reader reports (see Warnings), each inside a *ParseError that says where.
// The reader goes on after a warning; what it could not use is named in the warning.
var (
	// ErrBadMeta: a "# start:", "# gap:" or "# reset:" line whose value is not what
	// FORMAT.md says; the line is not used (a gap with a bad "lost" field is kept
	// without it).
	ErrBadMeta = errors.New("malformed metadata line")
	// ErrTornLine: the last line of the file has no line end: a row (or metadata line)
	// cut short by a writer that stopped mid-line. It is dropped, never read as a
	// truncated number.
	ErrTornLine = errors.New("last line has no line end (cut short): dropped")
)

// MaxWarnings is how many warnings a Reader keeps; WarningCount counts them all.
const MaxWarnings = 100

// originMin is the size of the first time stamp, in the time column's unit, from which
// the reader subtracts a time origin (see Reader.OriginS). Below it a float64 holds a
// time stamp to better than a nanosecond (2^-33 s at 10^6 s: 53 bits of mantissa).
const originMin = 1e6

// ParseError is bad input at a place in a file. Line and Column count from 1; Column is
// the byte position of the field (0 when the whole line or file is at fault).
type ParseError struct {
	File   string
	Line   int
	Column int
	Field  string // the offending text, shortened; may be empty
	Err    error
}

func (e *ParseError) Error() string {
	name := e.File
	if name == "" {
		name = "input"
	}
	pos := fmt.Sprintf("%s:%d", name, e.Line)
	if e.Column > 0 {
		pos += fmt.Sprintf(":%d", e.Column)
	}
	msg := "capture: " + pos + ": " + e.Err.Error()
	if e.Field != "" {
		msg += fmt.Sprintf(" (%q)", e.Field)
	}
	return msg
}

func (e *ParseError) Unwrap() error { return e.Err }

// Reader reads the time and storage-capacitor voltage of a capture file or of a foreign
// CSV, in batches into buffers the caller owns. It parses numbers itself (no per-row
// allocation), finds the columns by name, sniffs the delimiter, keeps the metadata and
// the gap and reset events, and checks every row: times must be finite and strictly
// increasing, volts finite. It never writes anything.
//
// Set the exported option fields before the first call to Read; their zero values are
// the defaults.
//
//	r := capture.NewReader(f, "day.csv")
//	t, v := make([]float64, 4096), make([]float64, 4096)
//	for {
//		n, err := r.Read(t, v)
//		use(t[:n], v[:n])
//		if err == io.EOF { break }
//		if err != nil { return err }
//	}
type Reader struct {
	// Name is the file name used in errors. Default "input".
	Name string
	// TimeCol names the time column, or gives its 1-based position ("1"). Default: the
	// column "time_s", else the first whose name starts with "time" or is "t".
	TimeCol string
	// VoltCol names the voltage column or gives its 1-based position. Default: "vcap_v",
	// else the first column starting with "vcap", else "v", "volt", "voltage".
	VoltCol string
	// VoltScale multiplies the voltage column (1e-3 for millivolts). Default: from the
	// column name's unit ("vcap_mv", "voltage (mV)", "[uV]"), else 1.
	VoltScale float64
	// TimeScale multiplies a time column of seconds-like numbers (1e-3 for milliseconds).
	// Default: from the column name's unit ("time_ms", "t (min)"), else 1.
	TimeScale float64
	// TimeFormat: TimeAuto (default), TimeSeconds or TimeRFC3339.
	TimeFormat TimeFormat
	// CurrentCol names the load-current column (amperes) or gives its 1-based position,
	// for ReadCurrent. Default: the column "iload_a", else the first whose name starts
	// with "iload" (its unit from the name: "iload_ma"); none when there is no such
	// column. "none" ignores a current column.
	CurrentCol string
	// Comma is the field delimiter: ',', ';' or '\t'. Default: sniffed from the header row.
	// When it is not ',', a decimal comma ("2,415") is accepted in numbers.
	Comma byte

	br      *bufio.Reader
	started bool
	done    bool
	line    int
	nbytes  int64
	rows    int
	meta    map[string]string
	metaAll []Field
	columns []string
	tcol    int
	vcol    int
	icol    int // -1: no current column
	iscale  float64
	ncol    int
	decimal byte
	lastT   float64
	t0      time.Time
	haveT0  bool
	ours    bool
	torn    bool
	gaps    []Gap
	resets  []Reset
	lost    int64

	gapText   [][2]string // the start_s and end_s text of each gap, to re-read at the origin
	resetText []string    // the at_s text of each reset
	originSet bool        // the first time stamp has been seen
	origin    int64       // subtracted from the time column's whole part (its unit)
	originS   float64     // origin in seconds
	originW   int64       // origin in seconds: whole part (exact when the unit allows) ...
	originF   float64     // ... and the rest
	originX   bool        // originW and originF are exact
	warnings  []*ParseError
	nwarn     int
}

// NewReader returns a Reader on r; name is used in errors.
func NewReader(r io.Reader, name string) *Reader {
	return &Reader{Name: name, br: bufio.NewReaderSize(r, maxLineBytes)}
}

// Meta returns the metadata lines ("# key: value") seen so far, the first value of each
// key. All of them, repeats included, are in MetaFields.
func (r *Reader) Meta() map[string]string { return r.meta }

// MetaFields returns every metadata line seen so far as key and value, in file order,
// except gap and reset lines (see Gaps and Resets).
func (r *Reader) MetaFields() []Field { return r.metaAll }

// Columns returns the header row's column names.
func (r *Reader) Columns() []string { return r.columns }

// Gaps returns the gap lines seen so far.
func (r *Reader) Gaps() []Gap { return r.gaps }

// Resets returns the board reset lines seen so far.
func (r *Reader) Resets() []Reset { return r.resets }

// Lost is the total of the gap lines' "lost" samples seen so far.
func (r *Reader) Lost() int64 { return r.lost }

// Rows is the number of data rows returned so far.
func (r *Reader) Rows() int { return r.rows }

// Line is the number of the last line read.
func (r *Reader) Line() int { return r.line }

// Offset is the number of bytes read so far (for progress).
func (r *Reader) Offset() int64 { return r.nbytes }

// Torn reports that the last line had no line end and was dropped as a cut-short row
// (a warning with ErrTornLine says so too).
func (r *Reader) Torn() bool { return r.torn }

// Warnings returns the problems seen so far that did not stop the reading, in file
// order, each a *ParseError with the file, line and what was expected (errors.Is
// ErrBadMeta or ErrTornLine): malformed "start", "gap" and "reset" lines, and a last
// line cut short. At most MaxWarnings are kept; WarningCount counts them all. A caller
// prints them; nothing in them was used as data.
func (r *Reader) Warnings() []*ParseError { return r.warnings }

// WarningCount is the number of warnings seen so far, including those beyond
// MaxWarnings that were not kept.
func (r *Reader) WarningCount() int { return r.nwarn }

// OriginS is the time origin, in seconds, that the reader subtracted from every time
// stamp (data rows, gap and reset lines): 0 unless the first time stamp is 10^6 or more
// (in the time column's unit; e.g. epoch seconds or milliseconds). Then it is the whole
// part of the first time stamp, subtracted digit by digit before the conversion to
// float64, so that Read returns seconds from the origin with the resolution the file
// was written with (a float64 of 10^15 s would hold only 1/8 s). Add OriginS back for
// display; Start already includes it. Known after the first row.
func (r *Reader) OriginS() float64 { return r.originS }

func (r *Reader) warn(err error, text []byte) {
	r.nwarn++
	if len(r.warnings) >= MaxWarnings {
		return
	}
	pe, _ := r.errf(0, text, err).(*ParseError)
	r.warnings = append(r.warnings, pe)
}

// Start returns the wall-clock time of t = 0 as Read returns it: the "start" metadata
// plus OriginS, else the first RFC 3339 timestamp; ok is false when there is neither (or
// the sum is beyond the year 30000).
func (r *Reader) Start() (time.Time, bool) {
	if s, ok := r.meta[KeyStart]; ok {
		if t, err := time.Parse(time.RFC3339Nano, s); err == nil {
			if r.originS == 0 {
				return t, true
			}
			if math.Abs(r.originS) > 1e12 {
				return time.Time{}, false
			}
			sec := math.Floor(r.originS)
			return time.Unix(t.Unix()+int64(sec), int64(t.Nanosecond())+int64((r.originS-sec)*1e9)).UTC(), true
		}
	}
	return r.t0, r.haveT0
}

func (r *Reader) errf(col int, field []byte, err error) error {
	f := string(field)
	if len(f) > 24 {
		f = f[:24] + "..."
	}
	if bytes.ContainsFunc(field, func(c rune) bool { return c < 0x20 || c == 0x7f || c == 0xfffd }) {
		f = ""
	}
	return &ParseError{File: r.Name, Line: r.line, Column: col, Field: f, Err: err}
}

// maxLineBytes is the longest line a Reader takes, line end included.
const maxLineBytes = 1 << 16

// sep is the field separator in use: the Comma option, else a comma (before the header
// row has been sniffed).
func (r *Reader) sep() byte {
	if r.Comma != 0 {
		return r.Comma
	}
	return ','
}

// nextLine returns the next line without its line end, whether it had one, and io.EOF
// at the end. The slice is valid until the next call.
func (r *Reader) nextLine() (line []byte, complete bool, err error) {
	line, err = r.br.ReadSlice('\n')
	r.nbytes += int64(len(line))
	if err == bufio.ErrBufferFull {
		r.line++
		// The column where the limit was reached, counted in the fields read so far.
		col := 1 + bytes.Count(line, []byte{r.sep()})
		return nil, false, r.errf(col, nil, fmt.Errorf("%w: over %d bytes without a line end (the limit of a row; a file without line breaks, or a binary file?)", ErrLineTooLong, maxLineBytes))
	}
	if err != nil && err != io.EOF {
		return nil, false, fmt.Errorf("capture: %s: %w", r.Name, err)
	}
	if len(line) == 0 && err == io.EOF {
		return nil, false, io.EOF
	}
	r.line++
	complete = err == nil
	if n := len(line); n > 0 && line[n-1] == '\n' {
		line = line[:n-1]
	}
	if n := len(line); n > 0 && line[n-1] == '\r' {
		line = line[:n-1]
	}
	return line, complete, nil
}

// checkText rejects control bytes other than tab (a binary file).
func (r *Reader) checkText(line []byte) error { return r.checkTextAt(line, 1) }

// checkTextAt is checkText for a field that starts at column col.
func (r *Reader) checkTextAt(line []byte, col int) error {
	for i, c := range line {
		if (c < 0x20 && c != '\t') || c == 0x7f {
			return r.errf(col+i, nil, ErrBinary)
		}
	}
	return nil
}

func (r *Reader) comment(line []byte, header bool) {
	key, value, ok := ParseComment(string(line))
	if !ok {
		return
	}
	if r.meta == nil {
		r.meta = map[string]string{}
	}
	switch key {
	case KeyGap:
		r.gapLine(line, value)
		return
	case KeyReset:
		r.resetLine(line, value)
		return
	case KeyFormat:
		r.ours = strings.HasPrefix(value, "capcycle.capture/")
	case KeyStart:
		if _, err := time.Parse(time.RFC3339Nano, value); err != nil {
			r.warn(fmt.Errorf("%w: start: %q is not a time; want RFC 3339 in UTC, e.g. 2026-12-01T09:30:00.000000Z", ErrBadMeta, value), line)
			return
		}
	}
	if _, dup := r.meta[key]; !dup {
		r.meta[key] = value
	}
	r.metaAll = append(r.metaAll, Field{key, value})
}

const (
	gapWant   = "want start_s=T0 end_s=T1 reason=R [lost=N]"
	resetWant = "want at_s=T cause=C segment=N"
)

// gapLine reads a gap line; a malformed one is a warning and is not used.
func (r *Reader) gapLine(line []byte, value string) {
	_, fs := ParseFields(value)
	st, _ := Lookup(fs, "start_s")
	en, _ := Lookup(fs, "end_s")
	var g Gap
	var ok bool
	if g.StartS, ok = r.eventTime(st); !ok {
		r.warn(fmt.Errorf("%w: gap: start_s %q is not a time in seconds; %s", ErrBadMeta, st, gapWant), line)
		return
	}
	if g.EndS, ok = r.eventTime(en); !ok {
		r.warn(fmt.Errorf("%w: gap: end_s %q is not a time in seconds; %s", ErrBadMeta, en, gapWant), line)
		return
	}
	if g.EndS < g.StartS {
		r.warn(fmt.Errorf("%w: gap: end_s %s is before start_s %s; %s", ErrBadMeta, en, st, gapWant), line)
		return
	}
	g.Reason, _ = Lookup(fs, "reason")
	if g.Reason == "" {
		r.warn(fmt.Errorf("%w: gap: no reason; %s (the gap is kept)", ErrBadMeta, gapWant), line)
	}
	if s, has := Lookup(fs, "lost"); has {
		n, err := strconv.ParseInt(s, 10, 64)
		if err != nil || n < 0 {
			r.warn(fmt.Errorf("%w: gap: lost %q is not a count of samples; %s (the gap is kept without it)", ErrBadMeta, s, gapWant), line)
		} else {
			g.Lost = n
			r.lost += n
		}
	}
	r.gaps = append(r.gaps, g)
	r.gapText = append(r.gapText, [2]string{st, en})
}

// resetLine reads a reset line; one without a readable at_s is a warning and is not used.
func (r *Reader) resetLine(line []byte, value string) {
	_, fs := ParseFields(value)
	at, _ := Lookup(fs, "at_s")
	var s Reset
	var ok bool
	if s.AtS, ok = r.eventTime(at); !ok {
		r.warn(fmt.Errorf("%w: reset: at_s %q is not a time in seconds; %s", ErrBadMeta, at, resetWant), line)
		return
	}
	s.Cause, _ = Lookup(fs, "cause")
	if seg, has := Lookup(fs, "segment"); has {
		n, err := strconv.Atoi(seg)
		if err != nil || n < 1 {
			r.warn(fmt.Errorf("%w: reset: segment %q is not a segment number (1, 2, ...); %s (the reset is kept without it)", ErrBadMeta, seg, resetWant), line)
		} else {
			s.Segment = n
		}
	}
	r.resets = append(r.resets, s)
	r.resetText = append(r.resetText, at)
}

// eventTime reads the seconds of a gap or reset field, less the time origin.
func (r *Reader) eventTime(s string) (float64, bool) {
	x, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
		return 0, false
	}
	if r.origin == 0 {
		return x, true
	}
	if r.originX {
		if ip, frac, ok := splitDecimal([]byte(s), '.', x); ok {
			return float64(ip-r.originW) + (frac - r.originF), true
		}
	}
	return x - r.originS, true
}

// setOrigin fixes the time origin from the first time stamp (field g, value x in the
// column's unit) and re-reads the events seen before it.
func (r *Reader) setOrigin(g []byte, x float64, col int) error {
	r.originSet = true
	if math.Abs(x) < originMin {
		return nil
	}
	ip, _, ok := splitDecimal(g, r.decimalFor(), x)
	if !ok {
		return r.errf(col, g, ErrTimeRange)
	}
	r.origin, r.originS = ip, float64(ip)*r.TimeScale
	// The origin in whole seconds and a rest, exactly, for the events (in seconds):
	// for a unit of a whole number of seconds or a power-of-ten fraction of one.
	switch sc := r.TimeScale; {
	case sc >= 1 && sc == math.Trunc(sc) && math.Abs(float64(ip))*sc < 9e18:
		r.originW, r.originX = ip*int64(sc), true
	case sc == 1e-3 || sc == 1e-6:
		div := int64(math.Round(1 / sc))
		r.originW, r.originF, r.originX = ip/div, float64(ip%div)*sc, true
	}
	for i, tx := range r.gapText {
		r.gaps[i].StartS, _ = r.eventTime(tx[0])
		r.gaps[i].EndS, _ = r.eventTime(tx[1])
	}
	for i, tx := range r.resetText {
		r.resets[i].AtS, _ = r.eventTime(tx)
	}
	return nil
}

// start reads the comment block and the header row and maps the columns.
func (r *Reader) start() error {
	r.started = true
	if r.Name == "" {
		r.Name = "input"
	}
	var line []byte
	for {
		l, _, err := r.nextLine()
		if err == io.EOF {
			r.line++
			return r.errf(0, nil, ErrEmpty)
		}
		if err != nil {
			return err
		}
		if r.line == 1 {
			l = bytes.TrimPrefix(l, []byte("\xef\xbb\xbf")) // a byte-order mark, as spreadsheets write
		}
		if err := r.checkText(l); err != nil {
			return err
		}
		if len(bytes.TrimSpace(l)) == 0 {
			continue
		}
		if l[0] == '#' {
			r.comment(l, true)
			continue
		}
		line = l
		break
	}
	if r.Comma == 0 {
		r.Comma = sniffComma(line)
	}
	r.decimal = '.'
	var names []string
	for f := range splitFields(line, r.Comma) {
		names = append(names, strings.ToLower(string(unquote(bytes.TrimSpace(f)))))
	}
	r.columns = names
	r.ncol = len(names)
	var tunit, vunit float64
	var err error
	r.tcol, tunit, err = r.pickColumn(r.TimeCol, names, "time", isTimeName)
	if err != nil {
		return err
	}
	r.vcol, vunit, err = r.pickColumn(r.VoltCol, names, "volt", isVoltName)
	if err != nil {
		return err
	}
	if r.tcol == r.vcol {
		return r.errf(0, nil, fmt.Errorf("%w: time and volt are the same column %d", ErrMissingColumn, r.tcol+1))
	}
	r.icol = -1
	if c := strings.ToLower(r.CurrentCol); c != "none" {
		has := c != ""
		for _, n := range names {
			has = has || isCurrentName(n)
		}
		if has {
			r.icol, r.iscale, err = r.pickColumn(r.CurrentCol, names, "current", isCurrentName)
			if err != nil {
				return err
			}
			if r.icol == r.tcol || r.icol == r.vcol {
				return r.errf(0, nil, fmt.Errorf("%w: the current column %d is also the time or volt column", ErrMissingColumn, r.icol+1))
			}
		}
	}
	if r.TimeScale == 0 {
		r.TimeScale = tunit
	}
	if r.VoltScale == 0 {
		r.VoltScale = vunit
	}
	return nil
}

// pickColumn finds a column by the option value, or by the default rule.
func (r *Reader) pickColumn(opt string, names []string, what string, match func(string) bool) (int, float64, error) {
	if opt != "" {
		if k, err := strconv.Atoi(opt); err == nil {
			if k < 1 || k > len(names) {
				return 0, 0, r.errf(0, nil, fmt.Errorf("%w: %s column %d, the header has %d", ErrMissingColumn, what, k, len(names)))
			}
			return k - 1, unitFactor(names[k-1]), nil
		}
		want := strings.ToLower(opt)
		for i, n := range names {
			if n == want {
				return i, unitFactor(n), nil
			}
		}
		return 0, 0, r.errf(0, nil, fmt.Errorf("%w: no %s column %q in the header", ErrMissingColumn, what, opt))
	}
	for i, n := range names {
		if match(n) {
			return i, unitFactor(n), nil
		}
	}
	want := ColTime
	if what == "volt" {
		want = ColVcap
	}
	return 0, 0, r.errf(0, nil, fmt.Errorf("%w: no %s column in the header (want %q, or name one)", ErrMissingColumn, what, want))
}

// ColIload is the load-current column of the design's capture contract, amperes.
const ColIload = "iload_a"

// isCurrentName accepts iload_a and the like with a unit of current: "iload_ma",
// "iload (uA)"; not "iload_v", a voltage.
func isCurrentName(n string) bool {
	if !strings.HasPrefix(n, "iload") {
		return false
	}
	switch unitSuffix(n) {
	case "a", "ma", "ua", "µa":
		return true
	}
	return false
}

func isTimeName(n string) bool {
	return n == ColTime || n == "t" || strings.HasPrefix(n, "time") || strings.HasPrefix(n, "t_") ||
		strings.HasPrefix(n, "t (") || strings.HasPrefix(n, "t [")
}

func isVoltName(n string) bool {
	return n == ColVcap || strings.HasPrefix(n, "vcap") || n == "v" || strings.HasPrefix(n, "v_") ||
		strings.HasPrefix(n, "v (") || strings.HasPrefix(n, "v [") || strings.HasPrefix(n, "volt")
}

// unitSuffix returns the unit at the end of a column name ("_mv", "(ms)", "[uV]"), lower
// case, or "" when it has none.
func unitSuffix(name string) string {
	n := strings.ToLower(strings.TrimSpace(name))
	if strings.HasSuffix(n, ")") || strings.HasSuffix(n, "]") {
		i := strings.LastIndexAny(n, "([")
		if i < 0 {
			return ""
		}
		return strings.TrimSpace(n[i+1 : len(n)-1])
	}
	if i := strings.LastIndexByte(n, '_'); i >= 0 {
		return n[i+1:]
	}
	return ""
}

// unitFactor reads the unit at the end of a column name: "_mv", "(ms)", "[uV]".
func unitFactor(name string) float64 {
	switch unitSuffix(name) {
	case "mv", "ms", "ma":
		return 1e-3
	case "uv", "µv", "us", "µs", "ua", "µa":
		return 1e-6
	case "min":
		return 60
	case "h":
		return 3600
	}
	return 1
}

func sniffComma(line []byte) byte {
	best, n := byte(','), bytes.Count(line, []byte{','})
	for _, c := range []byte{';', '\t'} {
		if k := bytes.Count(line, []byte{c}); k > n {
			best, n = c, k
		}
	}
	return best
}

func unquote(b []byte) []byte {
	if len(b) >= 2 && b[0] == '"' && b[len(b)-1] == '"' {
		return b[1 : len(b)-1]
	}
	return b
}

// splitFields yields the fields of line split at comma.
func splitFields(line []byte, comma byte) func(func([]byte) bool) {
	return func(yield func([]byte) bool) {
		for {
			i := bytes.IndexByte(line, comma)
			if i < 0 {
				yield(line)
				return
			}
			if !yield(line[:i]) {
				return
			}
			line = line[i+1:]
		}
	}
}

// Read fills t and v (the shorter of the two sets the batch size) with the next rows:
// t in seconds from the start, v in volts. It returns the number of rows filled and
// io.EOF after the last row (possibly with n > 0), or a *ParseError for bad input.
func (r *Reader) Read(t, v []float64) (int, error) { return r.read(t, v, nil) }

// ReadCurrent is Read that also fills i with the load current in amperes, when the
// capture has a current column (see CurrentCol and HasCurrent; else i is left alone). An
// empty current cell (not sampled in that row) reads as NaN; any other bad current cell
// is a *ParseError like a bad volt.
func (r *Reader) ReadCurrent(t, v, i []float64) (int, error) { return r.read(t, v, i) }

// HasCurrent reports whether the capture has a load-current column. It is known after
// the first Read or ReadCurrent.
func (r *Reader) HasCurrent() bool { return r.started && r.icol >= 0 }

func (r *Reader) read(t, v, cur []float64) (int, error) {
	if r.done {
		return 0, io.EOF
	}
	if !r.started {
		if err := r.start(); err != nil {
			r.done = true
			return 0, err
		}
	}
	max := min(len(t), len(v))
	if cur != nil && r.icol >= 0 {
		max = min(max, len(cur))
	}
	n := 0
	for n < max {
		line, complete, err := r.nextLine()
		if err == io.EOF {
			r.done = true
			if r.rows == 0 && n == 0 {
				r.line++
				return 0, r.errf(0, nil, ErrNoRows)
			}
			return n, io.EOF
		}
		if err != nil {
			r.done = true
			return n, err
		}
		if !complete && len(bytes.TrimSpace(line)) > 0 {
			// The last line has no line end: cut short by a writer that stopped
			// mid-line (killed, or a full disk). Whatever it holds may be a truncated
			// number ("2.41" of "2.41513"), so it is dropped, with a warning. Our
			// writer ends every line; a foreign file that omits the last line end
			// loses that row, and the warning says so.
			r.torn = true
			if err := r.checkText(line); err != nil {
				r.done = true
				return n, err
			}
			r.warn(ErrTornLine, line)
			continue
		}
		if len(line) == 0 || line[0] == '#' {
			if err := r.checkText(line); err != nil {
				r.done = true
				return n, err
			}
			if len(line) > 0 {
				r.comment(line, false)
			}
			continue
		}
		tt, vv, ii, err := r.row(line)
		if err != nil {
			r.done = true
			return n, err
		}
		if r.rows > 0 || n > 0 {
			if tt < r.lastT {
				r.done = true
				return n, r.errf(r.fieldCol(line, r.tcol), fieldAt(line, r.Comma, r.tcol), ErrTimeBackwards)
			}
			if tt == r.lastT {
				r.done = true
				return n, r.errf(r.fieldCol(line, r.tcol), fieldAt(line, r.Comma, r.tcol), ErrDuplicateTime)
			}
		}
		r.lastT = tt
		t[n], v[n] = tt, vv
		if cur != nil && r.icol >= 0 {
			cur[n] = ii
		}
		n++
		r.rows++
	}
	return n, nil
}

// fieldCol returns the 1-based byte column where field k of line starts.
func (r *Reader) fieldCol(line []byte, k int) int {
	col := 1
	for i := 0; i < k; i++ {
		j := bytes.IndexByte(line[col-1:], r.Comma)
		if j < 0 {
			return len(line) + 1
		}
		col += j + 1
	}
	return col
}

func fieldAt(line []byte, comma byte, k int) []byte {
	i := 0
	for f := range splitFields(line, comma) {
		if i == k {
			return f
		}
		i++
	}
	return nil
}

// row parses the time, volt and (when there is one) current fields of one data row.
func (r *Reader) row(line []byte) (t, v, i float64, err error) {
	var tf, vf, cf []byte
	tc, vc, cc := 0, 0, 0
	need := max(r.tcol, r.vcol, r.icol)
	k, pos := 0, 0
	for k <= need {
		j := bytes.IndexByte(line[pos:], r.Comma)
		end := len(line)
		if j >= 0 {
			end = pos + j
		}
		if k == r.tcol {
			tf, tc = line[pos:end], pos+1
		}
		if k == r.vcol {
			vf, vc = line[pos:end], pos+1
		}
		if k == r.icol {
			cf, cc = line[pos:end], pos+1
		}
		if j < 0 {
			break
		}
		pos = end + 1
		k++
	}
	if nf := bytes.Count(line, []byte{r.Comma}) + 1; nf != r.ncol {
		if err := r.checkText(line); err != nil {
			return 0, 0, 0, err
		}
		col := len(line) + 1
		if nf > r.ncol {
			col = r.fieldCol(line, r.ncol)
		}
		return 0, 0, 0, r.errf(col, nil, fmt.Errorf("%w: %d, the header row has %d (%s)", ErrFieldCount, nf, r.ncol, strings.Join(r.columns, string(r.Comma))))
	}
	t, err = r.timeField(tf, tc)
	if err != nil {
		return 0, 0, 0, err
	}
	v, err = r.number(vf, vc)
	if err != nil {
		return 0, 0, 0, err
	}
	if r.icol >= 0 {
		// An empty cell is a channel not sampled in that row (FORMAT.md): NaN.
		if len(trimField(cf)) == 0 {
			i = math.NaN()
		} else if i, err = r.number(cf, cc); err != nil {
			return 0, 0, 0, err
		}
		i *= r.iscale
	}
	return t, v * r.VoltScale, i, nil
}

func (r *Reader) timeField(f []byte, col int) (float64, error) {
	if r.TimeFormat == TimeAuto {
		g := trimField(f)
		if _, ok := parseNumber(g, r.decimalFor()); ok || len(g) < 10 || !looksLikeDate(g) {
			r.TimeFormat = TimeSeconds
		} else {
			r.TimeFormat = TimeRFC3339
		}
	}
	if r.TimeFormat == TimeSeconds {
		x, err := r.number(f, col)
		if err != nil {
			return 0, err
		}
		if !r.originSet {
			if err := r.setOrigin(trimField(f), x, col); err != nil {
				return 0, err
			}
		}
		if r.origin != 0 {
			ip, frac, ok := splitDecimal(trimField(f), r.decimalFor(), x)
			if !ok {
				return 0, r.errf(col, trimField(f), ErrTimeRange)
			}
			return (float64(ip-r.origin) + frac) * r.TimeScale, nil
		}
		return x * r.TimeScale, nil
	}
	g := trimField(f)
	s := string(g)
	if len(s) > 10 && s[10] == ' ' {
		s = s[:10] + "T" + s[11:]
	}
	ts, err := time.Parse(time.RFC3339Nano, s)
	if err != nil {
		if err := r.checkTextAt(g, col); err != nil {
			return 0, err
		}
		return 0, r.errf(col, g, ErrBadTime)
	}
	if !r.haveT0 {
		r.t0, r.haveT0 = ts, true
	}
	return ts.Sub(r.t0).Seconds(), nil
}

func looksLikeDate(b []byte) bool {
	return len(b) >= 10 && b[4] == '-' && b[7] == '-' && b[0] >= '0' && b[0] <= '9'
}

func (r *Reader) decimalFor() byte {
	if r.Comma != ',' {
		return ','
	}
	return '.'
}

func trimField(f []byte) []byte {
	for len(f) > 0 && (f[0] == ' ' || f[0] == '\t') {
		f = f[1:]
	}
	for len(f) > 0 && (f[len(f)-1] == ' ' || f[len(f)-1] == '\t') {
		f = f[:len(f)-1]
	}
	return unquote(f)
}

// number parses one numeric field, with the fast path first.
func (r *Reader) number(f []byte, col int) (float64, error) {
	g := trimField(f)
	if len(g) == 0 {
		return 0, r.errf(col, nil, ErrEmptyCell)
	}
	if x, ok := parseNumber(g, r.decimalFor()); ok {
		return x, nil
	}
	s := string(g)
	if r.Comma != ',' {
		s = strings.Replace(s, ",", ".", 1)
	}
	x, err := strconv.ParseFloat(s, 64)
	if err != nil {
		var ne *strconv.NumError
		if errors.As(err, &ne) && ne.Err == strconv.ErrRange {
			return 0, r.errf(col, g, ErrNotFinite)
		}
		if err := r.checkTextAt(g, col); err != nil {
			return 0, err
		}
		for _, c := range g {
			if c >= 0x80 {
				return 0, r.errf(col, nil, ErrBinary)
			}
		}
		return 0, r.errf(col, g, ErrNotNumber)
	}
	if x != x || x > 1.7976931348623157e308 || x < -1.7976931348623157e308 {
		return 0, r.errf(col, g, ErrNotFinite)
	}
	return x, nil
}
