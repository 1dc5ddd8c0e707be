package report

import (
	"encoding/json"
	"testing"
)

// BenchmarkWriteDay writes the day-long fixture's report. Its cost is reported against a
// baseline measured first in the same run, encoding the same Result as JSON (which every
// report bundle does anyway): "x-json" is the report's time in units of that.
func BenchmarkWriteDay(b *testing.B) {
	r := wrenOnce()
	var jsonNs float64
	b.Run("json", func(b *testing.B) {
		for b.Loop() {
			if _, err := json.Marshal(r); err != nil {
				b.Fatal(err)
			}
		}
		jsonNs = float64(b.Elapsed().Nanoseconds()) / float64(b.N)
	})
	b.Run("report", func(b *testing.B) {
		var cw countWriter
		b.ReportAllocs()
		for b.Loop() {
			cw = countWriter{}
			if err := Write(&cw, r, nil); err != nil {
				b.Fatal(err)
			}
		}
		if jsonNs > 0 {
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/jsonNs, "x-json")
		}
		b.ReportMetric(float64(cw.n), "page-bytes")
	})
}

type countWriter struct{ n int }

func (c *countWriter) Write(p []byte) (int, error) { c.n += len(p); return len(p), nil }
