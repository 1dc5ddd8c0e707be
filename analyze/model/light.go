package model

import (
	"fmt"
	"math"
	"sort"
)

// Light gives the irradiance on the cell, W/m², at t seconds from the start of a run.
// Implementations must be pure functions of t (the simulator may call them out of order).
type Light interface {
	IrradianceWm2(t float64) float64
}

// Constant is a steady light, W/m².
type Constant float64

// IrradianceWm2 returns the constant.
func (c Constant) IrradianceWm2(float64) float64 { return float64(c) }

// Piecewise is a piecewise-linear light through the points (TS[i], Wm2[i]), held constant
// before the first and after the last point. TS must be increasing.
type Piecewise struct {
	TS  []float64 // seconds
	Wm2 []float64 // W/m²
}

// NewPiecewise checks the points and returns the light.
func NewPiecewise(ts, wm2 []float64) (*Piecewise, error) {
	if len(ts) == 0 || len(ts) != len(wm2) {
		return nil, fmt.Errorf("model: piecewise light: %d times and %d values", len(ts), len(wm2))
	}
	for i := range ts {
		if math.IsNaN(ts[i]) || math.IsNaN(wm2[i]) || wm2[i] < 0 {
			return nil, fmt.Errorf("model: piecewise light: point %d (%g s, %g W/m²) is not a finite non-negative value", i, ts[i], wm2[i])
		}
		if i > 0 && !(ts[i] > ts[i-1]) {
			return nil, fmt.Errorf("model: piecewise light: time %g s at point %d does not increase", ts[i], i)
		}
	}
	return &Piecewise{TS: ts, Wm2: wm2}, nil
}

// IrradianceWm2 interpolates linearly.
func (p *Piecewise) IrradianceWm2(t float64) float64 {
	n := len(p.TS)
	if n == 0 {
		return 0
	}
	if t <= p.TS[0] {
		return p.Wm2[0]
	}
	if t >= p.TS[n-1] {
		return p.Wm2[n-1]
	}
	i := sort.SearchFloat64s(p.TS, t) // TS[i-1] < t <= TS[i]
	t0, t1 := p.TS[i-1], p.TS[i]
	u := (t - t0) / (t1 - t0)
	return p.Wm2[i-1] + u*(p.Wm2[i]-p.Wm2[i-1])
}
