package detect

import (
	"math"
	"testing"
)

// The convolution tables of A. Savitzky and M. J. E. Golay, "Smoothing and
// Differentiation of Data by Simplified Least Squares Procedures", Analytical Chemistry
// 36 (8), 1627-1639 (1964): the quadratic/cubic smoothing and the quadratic first-derivative
// columns, as integers over a normalising factor (the table numbers are from memory; the
// integer coefficients are the widely reprinted ones).
var sgTables = []struct {
	name            string
	m, order, deriv int
	ints            []float64
	norm            float64
}{
	{"5-point quadratic smoothing", 2, 2, 0, []float64{-3, 12, 17, 12, -3}, 35},
	{"7-point quadratic smoothing", 3, 2, 0, []float64{-2, 3, 6, 7, 6, 3, -2}, 21},
	{"9-point quadratic smoothing", 4, 2, 0, []float64{-21, 14, 39, 54, 59, 54, 39, 14, -21}, 231},
	{"7-point cubic smoothing (same as quadratic)", 3, 3, 0, []float64{-2, 3, 6, 7, 6, 3, -2}, 21},
	{"7-point quartic smoothing", 3, 4, 0, []float64{5, -30, 75, 131, 75, -30, 5}, 231},
	{"5-point quadratic first derivative", 2, 2, 1, []float64{-2, -1, 0, 1, 2}, 10},
	{"7-point quadratic first derivative", 3, 2, 1, []float64{-3, -2, -1, 0, 1, 2, 3}, 28},
	{"5-point cubic first derivative", 2, 3, 1, []float64{1, -8, 0, 8, -1}, 12},
}

func TestSGCoeffsMatchPublishedTables(t *testing.T) {
	for _, tc := range sgTables {
		c := SGCoeffs(tc.m, tc.order, tc.deriv)
		for j, want := range tc.ints {
			if got := c[j] * tc.norm; math.Abs(got-want) > 1e-9 {
				t.Errorf("%s: c[%d]*%v = %.12f, want %v", tc.name, j-tc.m, tc.norm, got, want)
			}
		}
	}
}

// On a non-uniform grid the local fit must reproduce a polynomial of its order exactly.
func TestSmoothNonUniformExactForPolynomials(t *testing.T) {
	ts := []float64{0, 0.1, 0.15, 0.4, 0.41, 0.9, 1.3, 1.31, 2, 2.5, 3.1}
	v := make([]float64, len(ts))
	d := make([]float64, len(ts))
	for i, x := range ts {
		v[i] = 1 + 2*x - 0.5*x*x
		d[i] = 2 - x
	}
	sm := Smooth(make([]float64, len(v)), ts, v, 3, 2, 0)
	dv := Smooth(make([]float64, len(v)), ts, v, 3, 2, 1)
	for i := range ts {
		if math.Abs(sm[i]-v[i]) > 1e-9 || math.Abs(dv[i]-d[i]) > 1e-9 {
			t.Errorf("t=%v: smooth %v (want %v), slope %v (want %v)", ts[i], sm[i], v[i], dv[i], d[i])
		}
	}
}

func TestLocalPolyMatchesWeights(t *testing.T) {
	ts := []float64{0, 0.1, 0.15, 0.4, 0.41, 0.9, 1.3}
	vs := []float64{1, 1.3, 0.9, 2, 2.2, 1.7, 3}
	for _, order := range []int{1, 2, 3} {
		val, slope, ok := LocalPoly(ts, vs, 0.41, order)
		w0 := localWeights(ts, 0.41, order, 0)
		w1 := localWeights(ts, 0.41, order, 1)
		var a, b float64
		for i := range vs {
			a += w0[i] * vs[i]
			b += w1[i] * vs[i]
		}
		if !ok || math.Abs(val-a) > 1e-9 || math.Abs(slope-b) > 1e-9 {
			t.Errorf("order %d: %v %v, weights give %v %v", order, val, slope, a, b)
		}
	}
}
