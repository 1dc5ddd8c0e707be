package capture

import (
	"io"
	"testing"
	"time"
)

// BenchmarkRow measures formatting and buffering one row of one channel, with the
// output discarded; samples/s is the headline.
func BenchmarkRow(b *testing.B) {
	h := &Header{Start: t0, Channels: []Channel{{Column: ColVcap}}}
	w, err := NewWriter(io.Discard, h, nil)
	if err != nil {
		b.Fatal(err)
	}
	v := []float64{0}
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		v[0] = 2.4 + float64(i%4096)*1e-4
		if err := w.Row(float64(i)*2e-3, v); err != nil {
			b.Fatal(err)
		}
	}
	b.StopTimer()
	b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "samples/s")
	w.Tick(time.Now())
}
