package detect

import (
	"math"
	"testing"
)

// Every bin holds the true minimum and maximum of the samples in it, and the bins stay
// within the limit however many samples come, in batches of any size.
func TestEnvelope(t *testing.T) {
	var ts, vs []float64
	for i := 0; i < 100000; i++ {
		x := float64(i) * 0.01
		ts = append(ts, x)
		vs = append(vs, math.Sin(x)+0.001*float64(i%7))
	}
	e := NewEnvelope(400)
	for i := 0; i < len(ts); i += 333 {
		j := min(len(ts), i+333)
		e.Add(ts[i:j], vs[i:j])
	}
	bins := e.Bins()
	if len(bins) < 200 || len(bins) > 400 {
		t.Fatalf("%d bins", len(bins))
	}
	k := 0
	for _, b := range bins {
		lo, hi := math.Inf(1), math.Inf(-1)
		for k < len(ts) && ts[k] < b.EndS {
			if ts[k] >= b.StartS {
				lo, hi = math.Min(lo, vs[k]), math.Max(hi, vs[k])
			}
			k++
		}
		if lo != b.MinV || hi != b.MaxV {
			t.Fatalf("bin %+v: samples span %v..%v", b, lo, hi)
		}
	}
}
