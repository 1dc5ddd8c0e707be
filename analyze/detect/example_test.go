package detect_test

import (
	"fmt"

	"capcycle/analyze/detect"
)

// The 5-point quadratic smoothing filter of Savitzky and Golay (1964):
// (-3, 12, 17, 12, -3)/35.
func ExampleSGCoeffs() {
	c := detect.SGCoeffs(2, 2, 0)
	for _, x := range c {
		fmt.Printf("%.0f ", x*35)
	}
	fmt.Println()
	// Output: -3 12 17 12 -3
}

// The slope of a quadratic through unevenly spaced points, at one of them.
func ExampleLocalPoly() {
	t := []float64{0, 0.4, 0.5, 1.3, 2}
	v := make([]float64, len(t))
	for i, x := range t {
		v[i] = 1 + 2*x - 0.25*x*x
	}
	val, slope, _ := detect.LocalPoly(t, v, 1.3, 2)
	fmt.Printf("v(1.3) = %.4f, dv/dt(1.3) = %.4f\n", val, slope)
	// Output: v(1.3) = 3.1775, dv/dt(1.3) = 1.3500
}

// A sawtooth: charge for 9 s, fall in 0.1 s, rest at the bottom until 10 s, charge
// again. Three falls; the last is not a finished cycle, since no charging follows it.
func ExampleDetector() {
	var t, v []float64
	for i := 0; i < 3000; i++ {
		ts := float64(i) * 0.01
		ph := ts - 10*float64(int(ts/10))
		x := 1 + ph/9
		if ph > 9.9 {
			x = 1
		} else if ph > 9 {
			x = 2 - (ph-9)/0.9*10
		}
		t = append(t, ts)
		v = append(v, max(x, 1))
	}
	d := detect.New(nil)
	d.Push(t, v)
	s := d.Finish()
	for _, c := range s.Cycles {
		fmt.Printf("fire %.2f s at %.2f V, reset %.2f s at %.2f V\n", c.FireS, c.FireV, c.ResetS, c.ResetV)
	}
	// Output:
	// fire 9.00 s at 2.00 V, reset 9.10 s at 1.00 V
	// fire 19.00 s at 2.00 V, reset 19.10 s at 1.00 V
}
