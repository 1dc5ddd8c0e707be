package units

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"
	"unicode"
	"unicode/utf8"
)

// Unit symbols used across capcycle. Any string may be passed as a unit; these are the
// ones the rest of the code uses, so that printed values look alike everywhere.
const (
	Farad   = "F"
	Volt    = "V"
	Ampere  = "A"
	Ohm     = "Ω" // U+03A9 GREEK CAPITAL LETTER OMEGA, the form Unicode recommends for the ohm
	Second  = "s"
	Hertz   = "Hz"
	Watt    = "W"
	Joule   = "J"
	Henry   = "H"
	Percent = "%"
)

// Sentinel errors wrapped by every *ParseError; test for them with errors.Is.
var (
	ErrEmpty       = errors.New("empty value")
	ErrSyntax      = errors.New("not a number in engineering notation")
	ErrNotFinite   = errors.New("not a finite number")
	ErrSuffix      = errors.New("unknown suffix or unit")
	ErrAmbiguous   = errors.New("ambiguous prefix")
	ErrNegative    = errors.New("negative value where only zero or more makes sense")
	ErrNotPositive = errors.New("value must be greater than zero")
)

// ParseError reports text that could not be read as a value.
type ParseError struct {
	Text string // the text as given
	Unit string // the unit that was expected ("" for a plain number)
	Err  error  // what is wrong; wraps one of the Err* sentinels
}

func (e *ParseError) Error() string { return fmt.Sprintf("units: %q: %v", e.Text, e.Err) }
func (e *ParseError) Unwrap() error { return e.Err }

// Domain says which signs a quantity may take.
type Domain int

const (
	Any         Domain = iota // any finite value
	NonNegative               // zero or more (a current magnitude, a tolerance)
	Positive                  // more than zero (capacitance, resistance, a period)
)

func (d Domain) String() string {
	switch d {
	case Any:
		return "any"
	case NonNegative:
		return "non-negative"
	case Positive:
		return "positive"
	}
	return fmt.Sprintf("Domain(%d)", int(d))
}

// check returns nil when v lies in d.
func (d Domain) check(v float64) error {
	switch {
	case d == NonNegative && v < 0:
		return ErrNegative
	case d == Positive && v <= 0:
		return ErrNotPositive
	}
	return nil
}

// Parse reads s as a number in engineering notation, in the given unit, and returns it in
// that unit without prefix (Parse("4700uF", "F") is 0.0047). unit may be "" for a plain
// number; then no unit letters are allowed. See the package documentation for the
// accepted forms and the SPICE case rules.
func Parse(s, unit string) (float64, error) { return ParseDomain(s, unit, Any) }

// ParseNonNeg is Parse that also rejects negative values. "-0" reads as 0.
func ParseNonNeg(s, unit string) (float64, error) { return ParseDomain(s, unit, NonNegative) }

// ParsePositive is Parse that also rejects zero and negative values.
func ParsePositive(s, unit string) (float64, error) { return ParseDomain(s, unit, Positive) }

// ParseDomain is Parse that also checks the value lies in d.
func ParseDomain(s, unit string, d Domain) (float64, error) {
	v, err := parse(s, unit)
	if err == nil {
		err = d.check(v)
	}
	if err != nil {
		return 0, &ParseError{Text: s, Unit: unit, Err: err}
	}
	if v == 0 {
		v = 0 // no negative zero
	}
	return v, nil
}

func parse(s, unit string) (float64, error) {
	t := strings.TrimSpace(s)
	if t == "" {
		return 0, ErrEmpty
	}
	n := scanNumber(t)
	if n == 0 {
		w := strings.ToLower(strings.TrimLeft(t, "+-"))
		if strings.HasPrefix(w, "nan") || strings.HasPrefix(w, "inf") {
			return 0, ErrNotFinite
		}
		return 0, fmt.Errorf("%w: it does not start with a decimal number", ErrSyntax)
	}
	rest := t[n:]
	tail := strings.TrimLeftFunc(rest, unicode.IsSpace)
	spaced := len(tail) < len(rest)
	scale, err := scaleOf(t[:n], tail, unit, spaced)
	if err != nil {
		return 0, err
	}
	// Fold the scale into the decimal exponent so that the value is rounded once:
	// "2200u" is read as 2200e-6, which is exactly the double nearest 0.0022.
	mant, expText, _ := strings.Cut(strings.ToLower(t[:n]), "e")
	exp := 0
	if expText != "" {
		if exp, err = strconv.Atoi(expText); err != nil {
			if strings.HasPrefix(expText, "-") {
				return 0, nil // far below the smallest float: zero, as strconv reads it
			}
			return 0, fmt.Errorf("%w: too large", ErrNotFinite)
		}
	}
	v, err := strconv.ParseFloat(mant+"e"+strconv.Itoa(exp+scale), 64)
	if err != nil {
		if errors.Is(err, strconv.ErrRange) {
			return 0, fmt.Errorf("%w: too large", ErrNotFinite)
		}
		return 0, fmt.Errorf("%w: %v", ErrSyntax, err)
	}
	return v, nil
}

// scanNumber returns the length of the decimal number at the start of s, or 0.
// The number is [+-] digits [. digits] [(e|E) [+-] digits], with at least one digit
// before the exponent. An "e" not followed by digits is not part of the number.
func scanNumber(s string) int {
	i := 0
	if i < len(s) && (s[i] == '+' || s[i] == '-') {
		i++
	}
	digits := 0
	for i < len(s) && isDigit(s[i]) {
		i++
		digits++
	}
	if i < len(s) && s[i] == '.' {
		i++
		for i < len(s) && isDigit(s[i]) {
			i++
			digits++
		}
	}
	if digits == 0 {
		return 0
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		j := i + 1
		if j < len(s) && (s[j] == '+' || s[j] == '-') {
			j++
		}
		k := j
		for k < len(s) && isDigit(s[k]) {
			k++
		}
		if k > j {
			i = k
		}
	}
	return i
}

func isDigit(c byte) bool { return '0' <= c && c <= '9' }

// spiceScale lists the SPICE scale factors, as powers of ten, by their lower-case spelling.
var spiceScale = map[string]int{
	"t": 12, "g": 9, "meg": 6, "k": 3, "m": -3,
	"u": -6, "µ": -6, "μ": -6, "n": -9, "p": -12, "f": -15,
}

// scaleOf works out the power of ten that tail (the text after the number, without
// leading space) stands for.
func scaleOf(num, tail, unit string, spaced bool) (int, error) {
	if tail == "" {
		return 0, nil
	}
	if unit != "" && isUnit(tail, unit) {
		return 0, nil
	}
	prefix := leadingPrefix(tail)
	if prefix == "" {
		return 0, suffixError(num, tail, unit)
	}
	rem := tail[len(prefix):]
	if rem != "" && (unit == "" || !isUnit(rem, unit)) {
		return 0, suffixError(num, tail, unit)
	}
	if prefix == "M" {
		switch {
		case rem != "" && isOhmSign(rem), rem != "" && spaced:
			return 6, nil // SI writing: "1 MΩ", "1MΩ", "2 MHz"
		case rem == "" && !spaced:
			return -3, nil // SPICE writing: "1M" is milli
		case rem == "":
			return 0, fmt.Errorf("%w: %q: a lone M after a space may mean milli (SPICE) or mega (SI); write %sm or %smeg",
				ErrAmbiguous, num+" M", num, num)
		default:
			return 0, fmt.Errorf("%w: %q: M is milli in SPICE notation but mega in SI; write %smeg%s, %s M%s (with a space) or %sm%s",
				ErrAmbiguous, num+tail, num, rem, num, rem, num, rem)
		}
	}
	return spiceScale[strings.ToLower(prefix)], nil
}

// leadingPrefix returns the scale suffix that tail starts with, as written, or "".
func leadingPrefix(tail string) string {
	if len(tail) >= 3 && strings.EqualFold(tail[:3], "meg") {
		return tail[:3]
	}
	r, size := utf8.DecodeRuneInString(tail)
	if r == 'µ' || r == 'μ' {
		return tail[:size]
	}
	if size == 1 {
		if _, ok := spiceScale[strings.ToLower(tail[:1])]; ok {
			return tail[:1]
		}
	}
	return ""
}

// isUnit reports whether s spells unit (case-insensitive; "ohm", "ohms" and both ohm
// signs for Ω).
func isUnit(s, unit string) bool {
	if isOhm(unit) {
		return isOhm(s)
	}
	return strings.EqualFold(s, unit)
}

func isOhm(s string) bool {
	return isOhmSign(s) || strings.EqualFold(s, "ohm") || strings.EqualFold(s, "ohms")
}

// isOhmSign reports whether s is U+03A9 or U+2126 (or their lower-case fold, ω).
func isOhmSign(s string) bool { return strings.EqualFold(s, "Ω") }

// knownUnits are units whose appearance in the wrong place gets a "wrong unit" message.
var knownUnits = []string{Farad, Volt, Ampere, Ohm, Second, Hertz, Watt, Joule, Henry, Percent}

func suffixError(num, tail, unit string) error {
	want := "nothing or a SPICE suffix (f p n u m k meg g t)"
	if unit != "" {
		want = fmt.Sprintf("an optional SPICE suffix (f p n u m k meg g t) and then %s", unit)
	}
	r, _ := utf8.DecodeRuneInString(tail)
	switch {
	case r < utf8.RuneSelf && isDigit(byte(r)) || r == '.' || r == ',' || r == '_':
		return fmt.Errorf("%w: unexpected %q after the number %s", ErrSyntax, tail, num)
	}
	rem := tail
	if p := leadingPrefix(tail); p != "" {
		rem = tail[len(p):]
		if rem != "" && isDigit(rem[0]) {
			return fmt.Errorf("%w: %q: RKM writing such as 4k7 is not read; write %s.%s%s", ErrSuffix, num+tail, num, rem, p)
		}
	}
	for _, u := range knownUnits {
		if isUnit(tail, u) || isUnit(rem, u) {
			if unit == "" {
				return fmt.Errorf("%w: unit %q given where a plain number was expected", ErrSuffix, tail)
			}
			return fmt.Errorf("%w: %q is in %s, but %s was expected", ErrSuffix, num+tail, u, unit)
		}
	}
	return fmt.Errorf("%w: %q after the number %s (want %s)", ErrSuffix, tail, num, want)
}

// siPrefix maps a power of 1000 (as an exponent of ten) to the prefix Format prints.
var siPrefix = map[int]string{
	-15: "f", -12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T",
}

// Format prints v in unit with three significant digits and the SI prefix that puts the
// mantissa between 1 and 999, separated from the number by a space: "4.70 mF",
// "33.5 Ω", "1.00 MΩ", "-12.0 µA". Zero prints as "0 V". Values below 1 f or from 1000 T
// up print with an exponent ("1.00e-18 V"); NaN and infinities print as "NaN V", "+Inf V".
// With unit "" the SPICE spelling is used without a space ("4.70m", "1.00meg", "12.0u"),
// so that the text reads back with Parse.
func Format(v float64, unit string) string {
	join := func(num, prefix string) string {
		if unit == "" {
			switch prefix {
			case "µ":
				prefix = "u"
			case "M":
				prefix = "meg"
			}
			return num + prefix
		}
		return num + " " + prefix + unit
	}
	switch {
	case math.IsNaN(v):
		return join("NaN", "")
	case math.IsInf(v, 1):
		return join("+Inf", "")
	case math.IsInf(v, -1):
		return join("-Inf", "")
	case v == 0:
		return join("0", "")
	}
	e := strconv.FormatFloat(v, 'e', 2, 64) // "-4.70e-03": three digits, correctly rounded
	mant, expText, _ := strings.Cut(e, "e")
	exp, _ := strconv.Atoi(expText)
	sign := ""
	if mant[0] == '-' {
		sign, mant = "-", mant[1:]
	}
	digits := mant[:1] + mant[2:] // "470"
	e3 := exp - ((exp%3)+3)%3     // floor to a multiple of three
	prefix, ok := siPrefix[e3]
	if !ok {
		return join(e, "")
	}
	var num string
	switch exp - e3 {
	case 0:
		num = digits[:1] + "." + digits[1:]
	case 1:
		num = digits[:2] + "." + digits[2:]
	default:
		num = digits
	}
	return join(sign+num, prefix)
}

// Duration formats a span of seconds as a person reads it: three significant digits in
// hours from two hours up ("24 h", "3.27 h"), in minutes from two minutes up ("3.27 min"), else
// in seconds with an SI prefix ("1.20 s", "85.0 ms"). Never kiloseconds.
func Duration(s float64) string {
	a := math.Abs(s)
	switch {
	case math.IsNaN(s):
		return "n/a"
	case math.IsInf(s, 0):
		return Format(s, Second)
	case a >= 7200:
		return fmt.Sprintf("%.3g h", s/3600)
	case a >= 120:
		return fmt.Sprintf("%.3g min", s/60)
	}
	return Format(s, Second)
}

// ParseClock reads a time of day "HH:MM" (24-hour clock) as seconds from midnight.
func ParseClock(s string) (float64, error) {
	t, err := time.Parse("15:04", strings.TrimSpace(s))
	if err != nil {
		return 0, fmt.Errorf("units: time of day %q: want HH:MM (24-hour clock)", s)
	}
	return float64(t.Hour()*3600 + t.Minute()*60), nil
}
