package detect

import (
	"math"
	"testing"
)

func TestDecimKeepsOrderAndMeans(t *testing.T) {
	d := newDecim(16)
	var tail decim = newDecim(16)
	n := 0
	for i := 0; i < 1000; i++ {
		if i%7 == 3 {
			tail.add(float64(i), float64(i))
			continue
		}
		d.appendFrom(&tail, 0)
		tail.reset()
		d.add(float64(i), float64(i))
		n++
	}
	pts := d.points(nil)
	total := 0
	for k, p := range pts {
		total += p.N
		if k > 0 && p.T <= pts[k-1].T {
			t.Fatalf("point %d at %v after %v", k, p.T, pts[k-1].T)
		}
		if math.Abs(p.T-p.V) > 1e-9 {
			t.Fatalf("point %d: t %v v %v", k, p.T, p.V)
		}
	}
	if len(pts) > 16+1 || total < 990 { // the limit, plus the run in progress
		t.Fatalf("%d points holding %d samples", len(pts), total)
	}
}
