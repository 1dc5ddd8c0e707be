package wire

import (
	"math"
	"strconv"
)

// Micro is a decimal number held exactly as an integer count of millionths, the way
// divider ratios and gains travel: Micro(333333) is "0.333333", Micro(1000000) is "1".
// Six fraction digits keep a ratio to 1e-6, finer than one count of a 16-bit ADC.
type Micro int64

// MicroOf rounds f to the nearest millionth. Values beyond the range of Micro
// (about ±9.2e12) saturate; NaN gives 0.
func MicroOf(f float64) Micro {
	r := math.Round(f * 1e6)
	switch {
	case r != r:
		return 0
	case r >= math.MaxInt64:
		return math.MaxInt64
	case r <= math.MinInt64:
		return math.MinInt64
	}
	return Micro(r)
}

// Float64 returns m as a float64 (m / 1e6).
func (m Micro) Float64() float64 { return float64(m) / 1e6 }

// String returns the wire form: the shortest decimal, "-0.5", "1", "0.333333".
func (m Micro) String() string { return string(appendMicro(nil, m)) }

// appendMicro writes m in its shortest decimal form: no trailing fraction zeros and no
// "." when the fraction is zero.
func appendMicro(dst []byte, m Micro) []byte {
	u := uint64(m)
	if m < 0 {
		dst = append(dst, '-')
		u = -u
	}
	dst = strconv.AppendUint(dst, u/1e6, 10)
	frac := u % 1e6
	if frac == 0 {
		return dst
	}
	var d [6]byte
	for i := 5; i >= 0; i-- {
		d[i] = byte('0' + frac%10)
		frac /= 10
	}
	n := 6
	for d[n-1] == '0' {
		n--
	}
	dst = append(dst, '.')
	return append(dst, d[:n]...)
}

// parseMicro reads "-12.345" style decimals with at most 6 fraction digits.
func parseMicro(b []byte) (Micro, bool) {
	neg := false
	if len(b) > 0 && b[0] == '-' {
		neg, b = true, b[1:]
	}
	ip := b
	var fp []byte
	for i, c := range b {
		if c == '.' {
			ip, fp = b[:i], b[i+1:]
			if len(fp) == 0 || len(fp) > 6 {
				return 0, false
			}
			break
		}
	}
	if len(ip) == 0 {
		return 0, false
	}
	var whole uint64
	for _, c := range ip {
		if c < '0' || c > '9' {
			return 0, false
		}
		whole = whole*10 + uint64(c-'0')
		if whole > math.MaxInt64/1000000 {
			return 0, false
		}
	}
	var frac uint64
	for i := range 6 {
		frac *= 10
		if i < len(fp) {
			c := fp[i]
			if c < '0' || c > '9' {
				return 0, false
			}
			frac += uint64(c - '0')
		}
	}
	u := whole*1e6 + frac
	if u > math.MaxInt64 {
		return 0, false
	}
	v := int64(u)
	if neg {
		v = -v
	}
	return Micro(v), true
}
