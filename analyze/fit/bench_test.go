package fit

import (
	"math"
	"math/rand/v2"
	"testing"
	"time"
)

// The benchmarks report fits/s and, as the baseline measured in the same run, the cost
// of one fit in units of one residual-plus-Jacobian evaluation of the same problem
// ("evals/fit").

func diodeBenchData() (v, i []float64, vt float64) {
	truth := DiodeParams{Iph: 0.7608, I0: 3.1e-7, N: 1.477, Rs: 0.0365, Rsh: 52.9}
	vt = ThermalVoltage(306.15)
	voc := truth.Voc(vt)
	rng := rand.New(rand.NewPCG(11, 12))
	for k := 0; k < 1000; k++ {
		x := -0.2 + (voc+0.22)*float64(k)/999
		v = append(v, x)
		i = append(i, truth.Current(x, vt)+5e-4*rng.NormFloat64())
	}
	return v, i, vt
}

func BenchmarkSingleDiode1000(b *testing.B) {
	v, i, _ := diodeBenchData()
	base := baseline(b, diodeProblem(v, i, ThermalVoltage(306.15), false),
		[]float64{0.76, math.Log(3e-7), 1.5, math.Log(0.036), math.Log(50)})
	b.ResetTimer()
	for b.Loop() {
		if _, err := SingleDiode(v, i, 1, 306.15, nil); err != nil {
			b.Fatal(err)
		}
	}
	report(b, base)
}

func BenchmarkExpApproach500(b *testing.B) {
	rng := rand.New(rand.NewPCG(13, 14))
	t, v := expData(rng, 500, 0.2, 3.0, 1.2, 0.05, 2e-3, 0, false)
	tt := make([]float64, len(t))
	for k := range t {
		tt[k] = t[k] - t[0]
	}
	base := baseline(b, expProblem(tt, v), []float64{3, -36, 20})
	b.ResetTimer()
	for b.Loop() {
		if _, err := ExpApproach(t, v); err != nil {
			b.Fatal(err)
		}
	}
	report(b, base)
}

// baseline times one residual and one Jacobian evaluation of p at x, in seconds: the
// fastest of 7 batches of 300, so that a busy machine disturbs it less.
func baseline(b *testing.B, p Problem, x []float64) float64 {
	b.Helper()
	r := make([]float64, p.M)
	ev := newEvaluator(p, len(x), defaults(nil, len(x), true))
	j := newStepper(p.M, len(x)).j
	const reps = 300
	best := math.Inf(1)
	for range 7 {
		start := time.Now()
		for range reps {
			ev.eval(r, x)
			ev.jacobian(j, x, r, true)
		}
		best = math.Min(best, time.Since(start).Seconds()/reps)
	}
	return best
}

func report(b *testing.B, base float64) {
	perFit := b.Elapsed().Seconds() / float64(b.N)
	b.ReportMetric(1/perFit, "fits/s")
	b.ReportMetric(perFit/base, "evals/fit")
}
