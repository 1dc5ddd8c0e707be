package analyze

import (
	"bufio"
	"context"
	"encoding/csv"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"runtime/metrics"
	"strconv"
	"sync"
	"sync/atomic"
	"syscall"
	"testing"
	"time"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect/detecttest"
	"capcycle/logger/capture"
)

var (
	dayOnce sync.Once
	dayPath string
	dayErr  error
)

// dayCapture writes, once per run, a 24-hour capture at 100 Hz (8.64 million rows
// "time_s,vcap_v") of the closed-form rover circuit under a day of light: dark nights,
// a sine-shaped day in ten-minute steps, 2 mV noise, a 12-bit ADC.
func dayCapture(b *testing.B) string {
	dayOnce.Do(func() {
		dir, err := os.MkdirTemp("", "capcycle-bench-")
		if err != nil {
			dayErr = err
			return
		}
		dayPath = filepath.Join(dir, "day-100hz.csv")
		f, err := os.Create(dayPath)
		if err != nil {
			dayErr = err
			return
		}
		w := bufio.NewWriterSize(f, 1<<20)
		w.WriteString("time_s,vcap_v\n")
		var light []detecttest.Light
		for t := 0.0; t < 86400; t += 600 {
			i := 0.0
			if h := t / 3600; h > 6 && h < 20 {
				i = 1.5e-3 * math.Sin(math.Pi*(h-6)/14)
			}
			light = append(light, detecttest.Light{FromS: t, IA: i})
		}
		buf := make([]byte, 0, 64)
		detecttest.Stream(wrenRC, light, 86400-0.005, detecttest.Sampling{DtS: 0.01},
			detecttest.ADC{NoiseV: 2e-3, Bits: 12, FullV: 5, Seed: 42}, func(t, v float64) {
				buf = strconv.AppendFloat(buf[:0], t, 'f', 6, 64)
				buf = append(buf, ',')
				buf = strconv.AppendFloat(buf, v, 'f', 5, 64)
				buf = append(buf, '\n')
				w.Write(buf)
			})
		if err := w.Flush(); err != nil {
			dayErr = err
		}
		dayErr = f.Close()
	})
	if dayErr != nil {
		b.Fatal(dayErr)
	}
	return dayPath
}

// parseCSV is the baseline: encoding/csv with ReuseRecord and strconv.ParseFloat, doing
// nothing with the numbers.
func parseCSV(path string) (int, error) {
	f, err := os.Open(path)
	if err != nil {
		return 0, err
	}
	defer f.Close()
	r := csv.NewReader(bufio.NewReaderSize(f, 1<<16))
	r.ReuseRecord = true
	if _, err := r.Read(); err != nil {
		return 0, err
	}
	n := 0
	var sink float64
	for {
		rec, err := r.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return n, err
		}
		t, err1 := strconv.ParseFloat(rec[0], 64)
		v, err2 := strconv.ParseFloat(rec[1], 64)
		if err1 != nil || err2 != nil {
			return n, err1
		}
		sink += t + v
		n++
	}
	_ = sink
	return n, nil
}

// peakHeap samples the live heap (runtime/metrics, which does not stop the world as
// runtime.ReadMemStats does) every 20 ms until stop is closed.
func peakHeap(stop chan struct{}, peak *atomic.Uint64) {
	s := []metrics.Sample{{Name: "/memory/classes/heap/objects:bytes"}}
	t := time.NewTicker(20 * time.Millisecond)
	defer t.Stop()
	for {
		metrics.Read(s)
		if v := s[0].Value.Uint64(); v > peak.Load() {
			peak.Store(v)
		}
		select {
		case <-stop:
			return
		case <-t.C:
		}
	}
}

// cpuTime is the process's user plus system CPU time so far.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	syscall.Getrusage(syscall.RUSAGE_SELF, &ru)
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// BenchmarkDayAnalysisVsCSVParse runs, in each iteration, the baseline parse and the
// full analysis of the same 24-hour file, and reports both, their ratio of wall time
// (goal: at most 1), their ratio of CPU time (both goroutines of the analysis counted;
// steadier on a busy machine) and the analysis's peak live heap (goal: under 64 MiB).
func BenchmarkDayAnalysisVsCSVParse(b *testing.B) {
	if testing.Short() {
		b.Skip("the 24-hour capture takes a while to write")
	}
	path := dayCapture(b)
	var parseD, analyzeD, parseCPU, analyzeCPU time.Duration
	var peak atomic.Uint64
	var cycles, rows int
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		t0, c0 := time.Now(), cpuTime()
		n, err := parseCSV(path)
		if err != nil {
			b.Fatal(err)
		}
		parseD += time.Since(t0)
		parseCPU += cpuTime() - c0
		runtime.GC()
		stop := make(chan struct{})
		done := make(chan struct{})
		go func() { peakHeap(stop, &peak); close(done) }()
		t1, c1 := time.Now(), cpuTime()
		f, err := os.Open(path)
		if err != nil {
			b.Fatal(err)
		}
		res, err := Run(context.Background(), capture.NewReader(f, path), &Options{Declared: analysis.Declared{CapF: wrenRC.C}})
		f.Close()
		analyzeD += time.Since(t1)
		analyzeCPU += cpuTime() - c1
		close(stop)
		<-done
		if err != nil {
			b.Fatal(err)
		}
		rows, cycles = n, len(res.Cycles)
		if res.Samples != n {
			b.Fatalf("analysis read %d rows, the parse %d", res.Samples, n)
		}
	}
	b.ReportMetric(parseD.Seconds()/float64(b.N), "parse-s/op")
	b.ReportMetric(analyzeD.Seconds()/float64(b.N), "analyze-s/op")
	b.ReportMetric(analyzeD.Seconds()/parseD.Seconds(), "analyze/parse")
	b.ReportMetric(analyzeCPU.Seconds()/parseCPU.Seconds(), "analyze/parse-cpu")
	b.ReportMetric(float64(peak.Load())/(1<<20), "peak-heap-MiB")
	b.ReportMetric(float64(rows), "rows")
	b.ReportMetric(float64(cycles), "cycles")
}

// BenchmarkPeakHeapByLength streams captures of 1, 4 and 16 hours at 100 Hz (a stalled
// circuit: no cycles, so no per-cycle records) through Run from a pipe, and reports the
// peak live heap of each: it should not grow with the length.
func BenchmarkPeakHeapByLength(b *testing.B) {
	if testing.Short() {
		b.Skip("long streams")
	}
	c := wrenRC
	c.OnV = 10
	for _, hours := range []float64{1, 4, 16} {
		b.Run(strconv.FormatFloat(hours, 'f', 0, 64)+"h", func(b *testing.B) {
			var peak atomic.Uint64
			for i := 0; i < b.N; i++ {
				pr, pw := io.Pipe()
				go func() {
					w := bufio.NewWriterSize(pw, 1<<16)
					w.WriteString("time_s,vcap_v\n")
					buf := make([]byte, 0, 64)
					light := []detecttest.Light{{FromS: 0, IA: 2e-6}}
					detecttest.Stream(c, light, hours*3600, detecttest.Sampling{DtS: 0.01}, detecttest.ADC{NoiseV: 1e-3, Bits: 12, FullV: 5, Seed: 7},
						func(t, v float64) {
							buf = strconv.AppendFloat(buf[:0], t, 'f', 6, 64)
							buf = append(buf, ',')
							buf = strconv.AppendFloat(buf, v, 'f', 5, 64)
							buf = append(buf, '\n')
							w.Write(buf)
						})
					w.Flush()
					pw.Close()
				}()
				runtime.GC()
				stop, done := make(chan struct{}), make(chan struct{})
				go func() { peakHeap(stop, &peak); close(done) }()
				res, err := Run(context.Background(), capture.NewReader(pr, "stream"), nil)
				close(stop)
				<-done
				if err != nil {
					b.Fatal(err)
				}
				if len(res.Cycles) != 0 {
					b.Fatalf("%d cycles in a stall", len(res.Cycles))
				}
			}
			b.ReportMetric(float64(peak.Load())/(1<<20), "peak-heap-MiB")
		})
	}
}
