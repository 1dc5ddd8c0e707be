package analyze

import (
	"math"
	"math/rand/v2"
	"testing"

	"capcycle/analyze/analysis"
)

// TestSpreadIsStandardError: the SD of a mean over cycles is its standard error, the
// cycle-to-cycle SD goes to Spread, and the 95 % interval covers the true mean in about
// 95 % of realisations, for independent values and for values that follow each other
// (a first-order autoregressive series, as a period follows a drifting light).
func TestSpreadIsStandardError(t *testing.T) {
	for _, phi := range []float64{0, 0.6} {
		rng := rand.New(rand.NewPCG(7, uint64(100*phi)))
		const reps, n = 1000, 120
		covered := 0
		for range reps {
			xs := make([]float64, n)
			prev := 0.0
			for i := range xs {
				prev = phi*prev + math.Sqrt(1-phi*phi)*rng.NormFloat64()
				xs[i] = 2.5 + 0.01*prev
			}
			e := spread(xs, analysis.OriginMeasured)
			if e.Spread == nil || math.Abs(*e.Spread-0.01) > 0.004 {
				t.Fatalf("phi %.1f: spread %v, want about 0.01", phi, e.Spread)
			}
			if *e.SD >= *e.Spread/3 {
				t.Fatalf("phi %.1f: sd %g is not a standard error of %d values with spread %g", phi, *e.SD, n, *e.Spread)
			}
			if *e.Lo95 <= 2.5 && 2.5 <= *e.Hi95 {
				covered++
			}
		}
		cov := float64(covered) / reps
		t.Logf("phi %.1f: 95 %% interval of the mean covers the truth in %.1f %%", phi, 100*cov)
		if cov < 0.90 || cov > 0.99 {
			t.Errorf("phi %.1f: coverage %.3f, want 0.90-0.99", phi, cov)
		}
	}
}

// TestWithBudget: SD is the root sum of squares of the components, and components that
// are zero or not finite are dropped.
func TestWithBudget(t *testing.T) {
	e := withBudget(est(10, 0.3, analysis.OriginFitted),
		analysis.Component{Source: analysis.SourceFit, U: 0.3},
		analysis.Component{Source: analysis.SourceCapacitance, U: 0.4},
		analysis.Component{Source: analysis.SourceModel, U: 0})
	if math.Abs(*e.SD-0.5) > 1e-12 || len(e.Budget) != 2 {
		t.Fatalf("sd %v budget %v, want 0.5 from two components", *e.SD, e.Budget)
	}
	if math.Abs(*e.Hi95-10.98) > 1e-12 {
		t.Errorf("hi95 %v, want 10.98", *e.Hi95)
	}
}
