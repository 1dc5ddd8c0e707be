package fit

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestWeightsAsRepeats checks weighting against its definition: an integer weight k on a
// point gives the same parameters and RSS as repeating the point k times.
func TestWeightsAsRepeats(t *testing.T) {
	d := loadSTRD(t, "misra1a") // NIST StRD Misra1a data, used here only as a curve
	m := strdModels["misra1a"]
	w := make([]float64, len(d.x))
	var rep strd
	for k := range d.x {
		w[k] = float64(1 + k%3)
		for range int(w[k]) {
			rep.x, rep.y = append(rep.x, d.x[k]), append(rep.y, d.y[k])
		}
	}
	pw := strdProblem(d, m, true)
	pw.Weights = w
	a, err := Solve(pw, []float64{250, 5e-4}, nil)
	if err != nil {
		t.Fatal(err)
	}
	b, err := Solve(strdProblem(&rep, m, true), []float64{250, 5e-4}, nil)
	if err != nil {
		t.Fatal(err)
	}
	for k := range a.X {
		if math.Abs(a.X[k]/b.X[k]-1) > 1e-9 {
			t.Errorf("b%d: weighted %.12g, repeated %.12g", k+1, a.X[k], b.X[k])
		}
	}
	if math.Abs(a.RSS/b.RSS-1) > 1e-9 {
		t.Errorf("RSS: weighted %.12g, repeated %.12g", a.RSS, b.RSS)
	}
}

// TestRankDeficient: in y = a + b·x + c·x only b + c is determined; a stays identifiable.
func TestRankDeficient(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	x := make([]float64, 30)
	y := make([]float64, 30)
	for i := range x {
		x[i] = float64(i)
		y[i] = 2 + 0.5*x[i] + 0.01*rng.NormFloat64()
	}
	for _, analytic := range []bool{true, false} {
		p := Problem{M: len(x), Func: func(dst, b []float64) {
			for i := range x {
				dst[i] = b[0] + b[1]*x[i] + b[2]*x[i] - y[i]
			}
		}}
		if analytic {
			p.Jac = func(dst *mat.Dense, b []float64) {
				for i := range x {
					dst.Set(i, 0, 1)
					dst.Set(i, 1, x[i])
					dst.Set(i, 2, x[i])
				}
			}
		}
		res, err := Solve(p, []float64{0, 1, 1}, nil)
		if err != nil {
			t.Fatal(err)
		}
		if res.Rank != 2 {
			t.Errorf("analytic %v: rank %d, want 2", analytic, res.Rank)
		}
		want := []bool{true, false, false}
		for k := range want {
			if res.Identifiable[k] != want[k] {
				t.Errorf("analytic %v: Identifiable %v, want %v", analytic, res.Identifiable, want)
				break
			}
		}
		if !math.IsNaN(res.SE[1]) || math.IsNaN(res.SE[0]) || math.Abs(res.X[0]-2) > 5*res.SE[0] {
			t.Errorf("analytic %v: X %v SE %v", analytic, res.X, res.SE)
		}
		if s := res.X[1] + res.X[2]; math.Abs(s-0.5) > 1e-3 {
			t.Errorf("b + c = %g, want about 0.5", s)
		}
	}
}

func TestSolveBadInput(t *testing.T) {
	f := func(dst, x []float64) {
		for i := range dst {
			dst[i] = x[0] - float64(i)
		}
	}
	cases := map[string]struct {
		p  Problem
		x0 []float64
	}{
		"nil func":        {Problem{M: 3}, []float64{1}},
		"no params":       {Problem{M: 3, Func: f}, nil},
		"too few":         {Problem{M: 1, Func: f}, []float64{1, 2}},
		"weights length":  {Problem{M: 3, Func: f, Weights: []float64{1}}, []float64{1}},
		"negative weight": {Problem{M: 3, Func: f, Weights: []float64{1, -1, 1}}, []float64{1}},
		"NaN start":       {Problem{M: 3, Func: f}, []float64{math.NaN()}},
		"NaN residual": {Problem{M: 3, Func: func(dst, x []float64) {
			dst[0], dst[1], dst[2] = math.NaN(), 0, 0
		}}, []float64{1}},
	}
	for name, c := range cases {
		res, err := Solve(c.p, c.x0, nil)
		if !errors.Is(err, ErrInput) || res != nil {
			t.Errorf("%s: err %v, res %v; want ErrInput and nil", name, err, res)
		}
	}
}

func TestIterationLimit(t *testing.T) {
	d := loadSTRD(t, "misra1a") // NIST StRD Misra1a, start 1, stopped after 2 iterations
	res, err := Solve(strdProblem(d, strdModels["misra1a"], true), d.start(t, 1, 2), &Settings{MaxIterations: 2})
	var se *StatusError
	if !errors.As(err, &se) || se.Status != IterationLimit || !errors.Is(err, ErrNotConverged) {
		t.Fatalf("err = %v, want an IterationLimit StatusError", err)
	}
	if res == nil || res.Iterations != 2 || res.Status.Converged() {
		t.Fatalf("result %+v", res)
	}
}

// TestInterval checks the 95 % interval against Student's t quantile t(0.975, 12) = 2.179
// as printed in t tables (for example the NIST/SEMATECH e-Handbook of Statistical
// Methods; value from memory).
func TestInterval(t *testing.T) {
	d := loadSTRD(t, "misra1a")
	res, err := Solve(strdProblem(d, strdModels["misra1a"], true), d.start(t, 2, 2), nil)
	if err != nil {
		t.Fatal(err)
	}
	q := (res.Hi[0] - res.X[0]) / res.SE[0]
	if math.Abs(q-2.179) > 5e-4 {
		t.Errorf("t quantile %.6f, table 2.179", q)
	}
	lo, hi := res.Interval(0, 0.95)
	if lo != res.Lo[0] || hi != res.Hi[0] {
		t.Errorf("Interval %g %g, fields %g %g", lo, hi, res.Lo[0], res.Hi[0])
	}
	if vlo, vhi := (Value{res.X[0], res.SE[0]}).Interval(res.DoF, 0.95); vlo != lo || vhi != hi {
		t.Errorf("Value.Interval %g %g, Result.Interval %g %g", vlo, vhi, lo, hi)
	}
	if c := res.Corr(0, 1); !(c < -0.9 && c >= -1) {
		t.Errorf("corr(b1, b2) = %g: b1 and b2 of Misra1a are strongly anti-correlated", c)
	}
}

func TestRobustLine(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 32))
	n := 200
	x := make([]float64, n)
	y := make([]float64, n)
	for i := range x {
		x[i] = float64(i) / 10
		y[i] = 1 + 0.05*x[i] + 0.01*rng.NormFloat64()
	}
	clean, err := RobustLine(x, y)
	if err != nil {
		t.Fatal(err)
	}
	ols, _ := Line(x, y, nil)
	if r := clean.Slope.SD / ols.Slope.SD; r < 0.9 || r > 1.15 {
		t.Errorf("clean data: robust slope SE %g vs OLS %g", clean.Slope.SD, ols.Slope.SD)
	}
	for i := 0; i < n; i += 10 { // 10 % gross outliers, all on one side
		y[i] += 0.5
	}
	rob, err := RobustLine(x, y)
	if err != nil {
		t.Fatal(err)
	}
	ols, _ = Line(x, y, nil)
	t.Logf("slope: robust %.5f ± %.5f, OLS %.5f ± %.5f; intercept robust %.4f, OLS %.4f",
		rob.Slope.Value, rob.Slope.SD, ols.Slope.Value, ols.Slope.SD, rob.Intercept.Value, ols.Intercept.Value)
	if math.Abs(rob.Slope.Value-0.05) > 3*rob.Slope.SD || math.Abs(rob.Intercept.Value-1) > 0.01 {
		t.Errorf("robust line %+v", rob)
	}
	if math.Abs(ols.Intercept.Value-1) < 0.03 {
		t.Errorf("OLS intercept %g should be pulled up by the outliers", ols.Intercept.Value)
	}
	if rob.Outliers < n/10 {
		t.Errorf("%d points down-weighted, want at least %d", rob.Outliers, n/10)
	}
}

// TestAbsoluteWeights: with weights 1/σ² the absolute covariance is the relative one
// divided by s² = RSS/DoF.
func TestAbsoluteWeights(t *testing.T) {
	d := loadSTRD(t, "misra1a") // NIST StRD Misra1a data, used here only as a curve
	p := strdProblem(d, strdModels["misra1a"], true)
	p.Weights = make([]float64, p.M)
	for i := range p.Weights {
		p.Weights[i] = 1 / (0.1 * 0.1)
	}
	rel, err := Solve(p, []float64{250, 5e-4}, nil)
	if err != nil {
		t.Fatal(err)
	}
	abs, err := Solve(p, []float64{250, 5e-4}, &Settings{AbsoluteWeights: true})
	if err != nil {
		t.Fatal(err)
	}
	for k := range rel.SE {
		if want := rel.SE[k] / rel.SD; math.Abs(abs.SE[k]/want-1) > 1e-12 {
			t.Errorf("SE[%d] = %g, want %g", k, abs.SE[k], want)
		}
	}
	// Relative weights: a common factor changes nothing (NIST StRD Misra1a certified
	// sd(b1) = 2.7070075241, parsed from the file).
	if e := lre(rel.SE[0], d.num(t, "certified_sd_b1"), 11); e < 6 {
		t.Errorf("relative SE with scaled weights: LRE %.1f", e)
	}
}
