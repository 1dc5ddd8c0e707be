package units

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// The SPICE scale factors (T G MEG K M U N P F, case-insensitive) are from memory of the
// SPICE3 / ngspice manuals' "scale factors" paragraph; units_ngspice_test.go checks them
// against ngspice itself when it is installed.
var parseTests = []struct {
	in   string
	unit string
	want float64
}{
	{"0", "", 0},
	{"1", "", 1},
	{"-1.5", "", -1.5},
	{"+2", "", 2},
	{".5", "", 0.5},
	{"5.", "", 5},
	{"1e3", "", 1000},
	{"1E-3", "", 1e-3},
	{"2.5e+2", "", 250},
	{"4700u", "", 4.7e-3},
	{"4700U", "", 4.7e-3},
	{"4700µ", "", 4.7e-3}, // U+00B5 MICRO SIGN
	{"4700μ", "", 4.7e-3}, // U+03BC GREEK SMALL LETTER MU
	{"4.7m", "", 4.7e-3},
	{"4.7M", "", 4.7e-3}, // SPICE: M is milli
	{"1meg", "", 1e6},
	{"1MEG", "", 1e6},
	{"1Meg", "", 1e6},
	{"10k", "", 1e4},
	{"10K", "", 1e4},
	{"2g", "", 2e9},
	{"3T", "", 3e12},
	{"100n", "", 100e-9},
	{"22p", "", 22e-12},
	{"5f", "", 5e-15},
	{"1e-3u", "", 1e-9},
	{"  7k  ", "", 7000},
	{"4700uF", "F", 4.7e-3},
	{"4700uf", "F", 4.7e-3},
	{"4.7 mF", "F", 4.7e-3},
	{"1F", "F", 1},      // a lone F is the farad when farads are expected
	{"0.47f", "F", .47}, // likewise in lower case
	{"1fF", "F", 1e-15},
	{"1 MΩ", "Ω", 1e6},  // U+03A9
	{"1MΩ", "Ω", 1e6},   // U+03A9 without a space: Ω marks SI writing
	{"1 MΩ", "Ω", 1e6},  // U+2126 OHM SIGN
	{"1 mΩ", "Ω", 1e-3}, // milli-ohm
	{"10kohm", "Ω", 1e4},
	{"10kOhms", "Ω", 1e4},
	{"4.7MEGohm", "Ω", 4.7e6},
	{"33 ohm", "Ω", 33},
	{"2.7V", "V", 2.7},
	{"2.7 v", "V", 2.7},
	{"2.7", "V", 2.7},
	{"1 MV", "V", 1e6}, // space: SI writing, M is mega
	{"1 mV", "V", 1e-3},
	{"1mV", "V", 1e-3},
	{"-12.0 µA", "A", -12e-6},
	{"3uA", "A", 3e-6},
	{"2 MHz", "Hz", 2e6},
	{"1kHz", "Hz", 1e3},
	{"5 ms", "s", 5e-3},
	{"20", "%", 20},
	{"20%", "%", 20},
	{"1\u202fkΩ", "Ω", 1e3}, // narrow no-break space, as typeset SI values use
}

func TestParse(t *testing.T) {
	for _, tt := range parseTests {
		got, err := Parse(tt.in, tt.unit)
		if err != nil {
			t.Errorf("Parse(%q, %q): %v", tt.in, tt.unit, err)
			continue
		}
		if !close(got, tt.want, 1e-12) {
			t.Errorf("Parse(%q, %q) = %g, want %g", tt.in, tt.unit, got, tt.want)
		}
	}
}

func close(a, b, rel float64) bool {
	return a == b || math.Abs(a-b) <= rel*math.Max(math.Abs(a), math.Abs(b))
}

var badTests = []struct {
	in      string
	unit    string
	err     error
	message string // a piece the message must contain
}{
	{"", "F", ErrEmpty, `""`},
	{"   ", "F", ErrEmpty, "empty"},
	{"1.2.3", "", ErrSyntax, `".3"`},
	{"4700x", "F", ErrSuffix, `"x"`},
	{"4700uV", "F", ErrSuffix, "but F was expected"},
	{"4700uF", "", ErrSuffix, "plain number"},
	{"NaN", "", ErrNotFinite, "NaN"},
	{"nan", "V", ErrNotFinite, "finite"},
	{"Inf", "", ErrNotFinite, "Inf"},
	{"-inf", "", ErrNotFinite, "finite"},
	{"+Infinity", "", ErrNotFinite, "finite"},
	{"1e400", "", ErrNotFinite, "too large"},
	{"1e308t", "", ErrNotFinite, "too large"},
	{"abc", "", ErrSyntax, "decimal number"},
	{"uF", "F", ErrSyntax, "decimal number"},
	{"-", "", ErrSyntax, "decimal number"},
	{"e3", "", ErrSyntax, "decimal number"},
	{"1e", "", ErrSuffix, `"e"`},
	{"4,700", "", ErrSyntax, `",700"`},
	{"1_000", "", ErrSyntax, `"_000"`},
	{"4k7", "Ω", ErrSuffix, "RKM"},
	{"33R", "Ω", ErrSuffix, `"R"`},
	{"1MHz", "Hz", ErrAmbiguous, "meg"},
	{"10Mohm", "Ω", ErrAmbiguous, "milli"},
	{"1MV", "V", ErrAmbiguous, "mega"},
	{"1 M", "", ErrAmbiguous, "1meg"},
	{"1mil", "", ErrSuffix, `"mil"`},
	{"1 k F", "F", ErrSuffix, `"k F"`},
	{"2.7VV", "V", ErrSuffix, `"VV"`},
}

func TestParseErrors(t *testing.T) {
	for _, tt := range badTests {
		_, err := Parse(tt.in, tt.unit)
		if err == nil {
			t.Errorf("Parse(%q, %q): no error", tt.in, tt.unit)
			continue
		}
		if !errors.Is(err, tt.err) {
			t.Errorf("Parse(%q, %q) = %v, want errors.Is %v", tt.in, tt.unit, err, tt.err)
		}
		var pe *ParseError
		if !errors.As(err, &pe) || pe.Text != tt.in {
			t.Errorf("Parse(%q, %q): error %v does not carry the text", tt.in, tt.unit, err)
		}
		msg := err.Error()
		if !strings.HasPrefix(msg, "units: ") || !strings.Contains(msg, tt.message) {
			t.Errorf("Parse(%q, %q) message %q, want it to start with \"units: \" and contain %q", tt.in, tt.unit, msg, tt.message)
		}
	}
}

func TestDomains(t *testing.T) {
	if _, err := ParseNonNeg("-1u", "F"); !errors.Is(err, ErrNegative) {
		t.Errorf("ParseNonNeg(-1u) err = %v, want ErrNegative", err)
	}
	if v, err := ParseNonNeg("-0", "F"); err != nil || v != 0 || math.Signbit(v) {
		t.Errorf("ParseNonNeg(-0) = %g, %v; want +0, nil", v, err)
	}
	if _, err := ParsePositive("0", "F"); !errors.Is(err, ErrNotPositive) {
		t.Errorf("ParsePositive(0) err = %v, want ErrNotPositive", err)
	}
	if _, err := ParsePositive("-3k", "Ω"); !errors.Is(err, ErrNotPositive) {
		t.Errorf("ParsePositive(-3k) err = %v, want ErrNotPositive", err)
	}
	if v, err := ParsePositive("3k", "Ω"); err != nil || v != 3000 {
		t.Errorf("ParsePositive(3k) = %g, %v", v, err)
	}
	if v, err := Parse("-3k", "Ω"); err != nil || v != -3000 {
		t.Errorf("Parse(-3k) = %g, %v", v, err)
	}
}

var formatTests = []struct {
	v    float64
	unit string
	want string
}{
	{4.7e-3, "F", "4.70 mF"},
	{33.46, "Ω", "33.5 Ω"},
	{1e6, "Ω", "1.00 MΩ"},
	{-12e-6, "A", "-12.0 µA"},
	{0, "V", "0 V"},
	{math.Copysign(0, -1), "V", "0 V"},
	{1, "V", "1.00 V"},
	{999.4, "V", "999 V"},
	{999.6, "V", "1.00 kV"}, // rounding carries into the next prefix
	{0.0009996, "A", "1.00 mA"},
	{123456, "Hz", "123 kHz"},
	{2.5e-13, "F", "250 fF"},
	{1e-15, "F", "1.00 fF"},
	{1e-18, "V", "1.00e-18 V"},
	{5e15, "J", "5.00e+15 J"},
	{999e12, "W", "999 TW"},
	{4.7e-3, "", "4.70m"},
	{2.2e6, "", "2.20meg"},
	{12e-6, "", "12.0u"},
	{0.5, "", "500m"},
	{7, "", "7.00"},
	{0, "", "0"},
	{math.NaN(), "V", "NaN V"},
	{math.Inf(1), "V", "+Inf V"},
	{math.Inf(-1), "", "-Inf"},
}

func TestFormat(t *testing.T) {
	for _, tt := range formatTests {
		if got := Format(tt.v, tt.unit); got != tt.want {
			t.Errorf("Format(%g, %q) = %q, want %q", tt.v, tt.unit, got, tt.want)
		}
	}
}

func TestFormatParsesBack(t *testing.T) {
	for _, tt := range formatTests {
		if math.IsNaN(tt.v) || math.IsInf(tt.v, 0) {
			continue
		}
		got, err := Parse(tt.want, tt.unit)
		if err != nil {
			t.Errorf("Parse(%q): %v", tt.want, err)
			continue
		}
		if !close(got, tt.v, 5e-3) {
			t.Errorf("Parse(Format(%g)) = %g", tt.v, got)
		}
	}
}

func TestValueFlag(t *testing.T) {
	v := NewValue(4.7e-3, Farad, Positive)
	if v.String() != "4.70 mF" || v.IsSet() {
		t.Fatalf("default: %q set=%v", v.String(), v.IsSet())
	}
	if err := v.Set("-1u"); !errors.Is(err, ErrNotPositive) {
		t.Fatalf("Set(-1u) = %v", err)
	}
	if v.V != 4.7e-3 {
		t.Fatalf("a failed Set changed the value to %g", v.V)
	}
	if err := v.Set("1000 µF"); err != nil || v.V != 1e-3 || !v.IsSet() {
		t.Fatalf("Set(1000 µF) = %v, V=%g", err, v.V)
	}
	if err := v.UnmarshalText([]byte("2200u")); err != nil || v.Get().(float64) != 2.2e-3 {
		t.Fatalf("UnmarshalText: %v, %v", err, v.Get())
	}
	var nilValue *Value
	if nilValue.String() != "" {
		t.Fatal("nil Value String")
	}
}
