package report

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"capcycle/analyze/analysis"
	"capcycle/analyze/units"
)

// num formats v in unit for display: three significant digits and an SI prefix, so
// 0.0047 F reads "4.70 mF", 2.714 V reads "2.71 V" and 1.23e-5 A reads "12.3 µA". It is
// the one place where the report gives quantities their look.
//
// Units "%" and "" get no prefix; "s" gets a prefix only below one second (larger spans
// go through dur). NaN and ±Inf print as "n/a".
//
// With three digits, SI units go through units.Format, the project's one formatter of
// engineering values.
func num(v float64, unit string) string { return numSig(v, unit, 3) }

// numSig is num with sig significant digits (at least 1).
func numSig(v float64, unit string, sig int) string {
	sig = max(sig, 1)
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "n/a"
	}
	switch unit {
	case "%":
		return plainSig(v, sig) + " %"
	case "":
		return plainSig(v, sig)
	case "s":
		if math.Abs(v) >= 1 {
			return plainSig(v, sig) + " s"
		}
	}
	if v == 0 {
		return "0 " + unit
	}
	if sig == 3 {
		return units.Format(v, unit)
	}
	exp := int(math.Floor(math.Log10(math.Abs(v))))
	p := floorDiv(exp, 3) * 3
	p = max(-15, min(12, p))
	for {
		m := v / math.Pow10(p)
		dec := max(0, sig-1-(exp-p))
		s := strconv.FormatFloat(m, 'f', dec, 64)
		if math.Abs(mustFloat(s)) >= 1000 && p < 12 {
			p += 3
			exp = p
			continue
		}
		return s + " " + prefixes[p] + unit
	}
}

// prefixes maps a power of ten to its SI prefix.
var prefixes = map[int]string{
	-15: "f", -12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T",
}

// plain prints v with three significant digits and no prefix: 4.12, 41.2, 412, 4120.
func plain(v float64) string { return plainSig(v, 3) }

// plainSig is plain with sig significant digits.
func plainSig(v float64, sig int) string {
	if v == 0 {
		return "0"
	}
	a := math.Abs(v)
	dec := sig - 1 - int(math.Floor(math.Log10(a)))
	if dec < 0 {
		dec = 0
	}
	s := strconv.FormatFloat(v, 'f', dec, 64)
	if dec > 0 && math.Abs(mustFloat(s)) >= math.Pow10(sig-dec) {
		// rounding carried into a new digit (9.996 -> 10.00); drop one decimal
		s = strconv.FormatFloat(v, 'f', dec-1, 64)
	}
	return s
}

// dur formats a span of time for a reader: below two minutes in seconds ("41.3 s",
// "23.0 ms"), below two hours in minutes ("14.2 min"), beyond in hours ("23.9 h").
func dur(s float64) string {
	a := math.Abs(s)
	switch {
	case math.IsNaN(s) || math.IsInf(s, 0):
		return "n/a"
	case a < 120:
		return num(s, "s")
	case a < 2*3600:
		return plain(s/60) + " min"
	default:
		return plain(s/3600) + " h"
	}
}

// clock formats seconds from the capture start as h:mm:ss, or m:ss.s below an hour.
func clock(s float64) string {
	if math.IsNaN(s) || math.IsInf(s, 0) {
		return "n/a"
	}
	neg := ""
	if s < 0 {
		neg, s = "-", -s
	}
	h := int(s / 3600)
	m := int(math.Mod(s, 3600) / 60)
	sec := math.Mod(s, 60)
	if h == 0 {
		return fmt.Sprintf("%s%d:%04.1f", neg, m, sec)
	}
	return fmt.Sprintf("%s%d:%02d:%02.0f", neg, h, m, math.Floor(sec))
}

// unitOfKey returns the display unit and scale for a JSON key that carries its unit
// in a suffix ("fire_v" -> "V"), and the key without the suffix.
func unitOfKey(key string) (name, unit string) {
	suffixes := []struct{ suf, unit string }{
		{"_v_per_h", "V/h"}, {"_per_h", "/h"}, {"_pct", "%"}, {"_ohm", "Ω"}, {"_hz", "Hz"},
		{"_v", "V"}, {"_a", "A"}, {"_s", "s"}, {"_f", "F"}, {"_j", "J"}, {"_w", "W"},
	}
	for _, s := range suffixes {
		if strings.HasSuffix(key, s.suf) {
			return strings.TrimSuffix(key, s.suf), s.unit
		}
	}
	return key, ""
}

// estimate formats a value with its standard error in one unit and prefix, the error to
// two significant digits and the value to the same last decimal: "2.7132 ± 0.0041 V",
// "29.80 ± 0.60 mF", "541 ± 12 ms". Without an error it is quantity(v, unit); nil reads
// "not determined".
func estimate(e *analysis.Estimate, unit string) string {
	if e == nil {
		return "not determined"
	}
	if e.SD == nil || *e.SD <= 0 || !finite(*e.SD) || !finite(e.Value) {
		return quantity(e.Value, unit)
	}
	v, u, label := estimateParts(e.Value, *e.SD, unit)
	return v + " ± " + u + sep(label) + label
}

// estimateParts formats a value and its uncertainty sd (> 0) in one unit and prefix, sd
// to two significant digits and the value to the same last decimal: ("2.7132", "0.0041",
// "V").
func estimateParts(value, sd float64, unit string) (v, u, label string) {
	div, label := displayUnit(value, unit)
	sd /= div
	dec := max(0, min(6, 1-int(math.Floor(math.Log10(sd)))))
	return strconv.FormatFloat(value/div, 'f', dec, 64), strconv.FormatFloat(sd, 'f', dec, 64), label
}

// displayUnit picks the divisor and unit label quantity would use for v.
func displayUnit(v float64, unit string) (div float64, label string) {
	switch unit {
	case "%", "", "/h":
		return 1, unit
	case "V/h":
		d, l := siAxis(math.Abs(v), "V")
		return d, l + "/h"
	case "s":
		switch a := math.Abs(v); {
		case a >= 2*3600:
			return 3600, "h"
		case a >= 120:
			return 60, "min"
		case a >= 1:
			return 1, "s"
		}
	}
	return siAxis(math.Abs(v), unit)
}

func sep(label string) string {
	if label == "" {
		return ""
	}
	return " "
}

// quantity formats a value whose unit comes from a key suffix.
func quantity(v float64, unit string) string { return quantitySig(v, unit, 3) }

func quantitySig(v float64, unit string, sig int) string {
	switch unit {
	case "s":
		if math.Abs(v) >= 120 {
			return dur(v)
		}
	case "/h":
		return plainSig(v, sig) + " " + unit
	case "V/h":
		return numSig(v, "V", sig) + "/h"
	}
	return numSig(v, unit, sig)
}

func floorDiv(a, b int) int {
	q := a / b
	if (a%b != 0) && ((a < 0) != (b < 0)) {
		q--
	}
	return q
}

func mustFloat(s string) float64 {
	f, _ := strconv.ParseFloat(s, 64)
	return f
}
