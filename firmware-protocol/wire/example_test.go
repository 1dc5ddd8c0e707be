package wire_test

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"strings"

	"capcycle/firmware-protocol/wire"
)

func ExampleAppend() {
	var buf []byte
	buf = wire.Append(buf, wire.Sample{Seq: 12, TimeUS: 3400, NCh: 1, Counts: [4]uint16{2048}})
	buf = wire.Append(buf, wire.CmdRate{SlowHz: 10, FastHz: 500})
	fmt.Print(string(buf))
	// Output:
	// !S 12 3400 2048 *E593
	// >rate slow_hz=10 fast_hz=500 *02AC
}

func ExampleDecoder() {
	// Boot noise, a good frame, one with a flipped bit, a cut line, and a good one.
	in := "\x00\xffboot\r\n" +
		"!S 12 3400 2048 *E593\n" +
		"!S 13 5400 2048 *E593\n" +
		"!S 14 54" +
		"!A 15 100000 50 2000 1990 2011 *BA65\n"
	d := wire.NewDecoder(strings.NewReader(in))
	for {
		f, err := d.Next()
		var fe *wire.FrameError
		if errors.As(err, &fe) {
			fmt.Printf("bad frame at byte %d: %v\n", fe.Offset, fe.Err)
			continue
		}
		if err == io.EOF {
			break
		}
		switch f := f.(type) {
		case wire.Sample:
			fmt.Printf("sample %d at %d µs: %d\n", f.Seq, f.TimeUS, f.Counts[0])
		case wire.Average:
			fmt.Printf("average %d of %d: %d in [%d, %d]\n", f.Seq, f.N, f.Mean[0], f.Min[0], f.Max[0])
		}
	}
	fmt.Printf("%+v\n", d.Stats())
	// Output:
	// sample 12 at 3400 µs: 2048
	// bad frame at byte 30: wire: CRC mismatch
	// bad frame at byte 52: wire: malformed frame
	// average 15 of 50: 2000 in [1990, 2011]
	// {Good:2 Unknown:0 BadCRC:1 Malformed:1 Lost:2 Skipped:8}
}

func ExampleClock() {
	var c wire.Clock
	// The 32-bit microsecond counter wraps between the second and third reading.
	for _, t := range []uint32{4294000000, 4294967000, 33000} {
		fmt.Printf("%.6f s\n", c.Seconds(t))
	}
	// Output:
	// 4294.000000 s
	// 4294.967000 s
	// 4295.000296 s
}

func ExampleChannel_Volts() {
	// 12-bit counts, a 5.000 V reference and a 1:3 divider (ratio 0.333333).
	ch := wire.Channel{Ch: 0, Div: wire.MicroOf(1.0 / 3), Gain: wire.MicroOf(1), OffUV: 0}
	fmt.Printf("%.4f V\n", ch.Volts(2048, 12, 5000000))
	// Output:
	// 7.5000 V
}

func ExampleScanFrames() {
	in := "noise!OK cmd=id *A91D\n!S 1 2"
	sc := bufio.NewScanner(strings.NewReader(in))
	sc.Split(wire.ScanFrames)
	for sc.Scan() {
		f, err := wire.Parse(sc.Bytes())
		fmt.Printf("%q: %v %v\n", sc.Text(), f, err)
	}
	// Output:
	// "!OK cmd=id *A91D\n": {id} <nil>
	// "!S 1 2": <nil> wire: malformed frame at byte 0: cut: no end of line
}

func ExampleMicro() {
	fmt.Println(wire.MicroOf(1.0/3), wire.Micro(1001200), wire.Micro(-500000), wire.MicroOf(2).Float64())
	// Output:
	// 0.333333 1.0012 -0.5 2
}
