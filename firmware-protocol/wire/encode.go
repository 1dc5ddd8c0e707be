package wire

import (
	"fmt"
	"strconv"
)

// Append appends the wire form of f to dst, "\n" included, and returns the extended
// slice. Commands are written with their CRC. For Sample, Average, BurstBegin and
// BurstEnd it does not allocate when dst has room.
//
// Append panics on a frame that cannot be sent, which is a programmer error: a text
// value that fails ValidText, NCh outside 1..MaxChannels, an Extra key that is empty,
// holds "=" or repeats a known key, an Unknown frame with a known or malformed tag, or a
// frame longer than MaxLine.
func Append(dst []byte, f Frame) []byte {
	start := len(dst)
	w := writer{b: dst}
	switch f := f.(type) {
	case Sample:
		w.begin(DeviceStart, "S")
		w.u(f.Seq)
		w.u(f.TimeUS)
		for _, c := range f.Counts[:checkNCh(f.NCh)] {
			w.u(uint32(c))
		}
	case Average:
		w.begin(DeviceStart, "A")
		w.u(f.Seq)
		w.u(f.TimeUS)
		w.u(f.N)
		for k := range checkNCh(f.NCh) {
			w.u(uint32(f.Mean[k]))
			w.u(uint32(f.Min[k]))
			w.u(uint32(f.Max[k]))
		}
	case BurstBegin:
		w.begin(DeviceStart, "B")
		w.u(f.Seq)
		w.u(f.TimeUS)
		w.u(f.Pre)
	case BurstEnd:
		w.begin(DeviceStart, "E")
		w.u(f.Seq)
		w.u(f.TimeUS)
	case Identity:
		w.begin(DeviceStart, "ID")
		w.ku("proto", f.Proto)
		w.ks("fw", f.Firmware)
		w.ks("board", f.Board)
		w.ku("bits", f.Bits)
		w.ku("ebits", f.EBits)
		w.ks("ref", string(f.Ref))
		w.ku("ref_uv", f.RefUV)
		w.ku("nch", f.NCh)
		w.ku("clk_hz", f.ClockHz)
		w.ku("max_hz", f.MaxHz)
		w.ku("slow_hz", f.SlowHz)
		w.ku("fast_hz", f.FastHz)
		w.ku("thr", f.Thr)
		w.ku("pre", f.Pre)
		w.ku("post", f.Post)
		w.kb("boot", f.Boot)
		w.extra(identityKeys, f.Extra)
	case Channel:
		w.begin(DeviceStart, "CH")
		w.ku("ch", f.Ch)
		w.km("div", f.Div)
		w.km("gain", f.Gain)
		w.ki("off_uv", f.OffUV)
	case Status:
		w.begin(DeviceStart, "ST")
		w.ku("up_s", f.UptimeS)
		w.ku("ovr", f.Overruns)
		w.ku("drop", f.Dropped)
		w.ks("reset", string(f.Reset))
		w.kb("run", f.Running)
		w.extra(statusKeys, f.Extra)
	case Ack:
		w.begin(DeviceStart, "OK")
		w.ks("cmd", f.Cmd)
	case Nak:
		w.begin(DeviceStart, "ER")
		w.ks("cmd", f.Cmd)
		w.ku("code", uint32(f.Code))
		w.ks("msg", f.Msg)
	case Unknown:
		if f.Start != DeviceStart && f.Start != CommandStart || knownTag(f.Name) ||
			!validTag(f.Start, []byte(f.Name)) {
			panic(fmt.Sprintf("wire: cannot send an Unknown frame %q%q", f.Start, f.Name))
		}
		w.begin(f.Start, f.Name)
		for _, s := range f.Fields {
			if !validField([]byte(s)) {
				panic(fmt.Sprintf("wire: invalid field %q", s))
			}
			w.raw(s)
		}
	case CmdID:
		w.begin(CommandStart, "id")
	case CmdStart:
		w.begin(CommandStart, "start")
	case CmdStop:
		w.begin(CommandStart, "stop")
	case CmdSave:
		w.begin(CommandStart, "save")
	case CmdStatus:
		w.begin(CommandStart, "status")
	case CmdRate:
		w.begin(CommandStart, "rate")
		w.ku("slow_hz", f.SlowHz)
		w.ku("fast_hz", f.FastHz)
	case CmdChan:
		w.begin(CommandStart, "chan")
		w.ku("n", f.N)
	case CmdBurst:
		w.begin(CommandStart, "burst")
		w.ku("thr", f.Thr)
		w.ku("pre", f.Pre)
		w.ku("post", f.Post)
	case CmdRef:
		w.begin(CommandStart, "ref")
		w.ks("src", string(f.Src))
		w.ku("ref_uv", f.RefUV)
	case CmdCal:
		w.begin(CommandStart, "cal")
		w.ku("ch", f.Ch)
		w.km("div", f.Div)
		w.km("gain", f.Gain)
		w.ki("off_uv", f.OffUV)
	default: // only a nil Frame gets here: the interface is closed
		panic("wire: cannot encode a nil Frame")
	}
	w.end()
	if len(w.b)-start > MaxLine {
		panic(fmt.Sprintf("wire: frame %.12q... is %d bytes, longer than MaxLine", w.b[start:], len(w.b)-start))
	}
	return w.b
}

func checkNCh(n int) int {
	if n < 1 || n > MaxChannels {
		panic(fmt.Sprintf("wire: NCh %d outside 1..%d", n, MaxChannels))
	}
	return n
}

// ValidText reports whether s can be sent as a text value (fw, board, ref, reset, cmd,
// msg): non-empty printable ASCII without space, "!", ">", "*", "," or "=".
func ValidText(s string) bool {
	if s == "" {
		return false
	}
	for i := 0; i < len(s); i++ {
		if !fieldByte(s[i]) || s[i] == ',' || s[i] == '=' {
			return false
		}
	}
	return true
}

// fieldByte reports whether c may occur in a field.
func fieldByte(c byte) bool {
	return c >= 0x21 && c <= 0x7e && c != DeviceStart && c != CommandStart && c != '*'
}

func validField(b []byte) bool {
	if len(b) == 0 {
		return false
	}
	for _, c := range b {
		if !fieldByte(c) {
			return false
		}
	}
	return true
}

// validTag checks the tag syntax for the given start character: 1 to 4 upper-case
// letters or digits beginning with a letter for device frames, 1 to 8 lower-case
// letters for commands.
func validTag(start byte, t []byte) bool {
	if start == DeviceStart {
		if len(t) < 1 || len(t) > 4 || t[0] < 'A' || t[0] > 'Z' {
			return false
		}
		for _, c := range t {
			if !(c >= 'A' && c <= 'Z' || c >= '0' && c <= '9') {
				return false
			}
		}
		return true
	}
	if len(t) < 1 || len(t) > 8 {
		return false
	}
	for _, c := range t {
		if c < 'a' || c > 'z' {
			return false
		}
	}
	return true
}

// writer builds one frame; body marks where the CRC starts.
type writer struct {
	b    []byte
	body int
}

func (w *writer) begin(start byte, tag string) {
	w.b = append(w.b, start)
	w.body = len(w.b)
	w.b = append(w.b, tag...)
}

func (w *writer) u(v uint32) {
	w.b = append(w.b, ' ')
	w.b = strconv.AppendUint(w.b, uint64(v), 10)
}

func (w *writer) key(k string) {
	w.b = append(w.b, ' ')
	w.b = append(w.b, k...)
	w.b = append(w.b, '=')
}

func (w *writer) ku(k string, v uint32) {
	w.key(k)
	w.b = strconv.AppendUint(w.b, uint64(v), 10)
}

func (w *writer) ki(k string, v int32) {
	w.key(k)
	w.b = strconv.AppendInt(w.b, int64(v), 10)
}

func (w *writer) km(k string, v Micro) {
	w.key(k)
	w.b = appendMicro(w.b, v)
}

func (w *writer) kb(k string, v bool) {
	w.key(k)
	if v {
		w.b = append(w.b, '1')
	} else {
		w.b = append(w.b, '0')
	}
}

func (w *writer) ks(k, v string) {
	if !ValidText(v) {
		panic(fmt.Sprintf("wire: invalid text value %s=%q", k, v))
	}
	w.key(k)
	w.b = append(w.b, v...)
}

func (w *writer) raw(s string) {
	w.b = append(w.b, ' ')
	w.b = append(w.b, s...)
}

func (w *writer) extra(known []string, extra []Field) {
	for _, f := range extra {
		if f.Key == "" || keyIndex(known, []byte(f.Key)) >= 0 || !validField([]byte(f.Key)) ||
			(f.Value != "" && !validField([]byte(f.Value))) || indexByte(f.Key, '=') >= 0 {
			panic(fmt.Sprintf("wire: cannot send extra field %q=%q", f.Key, f.Value))
		}
		w.key(f.Key)
		w.b = append(w.b, f.Value...)
	}
}

func indexByte(s string, c byte) int {
	for i := 0; i < len(s); i++ {
		if s[i] == c {
			return i
		}
	}
	return -1
}

const hexDigits = "0123456789ABCDEF"

func (w *writer) end() {
	crc := CRC16(w.b[w.body:])
	w.b = append(w.b, ' ', '*',
		hexDigits[crc>>12], hexDigits[crc>>8&15], hexDigits[crc>>4&15], hexDigits[crc&15], '\n')
}
