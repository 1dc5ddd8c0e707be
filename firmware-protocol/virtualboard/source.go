package virtualboard

import (
	"fmt"
	"sort"
)

// A Source gives the true voltages at the board's channel inputs: the circuit the
// board is wired to. The board pulls from it at each fast sample instant, so the board
// keeps the clock and the host may change the rate by command.
type Source interface {
	// Sample writes the voltage at each enabled channel's input at world time t_s
	// (seconds since Run began; it never decreases from one call to the next) into v,
	// which holds one zeroed element per enabled channel. It returns false when the
	// source has ended; Run then flushes what it has queued and returns.
	Sample(t_s float64, v []float64) bool
}

// SourceFunc adapts a function to Source.
type SourceFunc func(t_s float64, v []float64) bool

// Sample calls f.
func (f SourceFunc) Sample(t_s float64, v []float64) bool { return f(t_s, v) }

// Waveform is a Source that interpolates linearly between points: channel k at time
// T[i] is V[i][k]. Before T[0] it holds V[0]; it ends after the last point. Channels
// beyond len(V[i]) read 0 V.
type Waveform struct {
	T []float64
	V [][]float64
	i int
}

// NewWaveform checks that t is increasing and that v has one row per time.
func NewWaveform(t []float64, v [][]float64) (*Waveform, error) {
	if len(t) == 0 || len(t) != len(v) {
		return nil, fmt.Errorf("virtualboard: waveform needs one row of volts per time (%d times, %d rows)", len(t), len(v))
	}
	if !sort.Float64sAreSorted(t) {
		return nil, fmt.Errorf("virtualboard: waveform times must not decrease")
	}
	return &Waveform{T: t, V: v}, nil
}

// Sample implements Source.
func (w *Waveform) Sample(t float64, v []float64) bool {
	n := len(w.T)
	if n == 0 || t > w.T[n-1] {
		return false
	}
	for w.i+1 < n && w.T[w.i+1] <= t {
		w.i++
	}
	a := w.V[w.i]
	if t <= w.T[w.i] || w.i+1 == n {
		for k := range v {
			if k < len(a) {
				v[k] = a[k]
			}
		}
		return true
	}
	b := w.V[w.i+1]
	f := (t - w.T[w.i]) / (w.T[w.i+1] - w.T[w.i])
	for k := range v {
		var va, vb float64
		if k < len(a) {
			va = a[k]
		}
		if k < len(b) {
			vb = b[k]
		}
		v[k] = va + f*(vb-va)
	}
	return true
}

var (
	_ Source = SourceFunc(nil)
	_ Source = (*Waveform)(nil)
)
