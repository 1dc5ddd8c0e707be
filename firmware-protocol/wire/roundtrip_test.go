package wire

import (
	"errors"
	"reflect"
	"strings"
	"testing"
)

// sampleFrames holds one of every frame type with non-trivial values.
var sampleFrames = []Frame{
	Identity{Proto: 1, Firmware: "0.1.0", Board: "328p16", Bits: 10, EBits: 12, Ref: RefAVcc,
		RefUV: 5000000, NCh: 2, ClockHz: 16000000, MaxHz: 1000, SlowHz: 10, FastHz: 500,
		Thr: 8, Pre: 32, Post: 32, Boot: true, Extra: []Field{{"sn", "wren-01"}}},
	Channel{Ch: 1, Div: 333333, Gain: 1001200, OffUV: -3000},
	Sample{Seq: 4294967295, TimeUS: 4294967295, NCh: 4, Counts: [4]uint16{0, 1, 4095, 65535}},
	Sample{Seq: 12, TimeUS: 3400, NCh: 1, Counts: [4]uint16{2048}},
	Average{Seq: 7, TimeUS: 100000, N: 50, NCh: 2, Mean: [4]uint16{2000, 10}, Min: [4]uint16{1990, 9}, Max: [4]uint16{2011, 12}},
	BurstBegin{Seq: 8, TimeUS: 123456, Pre: 32},
	BurstEnd{Seq: 99, TimeUS: 200000},
	Status{UptimeS: 123, Overruns: 1, Dropped: 2, Reset: ResetPin, Running: true},
	Ack{Cmd: "rate"},
	Nak{Cmd: "rate", Code: CodeRange, Msg: "range"},
	Unknown{Start: DeviceStart, Name: "TEMP", Fields: []string{"c=21.5", "x"}},
	Unknown{Start: CommandStart, Name: "blink"},
	CmdID{}, CmdStart{}, CmdStop{}, CmdSave{}, CmdStatus{},
	CmdRate{SlowHz: 10, FastHz: 500},
	CmdChan{N: 2},
	CmdBurst{Thr: 8, Pre: 32, Post: 16},
	CmdRef{Src: RefInternal, RefUV: 1100000},
	CmdCal{Ch: 0, Div: 333333, Gain: 1001200, OffUV: -3000},
}

func TestRoundTripEveryType(t *testing.T) {
	for _, f := range sampleFrames {
		line := Append(nil, f)
		got, err := Parse(line)
		if err != nil {
			t.Errorf("%T: Parse(%q): %v", f, line, err)
			continue
		}
		if !reflect.DeepEqual(got, f) {
			t.Errorf("%T: Parse(%q) = %#v, want %#v", f, line, got, f)
		}
		if len(line) > MaxLine {
			t.Errorf("%T: %d bytes", f, len(line))
		}
	}
}

func TestAppendExactBytes(t *testing.T) {
	// CRCs here were computed independently with a bitwise CRC-16/XMODEM in Python.
	got := string(Append(nil, BurstEnd{Seq: 7, TimeUS: 1000}))
	if want := "!E 7 1000 *93DF\n"; got != want {
		t.Errorf("got %q, want %q", got, want)
	}
}

func TestParseErrors(t *testing.T) {
	good := string(Append(nil, Sample{Seq: 1, TimeUS: 2, NCh: 1, Counts: [4]uint16{3}}))
	tests := []struct {
		name, line string
		want       error
		reason     string
	}{
		{"bad crc", strings.Replace(good, "3", "4", 1), ErrCRC, "CRC"},
		{"cut", good[:len(good)-1], ErrMalformed, "cut"},
		{"no crc", "!S 1 2 3\n", ErrMalformed, "no CRC"},
		{"lower hex", strings.ToLower(good), ErrMalformed, "CRC digits"},
		{"bad tag", "!s 1 *0000\n", ErrCRC, "CRC"},
		{"no start", "S 1 2 3\n", ErrMalformed, "start"},
		{"unknown tag is not an error", string(Append(nil, Unknown{Start: '!', Name: "X"})), nil, ""},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := Parse([]byte(tt.line))
			if tt.want == nil {
				if err != nil {
					t.Fatalf("unexpected %v", err)
				}
				return
			}
			var fe *FrameError
			if !errors.As(err, &fe) || !errors.Is(err, tt.want) {
				t.Fatalf("Parse(%q) = %v, want a *FrameError wrapping %v", tt.line, err, tt.want)
			}
			if !strings.Contains(fe.Reason, tt.reason) {
				t.Errorf("reason %q does not mention %q", fe.Reason, tt.reason)
			}
			if string(fe.Line) != tt.line {
				t.Errorf("Line = %q, want the input", fe.Line)
			}
		})
	}
}

func TestCommandWithoutCRC(t *testing.T) {
	d := NewDecoder(strings.NewReader(">status\n>rate slow_hz=5 fast_hz=100\r\n!OK cmd=x\n"))
	d.AllowNoCRC = true
	f, err := d.Next()
	if err != nil || f != (CmdStatus{}) {
		t.Fatalf("got %v, %v", f, err)
	}
	f, err = d.Next()
	if err != nil || f != (CmdRate{SlowHz: 5, FastHz: 100}) {
		t.Fatalf("got %v, %v", f, err)
	}
	if _, err = d.Next(); !errors.Is(err, ErrMalformed) {
		t.Fatalf("device frame without CRC: got %v, want ErrMalformed", err)
	}
}

func TestMicro(t *testing.T) {
	tests := []struct {
		s string
		m Micro
	}{
		{"1", 1000000}, {"0.333333", 333333}, {"1.0012", 1001200}, {"-0.5", -500000}, {"0", 0},
		{"-2.000001", -2000001},
	}
	for _, tt := range tests {
		if got := tt.m.String(); got != tt.s {
			t.Errorf("Micro(%d).String() = %q, want %q", tt.m, got, tt.s)
		}
		if got, ok := parseMicro([]byte(tt.s)); !ok || got != tt.m {
			t.Errorf("parseMicro(%q) = %d, %v", tt.s, got, ok)
		}
	}
	for _, bad := range []string{"", "-", ".5", "1.", "1.1234567", "1e3", "+1", "99999999999999"} {
		if _, ok := parseMicro([]byte(bad)); ok {
			t.Errorf("parseMicro(%q) accepted", bad)
		}
	}
	if got := MicroOf(0.3333334); got != 333333 {
		t.Errorf("MicroOf = %d", got)
	}
}

func TestAppendPanicsOnBadText(t *testing.T) {
	for _, f := range []Frame{
		Ack{Cmd: "a b"}, Ack{Cmd: ""}, Sample{NCh: 0}, Sample{NCh: 5},
		Unknown{Start: '!', Name: "S"}, Unknown{Start: '!', Name: "bad"},
		Identity{Firmware: "x", Board: "y", Ref: "avcc", Extra: []Field{{"proto", "2"}}},
	} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("Append(%#v) did not panic", f)
				}
			}()
			Append(nil, f)
		}()
	}
}

func TestAppendSampleDoesNotAllocate(t *testing.T) {
	buf := make([]byte, 0, 256)
	s := Sample{Seq: 1234, TimeUS: 56789012, NCh: 4, Counts: [4]uint16{1, 2, 3, 4}}
	a := Average{Seq: 1, TimeUS: 2, N: 50, NCh: 4}
	n := testing.AllocsPerRun(100, func() {
		buf = Append(buf[:0], s)
		buf = Append(buf[:0], a)
		buf = Append(buf[:0], BurstBegin{Seq: 1, TimeUS: 2, Pre: 3})
		buf = Append(buf[:0], BurstEnd{Seq: 1, TimeUS: 2})
	})
	if n != 0 {
		t.Errorf("Append allocates %v times per run", n)
	}
}

func TestClock(t *testing.T) {
	var c Clock
	steps := []struct {
		t    uint32
		want int64
	}{
		{4294967000, 4294967000},
		{100, 4294967396},        // wrapped: +396 µs
		{50, 4294967346},         // a step back of 50 µs (pre-trigger ring)
		{2000000000, 6294967296}, // +1999999950 µs, still under 2^31
	}
	for _, s := range steps {
		if got := c.Micros(s.t); got != s.want {
			t.Errorf("Micros(%d) = %d, want %d", s.t, got, s.want)
		}
	}
	c.Reset()
	if got := c.Seconds(1500000); got != 1.5 {
		t.Errorf("after Reset: %v s", got)
	}
}
