package wire

import (
	"bytes"
	"io"
	"testing"
)

// linkBytesPerSecond is what a 1 Mbaud 8N1 link carries: 10 bit times per byte
// (start bit, 8 data bits, stop bit), common practice, no source needed beyond the
// definition of 8N1.
const linkBytesPerSecond = 1e6 / 10

// typicalSamples returns a stream of single-channel S frames as a burst sends them:
// 500 Hz fast rate, counts near mid-scale of a 12-bit result, the clock past 10 s.
func typicalSamples(n int) (stream []byte, frameLen float64) {
	for i := range n {
		stream = Append(stream, Sample{Seq: 100000 + uint32(i), TimeUS: 12000000 + 2000*uint32(i),
			NCh: 1, Counts: [4]uint16{uint16(2000 + i%97)}})
	}
	return stream, float64(len(stream)) / float64(n)
}

func BenchmarkDecodeSamples(b *testing.B) {
	const frames = 10000
	stream, frameLen := typicalSamples(frames)
	r := bytes.NewReader(stream)
	d := NewDecoder(r)
	b.SetBytes(int64(len(stream)))
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		r.Reset(stream)
		d.Reset(r)
		for {
			_, err := d.Next()
			if err == io.EOF {
				break
			}
			if err != nil {
				b.Fatal(err)
			}
		}
	}
	perSec := float64(b.N) * frames / b.Elapsed().Seconds()
	b.ReportMetric(perSec, "frames/s")
	b.ReportMetric(perSec/(linkBytesPerSecond/frameLen), "x_1Mbaud")
	b.ReportMetric(frameLen, "bytes/frame")
}

func BenchmarkDecodeMixed(b *testing.B) {
	var stream []byte
	for _, f := range sampleFrames {
		stream = Append(stream, f)
	}
	stream = bytes.Repeat(stream, 200)
	r := bytes.NewReader(stream)
	d := NewDecoder(r)
	b.SetBytes(int64(len(stream)))
	b.ResetTimer()
	for b.Loop() {
		r.Reset(stream)
		d.Reset(r)
		for {
			if _, err := d.Next(); err == io.EOF {
				break
			}
		}
	}
}

func BenchmarkAppendSample(b *testing.B) {
	buf := make([]byte, 0, 64)
	s := Sample{Seq: 100000, TimeUS: 12000000, NCh: 1, Counts: [4]uint16{2048}}
	b.ReportAllocs()
	for b.Loop() {
		s.Seq++
		buf = Append(buf[:0], s)
	}
	b.SetBytes(int64(len(buf)))
}
