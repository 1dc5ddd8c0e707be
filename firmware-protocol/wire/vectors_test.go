package wire

import (
	"bufio"
	"bytes"
	"errors"
	"flag"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite ../testdata/vectors.txt from the table in vectors_test.go")

const vectorsPath = "../testdata/vectors.txt"

// line builds a frame around body with its correct CRC, so that a vector built with it
// fails for its syntax, not its CRC.
func line(start byte, body string) string {
	return fmt.Sprintf("%c%s *%04X\n", start, body, CRC16([]byte(body)))
}

type vector struct {
	kind  string // "ok", "also" or "bad"
	name  string
	frame Frame  // ok: encoded to make the bytes; also: what the bytes decode to
	bytes string // also, bad
	err   error  // bad: ErrCRC or ErrMalformed
}

var bootID = Identity{Proto: 1, Firmware: "0.1.0", Board: "328p16", Bits: 10, EBits: 12,
	Ref: RefAVcc, RefUV: 5000000, NCh: 1, ClockHz: 16000000, MaxHz: 1000, SlowHz: 10,
	FastHz: 500, Thr: 8, Pre: 32, Post: 32, Boot: true}

func vectorTable() []vector {
	id4 := bootID
	id4.Ref, id4.RefUV, id4.NCh, id4.MaxHz, id4.Boot = RefInternal, 1100000, 4, 250, false
	idExtra := bootID
	idExtra.Boot, idExtra.Extra = false, []Field{{"sn", "wren-01"}}
	s12 := string(Append(nil, Sample{Seq: 12, TimeUS: 3400, NCh: 1, Counts: [4]uint16{2048}}))
	flipped := strings.Replace(s12, "2048", "2049", 1)
	badDigit := strings.Replace(s12, "*E", "*F", 1)
	idBody := strings.TrimSuffix(string(Append(nil, bootID)), "\n")
	idBody = idBody[1:strings.LastIndex(idBody, " *")]
	idNoBoot := strings.TrimSuffix(idBody, " boot=1")
	return []vector{
		{kind: "ok", name: "s-1ch", frame: Sample{Seq: 12, TimeUS: 3400, NCh: 1, Counts: [4]uint16{2048}}},
		{kind: "ok", name: "s-zero", frame: Sample{NCh: 1}},
		{kind: "ok", name: "s-4ch-max", frame: Sample{Seq: 4294967295, TimeUS: 4294967295, NCh: 4, Counts: [4]uint16{0, 1, 4095, 65535}}},
		{kind: "ok", name: "a-1ch", frame: Average{Seq: 15, TimeUS: 100000, N: 50, NCh: 1, Mean: [4]uint16{2000}, Min: [4]uint16{1990}, Max: [4]uint16{2011}}},
		{kind: "ok", name: "a-2ch", frame: Average{Seq: 16, TimeUS: 200000, N: 50, NCh: 2, Mean: [4]uint16{2003, 4095}, Min: [4]uint16{1991, 4090}, Max: [4]uint16{2015, 4095}}},
		{kind: "ok", name: "b", frame: BurstBegin{Seq: 17, TimeUS: 212000, Pre: 32}},
		{kind: "ok", name: "e", frame: BurstEnd{Seq: 7, TimeUS: 1000}},
		{kind: "ok", name: "id-boot", frame: bootID},
		{kind: "ok", name: "id-int-4ch", frame: id4},
		{kind: "ok", name: "id-extra-key", frame: idExtra},
		{kind: "ok", name: "ch-third", frame: Channel{Ch: 0, Div: 333333, Gain: 1000000, OffUV: 0}},
		{kind: "ok", name: "ch-cal", frame: Channel{Ch: 3, Div: 1, Gain: 1001200, OffUV: -3000}},
		{kind: "ok", name: "ch-int32-edges", frame: Channel{Ch: 1, Div: 2147483647, Gain: -2147483648, OffUV: -2147483648}},
		{kind: "ok", name: "st", frame: Status{UptimeS: 123, Reset: ResetPowerOn, Running: true}},
		{kind: "ok", name: "st-max", frame: Status{UptimeS: 4294967295, Overruns: 1, Dropped: 2, Reset: ResetWatchdog}},
		{kind: "ok", name: "ok", frame: Ack{Cmd: "rate"}},
		{kind: "ok", name: "er-range", frame: Nak{Cmd: "rate", Code: CodeRange, Msg: "range"}},
		{kind: "ok", name: "er-unknown", frame: Nak{Cmd: "?", Code: CodeUnknown, Msg: "unknown"}},
		{kind: "ok", name: "unknown-device", frame: Unknown{Start: '!', Name: "TEMP", Fields: []string{"c=21.5", "x"}}},
		{kind: "ok", name: "cmd-id", frame: CmdID{}},
		{kind: "ok", name: "cmd-start", frame: CmdStart{}},
		{kind: "ok", name: "cmd-stop", frame: CmdStop{}},
		{kind: "ok", name: "cmd-save", frame: CmdSave{}},
		{kind: "ok", name: "cmd-status", frame: CmdStatus{}},
		{kind: "ok", name: "cmd-rate", frame: CmdRate{SlowHz: 10, FastHz: 500}},
		{kind: "ok", name: "cmd-chan", frame: CmdChan{N: 2}},
		{kind: "ok", name: "cmd-burst", frame: CmdBurst{Thr: 8, Pre: 32, Post: 16}},
		{kind: "ok", name: "cmd-ref", frame: CmdRef{Src: RefInternal, RefUV: 0}},
		{kind: "ok", name: "cmd-cal", frame: CmdCal{Ch: 0, Div: 333333, Gain: 999500, OffUV: -1500}},
		{kind: "ok", name: "cmd-unknown", frame: Unknown{Start: '>', Name: "blink", Fields: []string{"n=3"}}},

		{kind: "also", name: "crlf", bytes: strings.TrimSuffix(s12, "\n") + "\r\n", frame: Sample{Seq: 12, TimeUS: 3400, NCh: 1, Counts: [4]uint16{2048}}},
		{kind: "also", name: "leading-zeros", bytes: line('!', "S 012 3400 02048"), frame: Sample{Seq: 12, TimeUS: 3400, NCh: 1, Counts: [4]uint16{2048}}},
		{kind: "also", name: "keys-reordered", bytes: line('!', "CH off_uv=0 gain=1.000000 div=0.3333 ch=0"), frame: Channel{Div: 333300, Gain: 1000000}},
		{kind: "also", name: "unknown-key-dropped", bytes: line('!', "OK cmd=rate later=1"), frame: Ack{Cmd: "rate"}},
		{kind: "also", name: "negative-zero", bytes: line('>', "cal ch=0 div=1 gain=-0 off_uv=-0"), frame: CmdCal{Div: 1000000}},

		{kind: "bad", name: "crc-bit-flip", bytes: flipped, err: ErrCRC},
		{kind: "bad", name: "crc-digit-changed", bytes: badDigit, err: ErrCRC},
		{kind: "bad", name: "crc-lower-case", bytes: strings.Replace(s12, "*E593", "*e593", 1), err: ErrMalformed},
		{kind: "bad", name: "no-crc", bytes: "!S 12 3400 2048\n", err: ErrMalformed},
		{kind: "bad", name: "command-no-crc", bytes: ">status\n", err: ErrMalformed},
		{kind: "bad", name: "cut-no-newline", bytes: strings.TrimSuffix(s12, "\n"), err: ErrMalformed},
		{kind: "bad", name: "cut-short", bytes: "!S 12 34", err: ErrMalformed},
		{kind: "bad", name: "too-long", bytes: line('!', "S 1 2 3 "+strings.Repeat("x", 250)), err: ErrMalformed},
		{kind: "bad", name: "no-start", bytes: s12[1:], err: ErrMalformed},
		{kind: "bad", name: "tag-lower-case", bytes: line('!', "s 1 2 3"), err: ErrMalformed},
		{kind: "bad", name: "tag-too-long", bytes: line('!', "ABCDE 1"), err: ErrMalformed},
		{kind: "bad", name: "tag-digit-first", bytes: line('!', "9A 1"), err: ErrMalformed},
		{kind: "bad", name: "command-tag-upper", bytes: line('>', "ID"), err: ErrMalformed},
		{kind: "bad", name: "empty-field", bytes: line('!', "S 12  3400 2048"), err: ErrMalformed},
		{kind: "bad", name: "trailing-space", bytes: line('!', "S 12 3400 2048 "), err: ErrMalformed},
		{kind: "bad", name: "control-byte", bytes: line('!', "S 12 3400 2048\x01"), err: ErrMalformed},
		{kind: "bad", name: "star-in-field", bytes: line('!', "OK cmd=a*b"), err: ErrMalformed},
		{kind: "bad", name: "s-no-counts", bytes: line('!', "S 12 3400"), err: ErrMalformed},
		{kind: "bad", name: "s-5-channels", bytes: line('!', "S 12 3400 1 2 3 4 5"), err: ErrMalformed},
		{kind: "bad", name: "count-above-16-bits", bytes: line('!', "S 12 3400 65536"), err: ErrMalformed},
		{kind: "bad", name: "seq-above-32-bits", bytes: line('!', "S 4294967296 3400 1"), err: ErrMalformed},
		{kind: "bad", name: "plus-sign", bytes: line('!', "S +12 3400 1"), err: ErrMalformed},
		{kind: "bad", name: "a-not-triples", bytes: line('!', "A 1 2 50 4 5"), err: ErrMalformed},
		{kind: "bad", name: "b-missing-pre", bytes: line('!', "B 1 2"), err: ErrMalformed},
		{kind: "bad", name: "id-missing-key", bytes: line('!', idNoBoot), err: ErrMalformed},
		{kind: "bad", name: "key-repeated", bytes: line('!', "OK cmd=a cmd=b"), err: ErrMalformed},
		{kind: "bad", name: "not-key-value", bytes: line('!', "OK rate"), err: ErrMalformed},
		{kind: "bad", name: "bool-not-0-or-1", bytes: line('!', "ST up_s=1 ovr=0 drop=0 reset=por run=2"), err: ErrMalformed},
		{kind: "bad", name: "decimal-7-places", bytes: line('!', "CH ch=0 div=0.3333333 gain=1 off_uv=0"), err: ErrMalformed},
		{kind: "bad", name: "int32-overflow", bytes: line('!', "CH ch=0 div=1 gain=1 off_uv=2147483648"), err: ErrMalformed},
		{kind: "bad", name: "text-with-comma", bytes: line('!', "OK cmd=a,b"), err: ErrMalformed},
		{kind: "bad", name: "cmd-missing-key", bytes: line('>', "rate slow_hz=10"), err: ErrMalformed},
	}
}

// escape writes b for the vector file: \n \r \\ and \xHH for other bytes outside
// printable ASCII; everything else as is.
func escape(b string) string {
	var sb strings.Builder
	for i := 0; i < len(b); i++ {
		switch c := b[i]; {
		case c == '\n':
			sb.WriteString(`\n`)
		case c == '\r':
			sb.WriteString(`\r`)
		case c == '\\':
			sb.WriteString(`\\`)
		case c < 0x20 || c > 0x7e:
			fmt.Fprintf(&sb, `\x%02X`, c)
		default:
			sb.WriteByte(c)
		}
	}
	return sb.String()
}

func unescape(s string) (string, error) {
	var sb strings.Builder
	for i := 0; i < len(s); i++ {
		if s[i] != '\\' {
			sb.WriteByte(s[i])
			continue
		}
		if i+1 >= len(s) {
			return "", errors.New("lone backslash")
		}
		i++
		switch s[i] {
		case 'n':
			sb.WriteByte('\n')
		case 'r':
			sb.WriteByte('\r')
		case '\\':
			sb.WriteByte('\\')
		case 'x':
			if i+2 >= len(s) {
				return "", errors.New("short \\x escape")
			}
			v, err := strconv.ParseUint(s[i+1:i+3], 16, 8)
			if err != nil {
				return "", err
			}
			sb.WriteByte(byte(v))
			i += 2
		default:
			return "", fmt.Errorf("unknown escape \\%c", s[i])
		}
	}
	return sb.String(), nil
}

const vectorsHeader = `# capcycle wire protocol v1 test vectors (see ../PROTOCOL.md).
#
# Written by "go test ./firmware-protocol/wire -run TestVectorFile -update" from the table in
# wire/vectors_test.go. Checked by the Go codec (TestVectorFile) and by the C encoder in
# firmware/frame.c (firmware/host/vectors_check.c, run by TestVectorsC), byte for byte.
# CRC: CRC-16/XMODEM; its check value on "123456789" is 31C3 (catalogue of parametrised
# CRC algorithms). The ok vectors' CRCs are also checked by a bitwise CRC register.
#
# check TEXT HEX            CRC16(TEXT) is HEX
# ok NAME | BYTES           one frame in canonical form: it decodes, and both encoders
#                           write exactly BYTES for the decoded values
# also NAME | BYTES         a valid frame not in canonical form (decodes; not re-encoded)
# bad NAME ERROR | BYTES    decoding BYTES fails with ERROR: crc or malformed
#
# BYTES is everything after "| " to the end of the line, with the escapes \n \r \\ and
# \xHH (two upper-case hex digits); every other byte stands for itself.
check 123456789 31C3
`

func renderVectors() string {
	var sb strings.Builder
	sb.WriteString(vectorsHeader)
	for _, v := range vectorTable() {
		switch v.kind {
		case "ok":
			fmt.Fprintf(&sb, "ok %s | %s\n", v.name, escape(string(Append(nil, v.frame))))
		case "also":
			fmt.Fprintf(&sb, "also %s | %s\n", v.name, escape(v.bytes))
		case "bad":
			e := "malformed"
			if v.err == ErrCRC {
				e = "crc"
			}
			fmt.Fprintf(&sb, "bad %s %s | %s\n", v.name, e, escape(v.bytes))
		}
	}
	return sb.String()
}

// fileVector is one line of the vector file.
type fileVector struct {
	kind, name, errWord string
	bytes               string
	lineNo              int
}

func readVectors(t *testing.T) (checks [][2]string, vs []fileVector) {
	t.Helper()
	data, err := os.ReadFile(vectorsPath)
	if err != nil {
		t.Fatal(err)
	}
	sc := bufio.NewScanner(bytes.NewReader(data))
	for n := 1; sc.Scan(); n++ {
		l := sc.Text()
		if l == "" || l[0] == '#' {
			continue
		}
		if f := strings.Fields(l); f[0] == "check" && len(f) == 3 {
			checks = append(checks, [2]string{f[1], f[2]})
			continue
		}
		head, esc, ok := strings.Cut(l, " | ")
		if !ok {
			t.Fatalf("%s:%d: no \" | \"", vectorsPath, n)
		}
		b, err := unescape(esc)
		if err != nil {
			t.Fatalf("%s:%d: %v", vectorsPath, n, err)
		}
		f := strings.Fields(head)
		v := fileVector{kind: f[0], bytes: b, lineNo: n}
		switch {
		case (f[0] == "ok" || f[0] == "also") && len(f) == 2:
			v.name = f[1]
		case f[0] == "bad" && len(f) == 3 && (f[2] == "crc" || f[2] == "malformed"):
			v.name, v.errWord = f[1], f[2]
		default:
			t.Fatalf("%s:%d: cannot read %q", vectorsPath, n, head)
		}
		vs = append(vs, v)
	}
	return checks, vs
}

// TestVectorFile checks that the file is what the table produces, and then checks
// every line of the file on its own terms.
func TestVectorFile(t *testing.T) {
	want := renderVectors()
	if *update {
		if err := os.WriteFile(vectorsPath, []byte(want), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	got, err := os.ReadFile(vectorsPath)
	if err != nil {
		t.Fatal(err)
	}
	if string(got) != want {
		t.Errorf("%s differs from the table; run with -update if the table changed on purpose", vectorsPath)
	}
	checks, vs := readVectors(t)
	for _, c := range checks {
		if got := fmt.Sprintf("%04X", crcBitwise(crcPoly, 0, []byte(c[0]))); got != c[1] {
			t.Errorf("check %s: bitwise CRC %s, file says %s", c[0], got, c[1])
		}
	}
	table := vectorTable()
	if len(vs) != len(table) {
		t.Fatalf("%d vectors in the file, %d in the table", len(vs), len(table))
	}
	for i, v := range vs {
		f, err := Parse([]byte(v.bytes))
		where := fmt.Sprintf("%s:%d (%s)", vectorsPath, v.lineNo, v.name)
		switch v.kind {
		case "ok", "also":
			if err != nil {
				t.Errorf("%s: %v", where, err)
				continue
			}
			if !reflect.DeepEqual(f, table[i].frame) {
				t.Errorf("%s: decodes to %#v, want %#v", where, f, table[i].frame)
			}
			if v.kind == "ok" {
				if again := string(Append(nil, f)); again != v.bytes {
					t.Errorf("%s: re-encodes to %q", where, again)
				}
				body := v.bytes[1:strings.LastIndex(v.bytes, " *")]
				if crc := fmt.Sprintf("%04X", crcBitwise(crcPoly, 0, []byte(body))); !strings.HasSuffix(v.bytes, crc+"\n") {
					t.Errorf("%s: bitwise CRC is %s", where, crc)
				}
			}
		case "bad":
			wantErr := ErrMalformed
			if v.errWord == "crc" {
				wantErr = ErrCRC
			}
			var fe *FrameError
			if !errors.As(err, &fe) || !errors.Is(err, wantErr) {
				t.Errorf("%s: got %v, %v; want %v", where, f, err, wantErr)
			}
		}
	}
}

// TestVectorsC builds the C encoder for the host and checks it writes every ok vector
// byte for byte and agrees on the CRC of every vector that has one.
func TestVectorsC(t *testing.T) {
	gcc, err := exec.LookPath("gcc")
	if err != nil {
		t.Skip("gcc not found: the C frame encoder is not checked (install gcc)")
	}
	exe := filepath.Join(t.TempDir(), "vectors_check")
	fw := filepath.Join("..", "firmware")
	cmd := exec.Command(gcc, "-std=c99", "-Wall", "-Wextra", "-pedantic", "-Werror", "-I", fw,
		"-o", exe, filepath.Join(fw, "host", "vectors_check.c"), filepath.Join(fw, "frame.c"))
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("gcc: %v\n%s", err, out)
	}
	out, err := exec.Command(exe, vectorsPath).Output()
	if err != nil {
		t.Fatalf("vectors_check: %v\n%s", err, out)
	}
	checks, vs := readVectors(t)
	var want strings.Builder
	for _, c := range checks {
		fmt.Fprintf(&want, "check %s %s\n", c[0], c[1])
	}
	for _, v := range vs {
		switch {
		case v.kind == "ok":
			fmt.Fprintf(&want, "ok %s | %s\n", v.name, escape(v.bytes))
			fmt.Fprintf(&want, "verify %s good\n", v.name)
		case v.kind == "also":
			fmt.Fprintf(&want, "verify %s good\n", v.name)
		case v.errWord == "crc":
			fmt.Fprintf(&want, "verify %s bad-crc\n", v.name)
		}
	}
	gotLines := strings.Split(string(out), "\n")
	wantLines := strings.Split(want.String(), "\n")
	for i := 0; i < len(gotLines) || i < len(wantLines); i++ {
		var g, w string
		if i < len(gotLines) {
			g = gotLines[i]
		}
		if i < len(wantLines) {
			w = wantLines[i]
		}
		if g != w {
			t.Errorf("line %d:\n C:  %q\n Go: %q", i+1, g, w)
		}
	}
}

// TestFrameBuildsForAVR compiles frame.c for the board, so that nothing host-only
// creeps into it (the firmware's own build links it).
func TestFrameBuildsForAVR(t *testing.T) {
	cc, err := exec.LookPath("avr-gcc")
	if err != nil {
		t.Skip("avr-gcc not found: frame.c is not compiled for the ATmega328P (install gcc-avr avr-libc)")
	}
	obj := filepath.Join(t.TempDir(), "frame.o")
	fw := filepath.Join("..", "firmware")
	cmd := exec.Command(cc, "-std=c99", "-Wall", "-Wextra", "-Werror", "-mmcu=atmega328p", "-Os",
		"-c", "-o", obj, filepath.Join(fw, "frame.c"))
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("avr-gcc: %v\n%s", err, out)
	}
	if size, err := exec.LookPath("avr-size"); err == nil {
		if out, err := exec.Command(size, obj).Output(); err == nil {
			t.Logf("frame.c for the ATmega328P:\n%s", out)
		}
	}
}
