package model

import (
	"testing"
)

func TestPeekRej(t *testing.T) {
	sc, _ := Scenario("wren")
	for _, tol := range []float64{1e-8, 1e-7, 1e-6} {
		e, _ := newEngine(sc.Circuit, sc.Light, &Options{DurationS: 43200 + 300, RelTol: tol})
		// skip to noon
		for e.t < 43200 {
			e.advance()
		}
		s0, r0, v0 := e.steps, e.rejected, e.evals
		n0 := len(e.cycles)
		var rejOn, rejOff, stOn, stOff int
		for {
			pr, ps := e.rejected, e.steps
			on := e.m.on
			more, _ := e.advance()
			if !more {
				break
			}
			if on {
				rejOn += e.rejected - pr
				stOn += e.steps - ps
			} else {
				rejOff += e.rejected - pr
				stOff += e.steps - ps
			}
		}
		nc := len(e.cycles) - n0
		t.Logf("tol %g: cycles %d steps/cycle %.1f rej/cycle %.1f evals/cycle %.1f; on: st %.1f rej %.1f; off: st %.1f rej %.1f",
			tol, nc, float64(e.steps-s0)/float64(nc), float64(e.rejected-r0)/float64(nc), float64(e.evals-v0)/float64(nc),
			float64(stOn)/float64(nc), float64(rejOn)/float64(nc), float64(stOff)/float64(nc), float64(rejOff)/float64(nc))
	}
}
