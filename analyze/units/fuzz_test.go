package units

import (
	"errors"
	"math"
	"slices"
	"testing"
)

// FuzzParse checks that Parse never panics, that it either returns a finite value or a
// *ParseError carrying the text, and that what it reads formats and reads back.
func FuzzParse(f *testing.F) {
	for _, tt := range parseTests {
		f.Add(tt.in, tt.unit)
	}
	for _, tt := range badTests {
		f.Add(tt.in, tt.unit)
	}
	f.Fuzz(func(t *testing.T, s, unit string) {
		v, err := Parse(s, unit)
		if err != nil {
			var pe *ParseError
			if !errors.As(err, &pe) || pe.Text != s {
				t.Fatalf("Parse(%q, %q): error %v is not a *ParseError with the text", s, unit, err)
			}
			return
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			t.Fatalf("Parse(%q, %q) = %g", s, unit, v)
		}
		if unit == "" || slices.Contains(knownUnits, unit) {
			checkRoundTrip(t, v, unit) // any other unit text may hold spaces or digits
		}
	})
}

// FuzzFormatRoundTrip checks Parse(Format(v, unit), unit) == v within the three printed
// significant digits (relative error at most 0.5 %), for the units capcycle prints.
func FuzzFormatRoundTrip(f *testing.F) {
	for _, tt := range formatTests {
		f.Add(tt.v, uint8(0))
	}
	f.Add(1.7e308, uint8(1))
	f.Add(5e-324, uint8(2))
	f.Fuzz(func(t *testing.T, v float64, u uint8) {
		units := append([]string{""}, knownUnits...)
		checkRoundTrip(t, v, units[int(u)%len(units)])
	})
}

func checkRoundTrip(t *testing.T, v float64, unit string) {
	t.Helper()
	// Above about 1.795e308 the rounded text exceeds the largest float64 and cannot be read back.
	if math.IsNaN(v) || math.IsInf(v, 0) || math.Abs(v) > 1.79e308 {
		return
	}
	s := Format(v, unit)
	got, err := Parse(s, unit)
	if err != nil {
		t.Fatalf("Format(%g, %q) = %q, which Parse rejects: %v", v, unit, s, err)
	}
	// Three significant digits: the rounding error is at most half a unit in the third
	// digit, i.e. 0.5 % of the leading digit's magnitude. Subnormals carry fewer bits.
	if math.Abs(got-v) > 5e-3*math.Abs(v)+1e-320 {
		t.Fatalf("Parse(Format(%g, %q) = %q) = %g", v, unit, s, got)
	}
}
