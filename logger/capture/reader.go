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
	ErrFieldCount    = errors.New("row has too few fields")
	ErrNotNumber     = errors.New("not a number")
	ErrNotFinite     = errors.New("not a finite number (NaN or Inf)")
	ErrEmptyCell     = errors.New("empty cell")
	ErrBadTime       = errors.New("not a time")
	ErrTimeBackwards = errors.New("time goes backwards")
	ErrDuplicateTime = errors.New("duplicate time")
)

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
}

// NewReader returns a Reader on r; name is used in errors.
func NewReader(r io.Reader, name string) *Reader {
	return &Reader{Name: name, br: bufio.NewReaderSize(r, 1<<16)}
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

// Torn reports that the last line had no line end and was dropped as a cut-short row.
func (r *Reader) Torn() bool { return r.torn }

// Start returns the capture's start time: the "start" metadata, else the first RFC 3339
// timestamp; ok is false when there is neither.
func (r *Reader) Start() (time.Time, bool) {
	if s, ok := r.meta[KeyStart]; ok {
		if t, err := time.Parse(time.RFC3339Nano, s); err == nil {
			return t, true
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

// nextLine returns the next line without its line end, whether it had one, and io.EOF
// at the end. The slice is valid until the next call.
func (r *Reader) nextLine() (line []byte, complete bool, err error) {
	line, err = r.br.ReadSlice('\n')
	r.nbytes += int64(len(line))
	if err == bufio.ErrBufferFull {
		r.line++
		return nil, false, r.errf(0, nil, ErrLineTooLong)
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
		_, fs := ParseFields(value)
		var g Gap
		g.StartS = fieldFloat(fs, "start_s")
		g.EndS = fieldFloat(fs, "end_s")
		g.Reason, _ = Lookup(fs, "reason")
		g.Lost = int64(fieldFloat(fs, "lost"))
		r.lost += g.Lost
		r.gaps = append(r.gaps, g)
		return
	case KeyReset:
		_, fs := ParseFields(value)
		var s Reset
		s.AtS = fieldFloat(fs, "at_s")
		s.Cause, _ = Lookup(fs, "cause")
		s.Segment = int(fieldFloat(fs, "segment"))
		r.resets = append(r.resets, s)
		return
	case KeyFormat:
		r.ours = strings.HasPrefix(value, "capcycle.capture/")
	}
	if _, dup := r.meta[key]; !dup {
		r.meta[key] = value
	}
	r.metaAll = append(r.metaAll, Field{key, value})
}

func fieldFloat(fs []Field, name string) float64 {
	s, ok := Lookup(fs, name)
	if !ok {
		return 0
	}
	f, err := strconv.ParseFloat(s, 64)
	if err != nil {
		return 0
	}
	return f
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
		if !complete && r.ours {
			// A row cut short by a killed writer (no line end): not part of the capture.
			r.torn = true
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
	if k < need {
		if err := r.checkText(line); err != nil {
			return 0, 0, 0, err
		}
		return 0, 0, 0, r.errf(len(line)+1, nil, fmt.Errorf("%w: %d of at least %d", ErrFieldCount, k+1, need+1))
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
		return x * r.TimeScale, err
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
