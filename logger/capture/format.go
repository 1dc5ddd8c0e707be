package capture

import (
	"strings"
	"time"
)

// FormatVersion is the value of the "format" metadata line of the files this package
// writes.
const FormatVersion = "capcycle.capture/1"

// Metadata keys ("# key: value"). Header-block keys come before the header row; event
// keys after it, at the point of the time axis they describe. See FORMAT.md.
const (
	KeyFormat      = "format"
	KeyStart       = "start"
	KeySource      = "source"
	KeyBoard       = "board"
	KeyProfile     = "profile"
	KeyChannel     = "channel"
	KeyCalibration = "calibration"
	KeyRates       = "rates"
	KeyNote        = "note"

	KeyGap    = "gap"
	KeyReset  = "reset"
	KeyAppend = "append"
	KeyEnd    = "end"
	KeyStats  = "stats"
	KeyClock  = "clock"
)

// Column names every capture has.
const (
	ColTime = "time_s"
	ColVcap = "vcap_v"
)

// TimeLayout is how "start", "end" and "append at=" times are written: RFC 3339 in UTC
// with microseconds. Readers parse them with time.RFC3339Nano, which accepts it.
const TimeLayout = "2006-01-02T15:04:05.000000Z07:00"

// Gap reasons (the "reason" field of a gap line).
const (
	GapLostSamples = "lost-samples" // the board's sequence counter skipped
	GapUnplugged   = "unplugged"    // the port went away and came back
	GapReadError   = "read-error"   // the port failed and was reopened
	GapStopped     = "stopped"      // the recording stopped and was continued with --append
)

// Field is one name=value pair of a metadata value.
type Field struct {
	Name, Value string
}

// ParseComment splits a "# key: value" line (with or without its line end) into key and
// value. ok is false for a line that is not a metadata line: not a comment, a free-text
// comment, or a key that is not lower-case letters, digits and '_' starting with a letter.
//
//	"# gap: start_s=1 end_s=2" -> "gap", "start_s=1 end_s=2", true
//	"# just words"             -> "", "", false
func ParseComment(line string) (key, value string, ok bool) {
	line = strings.TrimRight(line, "\r\n")
	if !strings.HasPrefix(line, "# ") {
		return "", "", false
	}
	rest := line[2:]
	i := strings.IndexByte(rest, ':')
	if i <= 0 || !validKey(rest[:i]) {
		return "", "", false
	}
	v := rest[i+1:]
	if v != "" && v[0] != ' ' {
		return "", "", false
	}
	return rest[:i], strings.TrimSpace(v), true
}

func validKey(k string) bool {
	for i := 0; i < len(k); i++ {
		c := k[i]
		switch {
		case c >= 'a' && c <= 'z':
		case i > 0 && (c >= '0' && c <= '9' || c == '_'):
		default:
			return false
		}
	}
	return k != ""
}

// ParseFields splits a metadata value into its leading word (the text before the first
// name=value field, "" if there is none) and its name=value fields, in order.
//
//	"vcap_v gain=1.0012 offset_v=-0.003" -> "vcap_v", [{gain 1.0012} {offset_v -0.003}]
//	"start_s=1 end_s=2"                  -> "",       [{start_s 1} {end_s 2}]
func ParseFields(value string) (word string, fields []Field) {
	var words []string
	for _, tok := range strings.Fields(value) {
		if name, v, ok := strings.Cut(tok, "="); ok && name != "" {
			fields = append(fields, Field{name, v})
			continue
		}
		if len(fields) == 0 {
			words = append(words, tok)
		}
	}
	return strings.Join(words, " "), fields
}

// Lookup returns the value of the first field called name.
func Lookup(fields []Field, name string) (string, bool) {
	for _, f := range fields {
		if f.Name == name {
			return f.Value, true
		}
	}
	return "", false
}

// Channel says how one column's values were made from the board's counts:
// v = counts / 2^Bits * RefV / Divider * Scale, then Gain*v + OffsetV.
type Channel struct {
	Column  string  // column name with its unit, e.g. "vcap_v"; required
	ADC     int     // the board's input number (ADC0 is 0)
	Bits    int     // resolution of the counts; 0 means the input was already in volts
	RefV    float64 // ADC reference in volts; ignored when Bits is 0
	Divider float64 // divider ratio, ADC voltage over node voltage, 0 < Divider <= 1; 0 means 1
	Scale   float64 // a further factor (e.g. volts to amps); 0 means 1

	Gain    float64 // calibration gain; 0 means 1
	OffsetV float64 // calibration offset in volts (after the gain)
	CalFrom string  // where the calibration came from: "board", "host" or "" (none)
}

// Header is the metadata a Writer puts in front of the header row.
type Header struct {
	Start    time.Time // host wall-clock time at time_s = 0; zero means the time of Create
	Source   string    // e.g. "serial port=/dev/ttyUSB0 baud=115200"; "" leaves it out
	Board    string    // the board's identity fields verbatim; "" leaves it out
	Profile  string    // profile name; "" leaves it out
	Rates    string    // e.g. "slow_hz=10 fast_hz=500 burst_thr=8 pre=32"; "" leaves it out
	Notes    []string  // free "note" lines
	Channels []Channel // one per column after time_s; the first is vcap_v
}

// Gap is a stretch of the time axis with no samples (a "gap" line).
type Gap struct {
	StartS, EndS float64 // last row before, first row after (seconds)
	Reason       string  // one of the Gap* reasons
	Lost         int64   // samples known to be lost; 0 leaves the field out
}

// Reset is a board restart (a "reset" line).
type Reset struct {
	AtS     float64
	Cause   string // "por", "ext", "bod", "wdt" or "unknown"
	Segment int    // the segment that starts here; the first segment is 1
}

// Stats are a session's totals (a "stats" line).
type Stats struct {
	Samples   int64 // rows written
	BadFrames int64 // frames dropped because they were damaged
	Lost      int64 // samples lost to sequence gaps
	Gaps      int64 // gap lines written
	Overlap   int64 // fast samples dropped because a later row was already written
}

// Clock is the board clock's drift against the host clock (a "clock" line).
type Clock struct {
	DriftPPM float64 // positive: the board clock runs fast
	FitS     float64 // span of device time the fit covers, seconds
	Points   int     // points in the fit
}
