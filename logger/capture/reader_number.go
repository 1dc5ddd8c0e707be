package capture

import "math"

// pow10 holds the powers of ten that float64 represents exactly (10^0 .. 10^22).
var pow10 = [...]float64{1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22}

// parseNumber parses the common decimal forms ("-12", "2.41513", ".5", "1e-3",
// "4.7E+02", and "2,415" when decimal is ',') without allocating. It returns ok false for
// anything else, or when the result might not be correctly rounded, so the caller falls
// back to strconv.ParseFloat.
//
// The fast path is Clinger's: when the decimal mantissa m fits in 53 bits and the power
// of ten p has |p| <= 22, both m and 10^p are exact doubles, so one IEEE multiplication
// or division gives the correctly rounded result (W. D. Clinger, "How to read floating
// point numbers accurately", PLDI 1990).
func parseNumber(b []byte, decimal byte) (float64, bool) {
	i, n := 0, len(b)
	if n == 0 {
		return 0, false
	}
	neg := false
	if c := b[0]; c == '-' || c == '+' {
		neg = c == '-'
		i++
	}
	var mant uint64
	digits, exp := 0, 0
	start := i
	// integer part
	for ; i < n; i++ {
		d := b[i] - '0'
		if d > 9 {
			break
		}
		if mant == 0 && d == 0 {
			continue // leading zeros
		}
		mant = mant*10 + uint64(d)
		digits++
	}
	sawDigit := i > start
	if i < n && (b[i] == '.' || b[i] == decimal) {
		i++
		fstart := i
		for ; i < n; i++ {
			d := b[i] - '0'
			if d > 9 {
				break
			}
			exp--
			if mant == 0 && d == 0 {
				continue
			}
			mant = mant*10 + uint64(d)
			digits++
		}
		sawDigit = sawDigit || i > fstart
	}
	if !sawDigit || digits > 19 {
		return 0, false
	}
	if i < n {
		if c := b[i]; c != 'e' && c != 'E' {
			return 0, false
		}
		e, ok := parseExp(b[i+1:])
		if !ok {
			return 0, false
		}
		exp += e
	}
	if mant == 0 {
		if neg {
			return math.Copysign(0, -1), true
		}
		return 0, true
	}
	if mant >= 1<<53 || exp < -22 || exp > 22 {
		return 0, false
	}
	f := float64(mant)
	if exp < 0 {
		f /= pow10[-exp]
	} else {
		f *= pow10[exp]
	}
	if neg {
		f = -f
	}
	return f, true
}

func parseExp(b []byte) (int, bool) {
	if len(b) == 0 {
		return 0, false
	}
	neg := false
	switch b[0] {
	case '-':
		neg = true
		b = b[1:]
	case '+':
		b = b[1:]
	}
	if len(b) == 0 || len(b) > 4 {
		return 0, false
	}
	e := 0
	for _, c := range b {
		if c < '0' || c > '9' {
			return 0, false
		}
		e = e*10 + int(c-'0')
	}
	if neg {
		e = -e
	}
	return e, true
}

// splitDecimal splits the decimal number b (already read as x by parseNumber or
// strconv) into its whole part ip, truncated toward zero, and the rest frac, each with
// the sign of the number, straight from its digits: ip is exact, and frac is as exact as
// a float64 of a number below one. So ip - origin + frac keeps every digit the text
// has even when x itself, at 10^15, rounds to 1/8. ok is false when the whole part has
// more than 18 digits (it would not fit an int64) or b is not a plain decimal.
func splitDecimal(b []byte, decimal byte, x float64) (ip int64, frac float64, ok bool) {
	i, n := 0, len(b)
	neg := false
	if n > 0 && (b[0] == '-' || b[0] == '+') {
		neg = b[0] == '-'
		i++
	}
	var digs [40]byte // significant digits; value = 0.d1d2d3... × 10^point
	nd, point := 0, 0
	seenPoint, any := false, false
	for ; i < n; i++ {
		c := b[i]
		if c >= '0' && c <= '9' {
			any = true
			if nd == 0 && c == '0' {
				if seenPoint {
					point--
				}
				continue
			}
			if nd < len(digs) {
				digs[nd] = c
				nd++
			} else if !seenPoint {
				return 0, 0, false
			}
			if !seenPoint {
				point++
			}
			continue
		}
		if (c == '.' || c == decimal) && !seenPoint {
			seenPoint = true
			continue
		}
		break
	}
	if !any {
		return 0, 0, false
	}
	if i < n {
		if c := b[i]; c != 'e' && c != 'E' {
			return 0, 0, false
		}
		e, eok := parseExp(b[i+1:])
		if !eok {
			return 0, 0, false
		}
		point += e
	}
	if point > 18 {
		return 0, 0, false
	}
	if point <= 0 {
		return 0, x, true // no whole part: x is the fraction, as exact as it can be
	}
	for k := 0; k < point; k++ {
		d := int64(0)
		if k < nd {
			d = int64(digs[k] - '0')
		}
		ip = ip*10 + d
	}
	var m uint64
	k := 0
	for j := point; j < nd && k < 19; j++ {
		m = m*10 + uint64(digs[j]-'0')
		k++
	}
	if k > 0 {
		frac = float64(m) / pow10[k]
	}
	if neg {
		ip, frac = -ip, -frac
	}
	return ip, frac, true
}
