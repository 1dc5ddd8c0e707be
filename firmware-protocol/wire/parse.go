package wire

import (
	"bytes"
	"fmt"
	"math"
)

// Parse decodes one frame: line runs from the start character to the "\n" inclusive
// (a token from ScanFrames). A frame that fails is reported as a *FrameError (Offset 0)
// wrapping ErrCRC or ErrMalformed. Commands must carry a CRC; Decoder.AllowNoCRC
// relaxes that for streams a person types.
func Parse(line []byte) (Frame, error) {
	f, reason, err := parse(line, false)
	if err != nil {
		return nil, newFrameError(0, reason, err, line)
	}
	return f, nil
}

// parse is Parse without the error allocation: on failure it returns the reason and
// the sentinel.
func parse(line []byte, allowNoCRC bool) (Frame, string, error) {
	if len(line) == 0 || line[0] != DeviceStart && line[0] != CommandStart {
		return nil, "no start character", ErrMalformed
	}
	if len(line) > MaxLine {
		return nil, fmt.Sprintf("longer than %d bytes", MaxLine), ErrMalformed
	}
	start := line[0]
	n := len(line)
	if line[n-1] != '\n' {
		if n == MaxLine {
			return nil, fmt.Sprintf("no end of line within %d bytes", MaxLine), ErrMalformed
		}
		return nil, "cut: no end of line", ErrMalformed
	}
	n--
	if n > 1 && line[n-1] == '\r' {
		n--
	}
	body := line[1:n]
	if m := len(body); m >= 6 && body[m-6] == ' ' && body[m-5] == '*' {
		want, ok := parseHex4(body[m-4:])
		if !ok {
			return nil, fmt.Sprintf("bad CRC digits %q", body[m-4:]), ErrMalformed
		}
		body = body[:m-6]
		if got := CRC16(body); got != want {
			return nil, fmt.Sprintf("CRC %04X sent, %04X computed", want, got), ErrCRC
		}
	} else if start != CommandStart || !allowNoCRC {
		return nil, "no CRC", ErrMalformed
	}
	tag := body
	rest := body[len(body):]
	if i := bytes.IndexByte(body, ' '); i >= 0 {
		tag, rest = body[:i], body[i:]
	}
	if !validTag(start, tag) {
		return nil, fmt.Sprintf("bad tag %q", tag), ErrMalformed
	}
	if reason := checkFields(rest); reason != "" {
		return nil, reason, ErrMalformed
	}
	fs := fields{rest}
	var f Frame
	var reason string
	if start == DeviceStart {
		f, reason = parseDevice(tag, fs)
	} else {
		f, reason = parseCommand(tag, fs)
	}
	if reason != "" {
		return nil, string(tag) + ": " + reason, ErrMalformed
	}
	return f, "", nil
}

func parseHex4(b []byte) (uint16, bool) {
	var v uint16
	for _, c := range b {
		switch {
		case c >= '0' && c <= '9':
			v = v<<4 | uint16(c-'0')
		case c >= 'A' && c <= 'F':
			v = v<<4 | uint16(c-'A'+10)
		default:
			return 0, false
		}
	}
	return v, true
}

// checkFields checks that rest is a run of " field" with no empty field.
func checkFields(rest []byte) string {
	prevSpace := false
	for i, c := range rest {
		if c == ' ' {
			if prevSpace {
				return "empty field"
			}
			prevSpace = true
			continue
		}
		if !fieldByte(c) {
			return fmt.Sprintf("byte %#02x not allowed at %d", c, i)
		}
		prevSpace = false
	}
	if prevSpace {
		return "trailing space"
	}
	return ""
}

// fields iterates over " a b c"; the syntax was checked by checkFields.
type fields struct{ rest []byte }

func (f *fields) next() ([]byte, bool) {
	if len(f.rest) == 0 {
		return nil, false
	}
	f.rest = f.rest[1:]
	i := bytes.IndexByte(f.rest, ' ')
	if i < 0 {
		i = len(f.rest)
	}
	v := f.rest[:i]
	f.rest = f.rest[i:]
	return v, true
}

func parseDevice(tag []byte, fs fields) (Frame, string) {
	switch string(tag) {
	case "S":
		var v [2 + MaxChannels]uint32
		n, reason := positional(fs, v[:])
		if reason != "" {
			return nil, reason
		}
		if n < 3 {
			return nil, "needs seq, t_us and 1 to 4 counts"
		}
		s := Sample{Seq: v[0], TimeUS: v[1], NCh: n - 2}
		for k := range s.NCh {
			if v[2+k] > math.MaxUint16 {
				return nil, "count above 65535"
			}
			s.Counts[k] = uint16(v[2+k])
		}
		return s, ""
	case "A":
		var v [3 + 3*MaxChannels]uint32
		n, reason := positional(fs, v[:])
		if reason != "" {
			return nil, reason
		}
		if n < 6 || (n-3)%3 != 0 {
			return nil, "needs seq, t_us, n and 1 to 4 triples mean lo hi"
		}
		a := Average{Seq: v[0], TimeUS: v[1], N: v[2], NCh: (n - 3) / 3}
		for k := range a.NCh {
			m, lo, hi := v[3+3*k], v[4+3*k], v[5+3*k]
			if m > math.MaxUint16 || lo > math.MaxUint16 || hi > math.MaxUint16 {
				return nil, "count above 65535"
			}
			a.Mean[k], a.Min[k], a.Max[k] = uint16(m), uint16(lo), uint16(hi)
		}
		return a, ""
	case "B":
		var v [3]uint32
		n, reason := positional(fs, v[:])
		if reason == "" && n != 3 {
			reason = "needs seq, t_us and pre"
		}
		if reason != "" {
			return nil, reason
		}
		return BurstBegin{Seq: v[0], TimeUS: v[1], Pre: v[2]}, ""
	case "E":
		var v [2]uint32
		n, reason := positional(fs, v[:])
		if reason == "" && n != 2 {
			reason = "needs seq and t_us"
		}
		if reason != "" {
			return nil, reason
		}
		return BurstEnd{Seq: v[0], TimeUS: v[1]}, ""
	case "ID":
		return parseIdentity(fs)
	case "CH":
		var c Channel
		reason := eachKV(fs, channelKeys, nil, func(i int, v []byte) bool {
			var ok bool
			switch i {
			case 0:
				c.Ch, ok = parseU32(v)
			case 1:
				c.Div, ok = parseMicro(v)
			case 2:
				c.Gain, ok = parseMicro(v)
			case 3:
				c.OffUV, ok = parseI32(v)
			}
			return ok
		})
		return c, reason
	case "ST":
		var s Status
		reason := eachKV(fs, statusKeys, &s.Extra, func(i int, v []byte) bool {
			var ok bool
			switch i {
			case 0:
				s.UptimeS, ok = parseU32(v)
			case 1:
				s.Overruns, ok = parseU32(v)
			case 2:
				s.Dropped, ok = parseU32(v)
			case 3:
				var t string
				t, ok = parseText(v)
				s.Reset = ResetCause(t)
			case 4:
				s.Running, ok = parseBool(v)
			}
			return ok
		})
		return s, reason
	case "OK":
		var a Ack
		reason := eachKV(fs, ackKeys, nil, func(i int, v []byte) bool {
			var ok bool
			a.Cmd, ok = parseText(v)
			return ok
		})
		return a, reason
	case "ER":
		var e Nak
		reason := eachKV(fs, nakKeys, nil, func(i int, v []byte) bool {
			var ok bool
			switch i {
			case 0:
				e.Cmd, ok = parseText(v)
			case 1:
				var c uint32
				c, ok = parseU32(v)
				e.Code = ErrorCode(c)
			case 2:
				e.Msg, ok = parseText(v)
			}
			return ok
		})
		return e, reason
	}
	return unknown(DeviceStart, tag, fs), ""
}

func parseIdentity(fs fields) (Frame, string) {
	var id Identity
	u32 := [...]*uint32{0: &id.Proto, 3: &id.Bits, 4: &id.EBits, 6: &id.RefUV, 7: &id.NCh,
		8: &id.ClockHz, 9: &id.MaxHz, 10: &id.SlowHz, 11: &id.FastHz, 12: &id.Thr, 13: &id.Pre,
		14: &id.Post, 15: nil}
	reason := eachKV(fs, identityKeys, &id.Extra, func(i int, v []byte) bool {
		var ok bool
		switch i {
		case 1:
			id.Firmware, ok = parseText(v)
		case 2:
			id.Board, ok = parseText(v)
		case 5:
			var t string
			t, ok = parseText(v)
			id.Ref = Ref(t)
		case 15:
			id.Boot, ok = parseBool(v)
		default:
			*u32[i], ok = parseU32(v)
		}
		return ok
	})
	return id, reason
}

func parseCommand(tag []byte, fs fields) (Frame, string) {
	var f Frame
	var reason string
	switch string(tag) {
	case "id", "start", "stop", "save", "status":
		reason = eachKV(fs, nil, nil, nil)
		switch string(tag) {
		case "id":
			f = CmdID{}
		case "start":
			f = CmdStart{}
		case "stop":
			f = CmdStop{}
		case "save":
			f = CmdSave{}
		default:
			f = CmdStatus{}
		}
	case "rate":
		var c CmdRate
		reason = eachKV(fs, rateKeys, nil, func(i int, v []byte) bool {
			var ok bool
			if i == 0 {
				c.SlowHz, ok = parseU32(v)
			} else {
				c.FastHz, ok = parseU32(v)
			}
			return ok
		})
		f = c
	case "chan":
		var c CmdChan
		reason = eachKV(fs, chanKeys, nil, func(i int, v []byte) bool {
			var ok bool
			c.N, ok = parseU32(v)
			return ok
		})
		f = c
	case "burst":
		var c CmdBurst
		p := [...]*uint32{&c.Thr, &c.Pre, &c.Post}
		reason = eachKV(fs, burstKeys, nil, func(i int, v []byte) bool {
			var ok bool
			*p[i], ok = parseU32(v)
			return ok
		})
		f = c
	case "ref":
		var c CmdRef
		reason = eachKV(fs, refKeys, nil, func(i int, v []byte) bool {
			var ok bool
			if i == 0 {
				var t string
				t, ok = parseText(v)
				c.Src = Ref(t)
			} else {
				c.RefUV, ok = parseU32(v)
			}
			return ok
		})
		f = c
	case "cal":
		var c CmdCal
		reason = eachKV(fs, channelKeys, nil, func(i int, v []byte) bool {
			var ok bool
			switch i {
			case 0:
				c.Ch, ok = parseU32(v)
			case 1:
				c.Div, ok = parseMicro(v)
			case 2:
				c.Gain, ok = parseMicro(v)
			case 3:
				c.OffUV, ok = parseI32(v)
			}
			return ok
		})
		f = c
	default:
		return unknown(CommandStart, tag, fs), ""
	}
	if reason != "" {
		return nil, reason
	}
	return f, ""
}

// The keys of each key=value frame, in the order Append writes them.
var (
	identityKeys = []string{"proto", "fw", "board", "bits", "ebits", "ref", "ref_uv", "nch",
		"clk_hz", "max_hz", "slow_hz", "fast_hz", "thr", "pre", "post", "boot"}
	channelKeys = []string{"ch", "div", "gain", "off_uv"}
	statusKeys  = []string{"up_s", "ovr", "drop", "reset", "run"}
	ackKeys     = []string{"cmd"}
	nakKeys     = []string{"cmd", "code", "msg"}
	rateKeys    = []string{"slow_hz", "fast_hz"}
	chanKeys    = []string{"n"}
	burstKeys   = []string{"thr", "pre", "post"}
	refKeys     = []string{"src", "ref_uv"}
)

func keyIndex(keys []string, k []byte) int {
	for i, s := range keys {
		if string(k) == s {
			return i
		}
	}
	return -1
}

// eachKV walks key=value fields: set is called once for each known key with its index
// in keys; unknown keys go to extra (or are dropped when extra is nil). It returns a
// reason when a field is not key=value, a key repeats or is missing, or set fails.
func eachKV(fs fields, keys []string, extra *[]Field, set func(i int, v []byte) bool) string {
	var seen uint32
	for {
		f, ok := fs.next()
		if !ok {
			break
		}
		eq := bytes.IndexByte(f, '=')
		if eq <= 0 {
			return fmt.Sprintf("field %q is not key=value", f)
		}
		k, v := f[:eq], f[eq+1:]
		i := keyIndex(keys, k)
		if i < 0 {
			if extra != nil {
				*extra = append(*extra, Field{Key: string(k), Value: string(v)})
			}
			continue
		}
		if seen&(1<<i) != 0 {
			return fmt.Sprintf("key %s repeated", k)
		}
		seen |= 1 << i
		if !set(i, v) {
			return fmt.Sprintf("bad value %s=%q", k, v)
		}
	}
	for i, k := range keys {
		if seen&(1<<i) == 0 {
			return "missing key " + k
		}
	}
	return ""
}

// positional reads unsigned integer fields into v; it fails on more than len(v).
func positional(fs fields, v []uint32) (int, string) {
	n := 0
	for {
		f, ok := fs.next()
		if !ok {
			return n, ""
		}
		if n == len(v) {
			return n, "too many fields"
		}
		if v[n], ok = parseU32(f); !ok {
			return n, fmt.Sprintf("bad number %q", f)
		}
		n++
	}
}

func parseU32(b []byte) (uint32, bool) {
	if len(b) == 0 || len(b) > 10 {
		return 0, false
	}
	var v uint64
	for _, c := range b {
		if c < '0' || c > '9' {
			return 0, false
		}
		v = v*10 + uint64(c-'0')
	}
	if v > math.MaxUint32 {
		return 0, false
	}
	return uint32(v), true
}

func parseI32(b []byte) (int32, bool) {
	neg := len(b) > 0 && b[0] == '-'
	if neg {
		b = b[1:]
	}
	u, ok := parseU32(b)
	if !ok {
		return 0, false
	}
	if neg {
		if u > 1<<31 {
			return 0, false
		}
		return int32(-int64(u)), true
	}
	if u > math.MaxInt32 {
		return 0, false
	}
	return int32(u), true
}

func parseBool(b []byte) (bool, bool) {
	if len(b) == 1 && (b[0] == '0' || b[0] == '1') {
		return b[0] == '1', true
	}
	return false, false
}

func parseText(b []byte) (string, bool) {
	s := string(b)
	return s, ValidText(s)
}

func unknown(start byte, tag []byte, fs fields) Unknown {
	u := Unknown{Start: start, Name: string(tag)}
	for {
		f, ok := fs.next()
		if !ok {
			return u
		}
		u.Fields = append(u.Fields, string(f))
	}
}
