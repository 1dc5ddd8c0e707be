package wire

import (
	"bytes"
	"errors"
	"io"
	"reflect"
	"testing"
)

func FuzzDecode(f *testing.F) {
	for _, fr := range sampleFrames {
		f.Add(Append(nil, fr))
	}
	f.Add([]byte("junk!S 1 2\n!S 1 2 3 *0000\n>id\n!!>>\r\n"))
	f.Add(bytes.Repeat([]byte("!A 1 2 3 "), 40))
	f.Fuzz(func(t *testing.T, in []byte) {
		d := NewDecoder(bytes.NewReader(in))
		var frames, errs int64
		for {
			fr, err := d.Next()
			if err == io.EOF {
				break
			}
			var fe *FrameError
			if err != nil {
				if !errors.As(err, &fe) {
					t.Fatalf("Next returned %v, not a *FrameError", err)
				}
				if !errors.Is(err, ErrCRC) && !errors.Is(err, ErrMalformed) {
					t.Fatalf("%v wraps neither sentinel", err)
				}
				if fe.Offset < 0 || fe.Offset+int64(len(fe.Line)) > int64(len(in)) ||
					!bytes.Equal(in[fe.Offset:fe.Offset+int64(len(fe.Line))], fe.Line) {
					t.Fatalf("FrameError Offset %d Line %q do not match the input", fe.Offset, fe.Line)
				}
				errs++
				continue
			}
			frames++
			// A decoded frame survives a second trip through its canonical form.
			again, err := Parse(Append(nil, fr))
			if err != nil || !reflect.DeepEqual(again, fr) {
				t.Fatalf("re-encoding %#v: got %#v, %v", fr, again, err)
			}
		}
		st := d.Stats()
		if st.Good+st.Unknown != frames || st.BadCRC+st.Malformed != errs {
			t.Fatalf("stats %+v, but %d frames and %d errors returned", st, frames, errs)
		}
		if d.Offset() != int64(len(in)) {
			t.Fatalf("consumed %d of %d bytes", d.Offset(), len(in))
		}
		if st.Skipped > int64(len(in)) || st.Lost < 0 {
			t.Fatalf("stats %+v for %d bytes", st, len(in))
		}
	})
}

// FuzzRoundTrip builds one frame of each type from the fuzz inputs and checks
// decode(encode(x)) == x through the Decoder.
func FuzzRoundTrip(f *testing.F) {
	f.Add(uint32(1), uint32(2), uint32(3), uint32(4), int64(333333), "0.1.0", "rate", uint8(3))
	f.Add(uint32(0), uint32(4294967295), uint32(65535), uint32(0), int64(-1), "x", "y", uint8(0))
	f.Fuzz(func(t *testing.T, a, b, c, e uint32, m int64, s1, s2 string, n uint8) {
		// Keep texts and small ID numbers within their real ranges, so that the longest
		// frame (ID) fits in MaxLine; Append panics on longer frames by contract.
		s1, s2 = s1[:min(len(s1), 8)], s2[:min(len(s2), 8)]
		if !ValidText(s1) {
			s1 = "fw"
		}
		if !ValidText(s2) {
			s2 = "cmd"
		}
		nch := int(n%MaxChannels) + 1
		c16 := func(k int) uint16 { return uint16(a>>k ^ c<<k ^ e) }
		smp := Sample{Seq: a, TimeUS: b, NCh: nch}
		avg := Average{Seq: a, TimeUS: b, N: c, NCh: nch}
		for k := range nch {
			smp.Counts[k] = c16(k)
			avg.Mean[k], avg.Min[k], avg.Max[k] = c16(k), c16(k+3), c16(k+7)
		}
		frames := []Frame{
			smp, avg,
			BurstBegin{Seq: a, TimeUS: b, Pre: c}, BurstEnd{Seq: a, TimeUS: e},
			Identity{Proto: a % 8, Firmware: s1, Board: s2, Bits: b % 32, EBits: c % 32, Ref: Ref(s2), RefUV: e,
				NCh: (a ^ b) % 8, ClockHz: b ^ c, MaxHz: c ^ e, SlowHz: a + 1, FastHz: b + 1, Thr: c + 1,
				Pre: e + 1, Post: a + b, Boot: n&1 == 1, Extra: []Field{{Key: "x" + s1[:min(len(s1), 4)], Value: s2[:min(len(s2), 4)]}}},
			Channel{Ch: a, Div: Micro(m), Gain: Micro(-m), OffUV: int32(b)},
			Status{UptimeS: a, Overruns: b, Dropped: c, Reset: ResetCause(s1), Running: n&2 == 2},
			Ack{Cmd: s2}, Nak{Cmd: s2, Code: ErrorCode(a), Msg: s1},
			Unknown{Start: DeviceStart, Name: "Z", Fields: []string{s1, s2}},
			CmdID{}, CmdStart{}, CmdStop{}, CmdSave{}, CmdStatus{},
			CmdRate{SlowHz: a, FastHz: b}, CmdChan{N: c}, CmdBurst{Thr: a, Pre: b, Post: c},
			CmdRef{Src: Ref(s1), RefUV: e}, CmdCal{Ch: a, Div: Micro(m), Gain: Micro(m / 3), OffUV: int32(-int64(e) / 2)},
		}
		var stream []byte
		for _, fr := range frames {
			line := Append(nil, fr)
			if len(line) > MaxLine {
				t.Fatalf("%T encodes to %d bytes", fr, len(line))
			}
			stream = append(stream, line...)
		}
		d := NewDecoder(bytes.NewReader(stream))
		for i, want := range frames {
			got, err := d.Next()
			if err != nil {
				t.Fatalf("frame %d (%T): %v", i, want, err)
			}
			if !reflect.DeepEqual(got, want) {
				t.Fatalf("frame %d: got %#v, want %#v", i, got, want)
			}
		}
		if _, err := d.Next(); err != io.EOF {
			t.Fatalf("after the last frame: %v", err)
		}
	})
}
