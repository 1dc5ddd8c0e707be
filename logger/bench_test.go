package logger

import (
	"io"
	"testing"
	"time"

	"capcycle/firmware-protocol/wire"
	"capcycle/logger/capture"
)

// benchFrames makes n frames of a 1-channel board: bursts of S frames between A frames,
// as the adaptive capture sends them.
func benchFrames(n int) []byte {
	b := newTestBoard(io.Discard)
	var out []byte
	t := uint32(0)
	for i := 0; i < n; i++ {
		c := uint16(2000 + i%97)
		if i%10 == 0 {
			out = wire.Append(out, wire.Average{Seq: b.seq, TimeUS: t, N: 50, NCh: 1,
				Mean: [4]uint16{c}, Min: [4]uint16{c - 1}, Max: [4]uint16{c + 1}})
		} else {
			out = wire.Append(out, wire.Sample{Seq: b.seq, TimeUS: t, NCh: 1, Counts: [4]uint16{c}})
		}
		b.seq++
		t += 2000
	}
	return out
}

func benchStream(b *testing.B) *stream {
	w, err := capture.NewWriter(io.Discard, &capture.Header{Start: time.Now(),
		Channels: []capture.Channel{{Column: capture.ColVcap}}}, nil)
	if err != nil {
		b.Fatal(err)
	}
	s := newStream(w, 1, nil)
	id := newTestBoard(io.Discard).id
	s.identity(id)
	return s
}

// BenchmarkDecodeWrite is the recorder's work per sample on one core: framing, CRC
// check, parsing, clock unwrapping, sequence check, conversion to volts, formatting and
// buffering the row (the file is io.Discard, so the disk is not measured; see
// BenchmarkDecodeWriteFile). The goal is 1e6 samples/s; a 1 Mbaud link carries about
// 100000 bytes/s, under 5000 sample frames a second.
func BenchmarkDecodeWrite(b *testing.B) {
	const per = 4096
	data := benchFrames(per)
	s := benchStream(b)
	b.SetBytes(int64(len(data)) / per)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i += per {
		// Feed in 4 KiB pieces, as reads from a port come.
		for off := 0; off < len(data); off += 4096 {
			if err := s.feed(data[off:min(off+4096, len(data))], float64(i)); err != nil {
				b.Fatal(err)
			}
		}
		// The same frames again: seq and time restart, so present them as a new board.
		s.haveSeq = false
		s.clock.Reset()
		s.anchored = false
	}
	b.StopTimer()
	rate := float64(b.N) / b.Elapsed().Seconds()
	b.ReportMetric(rate, "samples/s")
	// Against the link: 1 Mbaud at 10 bits a byte is 100000 bytes/s.
	link := 100000 / (float64(len(data)) / per)
	b.ReportMetric(rate/link, "x-1Mbaud")
}

// BenchmarkParseOnly is the baseline for BenchmarkDecodeWrite: framing and parsing the
// same bytes with the codec alone, no rows.
func BenchmarkParseOnly(b *testing.B) {
	const per = 4096
	data := benchFrames(per)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i += per {
		buf := data
		for len(buf) > 0 {
			adv, tok, _ := wire.ScanFrames(buf, false)
			if adv == 0 {
				break
			}
			buf = buf[adv:]
			if _, err := wire.Parse(tok); err != nil {
				b.Fatal(err)
			}
		}
	}
	b.StopTimer()
	b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "samples/s")
}

// BenchmarkDecodeWriteFile is BenchmarkDecodeWrite with a real file on disk (in the
// test's temporary directory), flushed as the recorder flushes.
func BenchmarkDecodeWriteFile(b *testing.B) {
	const per = 4096
	data := benchFrames(per)
	w, err := capture.Create(b.TempDir()+"/bench.csv", &capture.Header{Start: time.Now(),
		Channels: []capture.Channel{{Column: capture.ColVcap}}}, nil)
	if err != nil {
		b.Fatal(err)
	}
	s := newStream(w, 1, nil)
	s.identity(newTestBoard(io.Discard).id)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i += per {
		if err := s.feed(data, float64(i)); err != nil {
			b.Fatal(err)
		}
		s.haveSeq = false
		s.clock.Reset()
		s.anchored = false
	}
	if err := w.Close(nil); err != nil {
		b.Fatal(err)
	}
	b.StopTimer()
	b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "samples/s")
}

// BenchmarkMemoryPerHour records one hour of a 10 Hz board with bursts (36000 slow rows
// plus 50 bursts of 500 fast samples) per iteration. It reports the live heap after all
// b.N hours against the live heap after the first hour, in the same run: a ratio near 1
// means memory does not grow with the length of a recording.
func BenchmarkMemoryPerHour(b *testing.B) {
	hour := benchFrames(36000 + 50*500)
	s := benchStream(b)
	feedHour := func(i int) {
		if err := s.feed(hour, float64(i)*3600); err != nil {
			b.Fatal(err)
		}
		s.haveSeq = false
		s.clock.Reset()
		s.anchored = false
	}
	feedHour(0)
	heap1 := heapNow()
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		feedHour(i + 1)
	}
	b.StopTimer()
	heapN := heapNow()
	b.ReportMetric(float64(heapN)/float64(heap1), "heap-ratio")
	b.ReportMetric(float64(heapN), "heap-B")
}
