package wire

import (
	"bufio"
	"bytes"
	"errors"
	"io"
	"reflect"
	"strings"
	"testing"
	"testing/iotest"
)

func enc(fs ...Frame) []byte {
	var b []byte
	for _, f := range fs {
		b = Append(b, f)
	}
	return b
}

func s1(seq, t uint32, c uint16) Sample {
	return Sample{Seq: seq, TimeUS: t, NCh: 1, Counts: [4]uint16{c}}
}

// result is what one Next call gave.
type result struct {
	f   Frame
	err error
}

func decodeAll(t *testing.T, r io.Reader) ([]result, Stats) {
	t.Helper()
	d := NewDecoder(r)
	var out []result
	for {
		f, err := d.Next()
		if err == io.EOF {
			return out, d.Stats()
		}
		var fe *FrameError
		if err != nil && !errors.As(err, &fe) {
			t.Fatalf("Next: %v", err)
		}
		out = append(out, result{f, err})
	}
}

var readMakers = []struct {
	name string
	fn   func(io.Reader) io.Reader
}{
	{"full", func(r io.Reader) io.Reader { return r }},
	{"byte", iotest.OneByteReader},
	{"half", iotest.HalfReader},
	{"dataerr", iotest.DataErrReader},
}

func TestDecoderResync(t *testing.T) {
	good := enc(s1(1, 10, 100))
	// Positions of the expected errors are marked in the comments.
	var in bytes.Buffer
	in.WriteString("boot noise \x00\xff") // skipped
	in.Write(good)                        // frame 1
	in.Write(good[:9])                    // cut: the next "!" ends it (malformed)
	in.Write(enc(s1(2, 20, 200)))         // frame 2
	bad := enc(s1(3, 30, 300))
	bad[3] ^= 0x01 // bit flip: bad CRC
	in.Write(bad)
	in.WriteString("!S " + strings.Repeat("9", 300) + "\n") // too long
	in.Write(enc(s1(5, 50, 500)))                           // frame 3; seq 3 and 4 lost
	in.Write(enc(Unknown{Start: '!', Name: "NEW", Fields: []string{"a=1"}}))
	in.Write(enc(s1(6, 60, 600))[:10]) // cut by the end of the stream
	for _, rm := range readMakers {
		t.Run(rm.name, func(t *testing.T) {
			res, st := decodeAll(t, rm.fn(bytes.NewReader(in.Bytes())))
			var kinds []string
			for _, r := range res {
				switch {
				case errors.Is(r.err, ErrCRC):
					kinds = append(kinds, "crc")
				case errors.Is(r.err, ErrMalformed):
					kinds = append(kinds, "bad")
				case r.err != nil:
					kinds = append(kinds, r.err.Error())
				default:
					kinds = append(kinds, r.f.Tag())
				}
			}
			want := []string{"S", "bad", "S", "crc", "bad", "S", "NEW", "bad"}
			if !reflect.DeepEqual(kinds, want) {
				t.Fatalf("got %v, want %v", kinds, want)
			}
			wantSt := Stats{Good: 3, Unknown: 1, BadCRC: 1, Malformed: 3, Lost: 2, Skipped: 13}
			// The too-long line is cut at MaxLine; its remaining 49 bytes are skipped.
			wantSt.Skipped += int64(len("!S ") + 300 + 1 - MaxLine)
			if st != wantSt {
				t.Errorf("stats %+v, want %+v", st, wantSt)
			}
			if got := res[2].f.(Sample).Counts[0]; got != 200 {
				t.Errorf("frame after the cut: count %d", got)
			}
		})
	}
}

func TestFrameErrorOffset(t *testing.T) {
	a := enc(s1(1, 1, 1))
	b := enc(s1(2, 2, 2))
	b[3] = '7' // the seq digit: CRC fails
	in := append([]byte("xx"), a...)
	in = append(in, b...)
	d := NewDecoder(bytes.NewReader(in))
	if _, err := d.Next(); err != nil {
		t.Fatal(err)
	}
	_, err := d.Next()
	var fe *FrameError
	if !errors.As(err, &fe) {
		t.Fatalf("got %v", err)
	}
	if want := int64(2 + len(a)); fe.Offset != want {
		t.Errorf("Offset %d, want %d", fe.Offset, want)
	}
	if !bytes.Equal(fe.Line, b) {
		t.Errorf("Line %q, want %q", fe.Line, b)
	}
	if !strings.HasPrefix(err.Error(), "wire: CRC mismatch at byte ") {
		t.Errorf("message %q", err)
	}
	if _, err := d.Next(); err != io.EOF {
		t.Errorf("then %v, want EOF", err)
	}
}

func TestLostBySequence(t *testing.T) {
	tests := []struct {
		name   string
		frames []Frame
		lost   int64
	}{
		{"none", []Frame{s1(0, 0, 0), s1(1, 0, 0), s1(2, 0, 0)}, 0},
		{"gap", []Frame{s1(0, 0, 0), s1(4, 0, 0)}, 3},
		{"wrap", []Frame{s1(4294967294, 0, 0), s1(4294967295, 0, 0), s1(0, 0, 0), s1(2, 0, 0)}, 1},
		{"restart is not loss", []Frame{s1(100, 0, 0), s1(0, 0, 0), s1(1, 0, 0)}, 0},
		{"boot ID resets", []Frame{s1(5, 0, 0), Identity{Proto: 1, Firmware: "f", Board: "b", Ref: "avcc", Boot: true}, s1(3, 0, 0)}, 0},
		{"burst markers", []Frame{s1(0, 0, 0), BurstBegin{Seq: 3}, s1(3, 0, 0), s1(4, 0, 0), BurstEnd{Seq: 5},
			Average{Seq: 7, NCh: 1}}, 2 + 2},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, st := decodeAll(t, bytes.NewReader(enc(tt.frames...)))
			if st.Lost != tt.lost {
				t.Errorf("Lost %d, want %d", st.Lost, tt.lost)
			}
		})
	}
}

// flaky returns its data in pieces with an error between them, like a serial port
// whose read timed out.
type flaky struct {
	parts [][]byte
	err   error
}

func (f *flaky) Read(p []byte) (int, error) {
	if len(f.parts) == 0 {
		return 0, io.EOF
	}
	part := f.parts[0]
	if part == nil {
		f.parts = f.parts[1:]
		return 0, f.err
	}
	n := copy(p, part)
	f.parts[0] = part[n:]
	if len(f.parts[0]) == 0 {
		f.parts = f.parts[1:]
	}
	return n, nil
}

func TestReadErrorKeepsPartialFrame(t *testing.T) {
	frame := enc(s1(1, 2, 3))
	errTimeout := errors.New("timeout")
	r := &flaky{parts: [][]byte{frame[:5], nil, frame[5:]}, err: errTimeout}
	d := NewDecoder(r)
	if _, err := d.Next(); err != errTimeout {
		t.Fatalf("got %v, want the reader's error", err)
	}
	f, err := d.Next()
	if err != nil || f != s1(1, 2, 3) {
		t.Fatalf("after the error: %v, %v", f, err)
	}
}

func TestEmptyReadsGiveNoProgress(t *testing.T) {
	d := NewDecoder(iotest.TimeoutReader(strings.NewReader("x"))) // "x", then (0, ErrTimeout)
	if _, err := d.Next(); !errors.Is(err, iotest.ErrTimeout) {
		t.Fatalf("got %v", err)
	}
	d = NewDecoder(zeroReader{})
	if _, err := d.Next(); err != io.ErrNoProgress {
		t.Fatalf("got %v, want io.ErrNoProgress", err)
	}
}

type zeroReader struct{}

func (zeroReader) Read(p []byte) (int, error) { return 0, nil }

func TestResetAfterUnplug(t *testing.T) {
	first := append(enc(s1(0, 0, 0), s1(1, 0, 0)), enc(s1(2, 0, 0))[:7]...)
	d := NewDecoder(bytes.NewReader(first))
	for i := 0; i < 2; i++ {
		if _, err := d.Next(); err != nil {
			t.Fatal(err)
		}
	}
	if _, err := d.Next(); !errors.Is(err, ErrMalformed) {
		t.Fatalf("cut at unplug: got %v", err)
	}
	d.Reset(bytes.NewReader(enc(s1(6, 0, 0))))
	if f, err := d.Next(); err != nil || f.(Sample).Seq != 6 {
		t.Fatalf("after Reset: %v %v", f, err)
	}
	if st := d.Stats(); st.Lost != 4 || st.Good != 3 {
		t.Errorf("stats %+v, want Lost 4 (seq 2..5), Good 3", st)
	}
}

func TestScanFrames(t *testing.T) {
	in := "junk" + string(enc(s1(1, 1, 1))) + "!S 1" + string(enc(Ack{Cmd: "id"})) + "tail!OK"
	sc := bufio.NewScanner(strings.NewReader(in))
	sc.Split(ScanFrames)
	var toks []string
	for sc.Scan() {
		toks = append(toks, sc.Text())
	}
	if sc.Err() != nil {
		t.Fatal(sc.Err())
	}
	want := []string{string(enc(s1(1, 1, 1))), "!S 1", string(enc(Ack{Cmd: "id"})), "!OK"}
	if !reflect.DeepEqual(toks, want) {
		t.Errorf("tokens %q, want %q", toks, want)
	}
}
