package profile

import (
	"fmt"
	"strconv"
	"strings"
)

// Tolerance is a capacitance tolerance given by its IEC 60062 letter code.
type Tolerance struct {
	Code     string  // the letter, upper case
	MinusPct float64 // how far below nominal the part may be, %
	PlusPct  float64 // how far above nominal the part may be, %
}

// toleranceCodes are the letters with a percentage meaning. Source: the letter table in
// testdata/capacitance_tolerance_codes.csv (secondary sources for IEC 60062, listed in that
// file; tolerance_test.go checks this table against it). B and C mean ±0.1 pF and
// ±0.25 pF, absolute tolerances of capacitors below 10 pF, and so never apply to a
// storage capacitor; they are refused with a message saying so.
var toleranceCodes = map[string]Tolerance{
	"D": {"D", 0.5, 0.5},
	"F": {"F", 1, 1},
	"G": {"G", 2, 2},
	"H": {"H", 3, 3}, // one source reads ±2.5 %; the more common ±3 % is used
	"J": {"J", 5, 5},
	"K": {"K", 10, 10},
	"M": {"M", 20, 20},
	"N": {"N", 30, 30},
	"P": {"P", 0, 100},
	"S": {"S", 20, 50},
	"T": {"T", 10, 50},
	"Z": {"Z", 20, 80},
}

// absoluteCodes are letters whose only meaning is an absolute tolerance in pF.
var absoluteCodes = map[string]string{"B": "±0.1 pF", "C": "±0.25 pF"}

// DefaultTolerance is M, ±20 %, the usual tolerance of aluminium electrolytic capacitors.
var DefaultTolerance = toleranceCodes["M"]

// LookupTolerance returns the tolerance for an IEC 60062 letter (either case).
func LookupTolerance(letter string) (Tolerance, error) {
	l := strings.ToUpper(strings.TrimSpace(letter))
	if t, ok := toleranceCodes[l]; ok {
		return t, nil
	}
	if abs, ok := absoluteCodes[l]; ok {
		return Tolerance{}, fmt.Errorf("%q means %s, a tolerance for capacitors below 10 pF; want one of %s", letter, abs, ToleranceLetters())
	}
	return Tolerance{}, fmt.Errorf("%q is not an IEC 60062 tolerance letter; want one of %s", letter, ToleranceLetters())
}

// ToleranceLetters lists the accepted letters, e.g. "D F G H J K M N P S T Z".
func ToleranceLetters() string {
	return "D F G H J K M N P S T Z"
}

// Range returns the lowest and highest value a part of the given nominal value may have.
func (t Tolerance) Range(nominal float64) (lo, hi float64) {
	return nominal * (1 - t.MinusPct/100), nominal * (1 + t.PlusPct/100)
}

// String prints the letter and its meaning: "M (±20 %)", "Z (-20 %/+80 %)".
func (t Tolerance) String() string {
	if t.Code == "" {
		return "none"
	}
	f := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	if t.MinusPct == t.PlusPct {
		return fmt.Sprintf("%s (±%s %%)", t.Code, f(t.PlusPct))
	}
	return fmt.Sprintf("%s (-%s %%/+%s %%)", t.Code, f(t.MinusPct), f(t.PlusPct))
}
