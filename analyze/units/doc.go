// Package units reads and prints values in engineering notation, the way people write
// component values on a bench: 4700u, 4.7 mF, 1meg, 10kohm, 1 MΩ, 2.7V.
//
// Every value that a user types (a flag, a profile entry) goes through [Parse], and every
// value capcycle prints goes through [Format], so that the whole tool reads and writes
// numbers one way.
//
// # Reading
//
// A value is a decimal number (optional sign, digits, optional fraction, optional
// exponent such as e-3), then optionally a scale suffix, then optionally the unit:
//
//	"4700u"     4.7e-3   SPICE suffix, no unit
//	"4700uF"    4.7e-3   SPICE suffix and unit letters
//	"4.7 mF"    4.7e-3   SI prefix and symbol, separated from the number by a space
//	"1meg"      1e6      SPICE mega (any case: meg, MEG, Meg)
//	"1 MΩ"      1e6      SI mega: an upper-case M followed by the ohm sign
//	"10kohm"    1e4      "ohm" and "ohms" are accepted for Ω
//	"2.7V"      2.7
//	"470µ"      4.7e-4   micro may be written u, U, µ (U+00B5) or μ (U+03BC)
//
// The suffixes and their case rules follow SPICE: T=1e12, G=1e9, MEG=1e6, K=1e3, M=1e-3,
// U=1e-6, N=1e-9, P=1e-12, F=1e-15, in any case, so a bare "1M" is one milli, not one
// mega. This was checked against ngspice itself (see units_ngspice_test.go: ngspice reads
// "1M" as 0.001 and "10Mohm" as 0.01); the list of suffixes is from memory of the SPICE3 and
// ngspice manuals ("scale factors"), which also say that letters after a number or a
// scale factor are ignored.
//
// capcycle is stricter than SPICE in four ways, each to stop a silent misreading:
//   - Letters after the suffix must be the expected unit (or "ohm"/"ohms" for Ω); "4700x",
//     "4700uV" where farads are wanted, or "1mil" are errors. SPICE would ignore them.
//   - An upper-case M written straight after the number and followed by unit letters
//     ("1MHz", "10Mohm", "1MV") is rejected as ambiguous: SPICE reads milli, a person
//     usually means mega. Write "1meg", "1 MHz" (SI, with a space) or "1m" instead.
//   - With a space between the number and the prefix ("1 MV", "4.7 mF") the value is read
//     as SI writing: M is mega and m is milli. A bare "1 M" (space, no unit) is ambiguous.
//   - When the unit is F, a lone "F" or "f" after the number is the farad ("1F", "0.47f" is
//     0.47 F), not femto; write "1fF" for femtofarads.
//
// Empty text, NaN, Inf, values that overflow, "1.2.3", thousands separators and the RKM
// style ("4k7", "33R") are rejected with a [*ParseError] naming the text.
//
// [ParseNonNeg] and [ParsePositive] also refuse negative (and, for ParsePositive, zero)
// values, for quantities where the sign is meaningless (capacitance, resistance, time).
//
// # Printing
//
// [Format] prints three significant digits and the SI prefix that puts the number between
// 1 and 999: Format(4.7e-3, "F") is "4.70 mF", Format(33.46, "Ω") is "33.5 Ω",
// Format(-12e-6, "A") is "-12.0 µA", Format(0, "V") is "0 V". Values beyond the prefixes
// f..T are printed with an exponent ("1.00e-18 V"). Everything Format prints, Parse reads
// back (within the three printed digits).
//
// # Flags
//
// [Value] is a [flag.Value] holding a number in SI units, so a command can take
// "--cap 4700u":
//
//	c := units.NewValue(4.7e-3, "F", units.Positive)
//	fs.Var(c, "cap", "storage capacitance (F, e.g. 4700u)")
package units
