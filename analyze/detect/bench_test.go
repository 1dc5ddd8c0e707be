package detect_test

import (
	"testing"

	"capcycle/analyze/detect"
	"capcycle/analyze/detect/detecttest"
)

// BenchmarkDetector pushes an hour-long rover trace at 100 Hz (2 mV noise, 12 bits) in
// 64k-sample batches; ns/sample is the detector's own cost per sample.
func BenchmarkDetector(b *testing.B) {
	ts, vs, _ := detecttest.Generate(wren, []detecttest.Light{{FromS: 0, IA: 0.6e-3}}, 3600, detecttest.Sampling{DtS: 0.01},
		detecttest.ADC{NoiseV: 2e-3, Bits: 12, FullV: 5, Seed: 1})
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		d := detect.New(nil)
		for j := 0; j < len(ts); j += 1 << 16 {
			k := min(len(ts), j+1<<16)
			d.Push(ts[j:k], vs[j:k])
		}
		d.Finish()
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(ts)), "ns/sample")
}
