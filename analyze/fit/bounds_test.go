package fit

import (
	"errors"
	"math"
	"testing"
)

// TestBoundActive fits NIST StRD Misra1a with b1 held below its optimum (238.94): b1 must
// end on the bound and b2 at the optimum of the one-parameter problem with b1 fixed there.
func TestBoundActive(t *testing.T) {
	d := loadSTRD(t, "misra1a")
	m := strdModels["misra1a"]
	for _, analytic := range []bool{true, false} {
		p := strdProblem(d, m, analytic)
		p.Upper = []float64{230, math.Inf(1)}
		p.Lower = []float64{0, 0}
		res, err := Solve(p, []float64{200, 1e-4}, nil)
		if err != nil {
			t.Fatalf("analytic %v: %v", analytic, err)
		}
		one := Problem{M: len(d.x), Func: func(dst, b []float64) {
			for i, x := range d.x {
				dst[i] = d.y[i] - 230*(1-math.Exp(-b[0]*x))
			}
		}}
		ref, err := Solve(one, []float64{1e-4}, nil)
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("analytic %v: %v, AtBound %v, SE %v; fixed-b1 fit b2 = %.10g ± %.3g; %v",
			analytic, res.X, res.AtBound, res.SE, ref.X[0], ref.SE[0], res.Status)
		if res.X[0] != 230 || !res.AtBound[0] || res.AtBound[1] {
			t.Errorf("b1 = %v, AtBound %v; want 230 on its bound", res.X[0], res.AtBound)
		}
		if math.Abs(res.X[1]/ref.X[0]-1) > 1e-8 {
			t.Errorf("b2 = %.10g, one-parameter optimum %.10g", res.X[1], ref.X[0])
		}
		// Same curvature, DoF 12 instead of 13.
		if want := ref.SE[0] * math.Sqrt(13.0/12); math.Abs(res.SE[1]/want-1) > 1e-5 || !math.IsNaN(res.SE[0]) {
			t.Errorf("SE %v, want [NaN %g]", res.SE, want)
		}
	}
}

// TestBoundInactive: bounds that do not bind leave the NIST StRD results unchanged
// (LRE >= 6 on Misra1a from start 1).
func TestBoundInactive(t *testing.T) {
	d := loadSTRD(t, "misra1a")
	p := strdProblem(d, strdModels["misra1a"], true)
	p.Lower = []float64{0, 0}
	p.Upper = []float64{1000, 1}
	res, err := Solve(p, d.start(t, 1, 2), nil)
	if err != nil {
		t.Fatal(err)
	}
	for k := 0; k < 2; k++ {
		cert := d.num(t, []string{"certified_b1", "certified_b2"}[k])
		if e := lre(res.X[k], cert, 11); e < 6 || res.AtBound[k] {
			t.Errorf("NIST StRD Misra1a b%d = %.10g with inactive bounds: LRE %.1f", k+1, res.X[k], e)
		}
	}
}

func TestBoundBadInput(t *testing.T) {
	f := func(dst, x []float64) { dst[0], dst[1] = x[0], x[0]-1 }
	for name, p := range map[string]Problem{
		"length":  {M: 2, Func: f, Lower: []float64{0, 0}},
		"crossed": {M: 2, Func: f, Lower: []float64{2}, Upper: []float64{1}},
		"outside": {M: 2, Func: f, Lower: []float64{5}},
		"NaN":     {M: 2, Func: f, Upper: []float64{math.NaN()}},
	} {
		if _, err := Solve(p, []float64{1}, nil); !errors.Is(err, ErrInput) {
			t.Errorf("%s: err %v, want ErrInput", name, err)
		}
	}
}
