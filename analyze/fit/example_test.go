package fit_test

import (
	"fmt"
	"math"

	"capcycle/analyze/fit"
)

// Fit y = b1·(1 − exp(−b2·x)) to exact data by finite differences.
func ExampleSolve() {
	x := []float64{1, 2, 3, 5, 7, 10}
	y := make([]float64, len(x))
	for i := range x {
		y[i] = 3 * (1 - math.Exp(-0.4*x[i]))
	}
	p := fit.Problem{
		M: len(x),
		Func: func(dst, b []float64) {
			for i := range x {
				dst[i] = y[i] - b[0]*(1-math.Exp(-b[1]*x[i]))
			}
		},
	}
	res, err := fit.Solve(p, []float64{1, 1}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("b1 = %.6f, b2 = %.6f, rank %d, converged: %v\n", res.X[0], res.X[1], res.Rank, res.Status.Converged())
	// Output:
	// b1 = 3.000000, b2 = 0.400000, rank 2, converged: true
}

// A capacitor discharging through a load while a cell keeps charging it: the voltage
// settles towards 1.2 V with a 50 ms time constant. (Invented numbers.)
func ExampleExpApproach() {
	var t, v []float64
	for i := 0; i < 200; i++ {
		ts := float64(i) * 1e-3
		noise := 1e-3 * math.Sin(float64(i)*2.1) // a deterministic stand-in for noise
		t = append(t, ts)
		v = append(v, 1.2+(3.0-1.2)*math.Exp(-ts/0.05)+noise)
	}
	f, err := fit.ExpApproach(t, v)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("tau = %.2f ms, v_inf = %.3f V, v0 = %.3f V\n", f.Tau.Value*1e3, f.VInf.Value, f.V0.Value)
	// Output:
	// tau = 50.00 ms, v_inf = 1.200 V, v0 = 3.000 V
}

// The operating points of a single-diode cell model.
func ExampleDiodeParams() {
	cell := fit.DiodeParams{Iph: 0.7608, I0: 3.1e-7, N: 1.477, Rs: 0.0365, Rsh: 52.9}
	vt := fit.ThermalVoltage(306.15) // one cell at 33 °C
	vmp, imp, pmp := cell.MaxPower(vt)
	fmt.Printf("Isc %.4f A, Voc %.4f V\n", cell.Isc(vt), cell.Voc(vt))
	fmt.Printf("MPP %.4f V × %.4f A = %.4f W\n", vmp, imp, pmp)
	// Output:
	// Isc 0.7603 A, Voc 0.5728 V
	// MPP 0.4507 V × 0.6894 A = 0.3107 W
}

// The drift of the trigger voltage over a day, with one missed event that a plain least
// squares line would follow. (Invented numbers.)
func ExampleRobustLine() {
	var hours, onV []float64
	for i := 0; i < 24; i++ {
		hours = append(hours, float64(i))
		onV = append(onV, 2.90+0.002*float64(i)+0.0005*math.Cos(float64(i)))
	}
	onV[7] = 2.5 // a glitch
	l, err := fit.RobustLine(hours, onV)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("drift %.2f mV/h, %d point(s) down-weighted\n", l.Slope.Value*1e3, l.Outliers)
	// Output:
	// drift 2.00 mV/h, 1 point(s) down-weighted
}

// Fit the single-diode model to points of a known curve and read off its operating
// points. (Invented parameters for one cell at 25 °C; Voc, Isc and Pmp agree with an
// independent Newton solution of the implicit equation.)
func ExampleSingleDiode() {
	truth := fit.DiodeParams{Iph: 0.05, I0: 1e-9, N: 1.3, Rs: 0.5, Rsh: 200}
	vt := fit.ThermalVoltage(298.15)
	var v, i []float64
	for k := 0; k <= 40; k++ {
		x := -0.1 + 0.72*float64(k)/40
		v, i = append(v, x), append(i, truth.Current(x, vt))
	}
	f, err := fit.SingleDiode(v, i, 1, 298.15, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	p := f.Params
	fmt.Printf("Iph %.4f A, I0 %.3g A, n %.3f, Rs %.3f Ω, Rsh %.1f Ω\n", p.Iph, p.I0, p.N, p.Rs, p.Rsh)
	fmt.Printf("Isc %.4f A, Voc %.4f V, Pmp %.2f mW\n", f.Isc, f.Voc, f.Pmp*1e3)
	// Output:
	// Iph 0.0500 A, I0 1e-09 A, n 1.300, Rs 0.500 Ω, Rsh 200.0 Ω
	// Isc 0.0499 A, Voc 0.5901 V, Pmp 21.18 mW
}

// Residuals of a good fit look like noise; a smooth leftover curve does not.
func ExampleResidualPattern() {
	noise := make([]float64, 200)
	curve := make([]float64, 200)
	for k := range noise {
		noise[k] = 1e-3 * math.Sin(float64(k*k)) // scrambled: a stand-in for noise
		curve[k] = 1e-3 * math.Sin(float64(k)/30)
	}
	fmt.Println("noise systematic:", fit.ResidualPattern(noise, 3, 0).Systematic)
	fmt.Println("curve systematic:", fit.ResidualPattern(curve, 3, 0).Systematic)
	// Output:
	// noise systematic: false
	// curve systematic: true
}
