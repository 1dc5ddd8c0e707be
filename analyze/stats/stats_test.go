package stats

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// Worked values: the mean and sample SD of 2, 4, 4, 4, 5, 5, 7, 9 are 5 and
// sqrt(32/7) = 2.138 (the population SD, 2, is the classic textbook example; common
// practice, no source).
func TestMeanSD(t *testing.T) {
	x := []float64{2, 4, 4, 4, 5, 5, 7, 9}
	m, s := MeanSD(x)
	if m != 5 || math.Abs(s-math.Sqrt(32.0/7)) > 1e-12 {
		t.Errorf("mean %v sd %v", m, s)
	}
	if !math.IsNaN(Mean(nil)) || !math.IsNaN(SD([]float64{1})) || !math.IsNaN(Median(nil)) {
		t.Error("too few values must give NaN")
	}
}

func TestMedianMatchesSort(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for n := 1; n < 60; n++ {
		for rep := 0; rep < 20; rep++ {
			x := make([]float64, n)
			for i := range x {
				x[i] = float64(rng.IntN(7)) // many ties
				if rep%2 == 1 {
					x[i] = rng.NormFloat64()
				}
			}
			s := slices.Clone(x)
			slices.Sort(s)
			want := s[n/2]
			if n%2 == 0 {
				want = (s[n/2-1] + s[n/2]) / 2
			}
			if got := Median(x); got != want {
				t.Fatalf("n %d: median %v, want %v (%v)", n, got, want, x)
			}
			k := rng.IntN(n)
			if got := Select(slices.Clone(x), k); got != s[k] {
				t.Fatalf("n %d: select %d = %v, want %v", n, k, got, s[k])
			}
		}
	}
}

func TestCombine(t *testing.T) {
	// Two estimates 1 ± 1 and 3 ± 1: weighted mean 2, SE 1/sqrt(2) widened by the Birge
	// ratio sqrt(χ²/(n−1)) = sqrt(2).
	m, se := Combine([]float64{1, 3}, []float64{1, 1})
	if m != 2 || math.Abs(se-1) > 1e-12 {
		t.Errorf("combine: %v ± %v, want 2 ± 1", m, se)
	}
	// Agreeing estimates keep the plain inverse-variance error.
	m, se = Combine([]float64{2, 2}, []float64{1, 1})
	if m != 2 || math.Abs(se-1/math.Sqrt2) > 1e-12 {
		t.Errorf("combine: %v ± %v", m, se)
	}
	m, se = CombineScale([]float64{10, 10}, []float64{1, 1})
	if math.Abs(m-10) > 1e-12 || math.Abs(se-10*0.1/math.Sqrt2) > 1e-12 {
		t.Errorf("combineScale: %v ± %v", m, se)
	}
}

func BenchmarkMedianVsSort(b *testing.B) {
	rng := rand.New(rand.NewPCG(3, 4))
	x := make([]float64, 4096)
	for i := range x {
		x[i] = rng.NormFloat64()
	}
	buf := make([]float64, len(x))
	var sortNs, selNs float64
	b.Run("sort", func(b *testing.B) {
		for b.Loop() {
			copy(buf, x)
			slices.Sort(buf)
		}
		sortNs = float64(b.Elapsed().Nanoseconds()) / float64(b.N)
	})
	b.Run("select", func(b *testing.B) {
		for b.Loop() {
			copy(buf, x)
			MedianInPlace(buf)
		}
		selNs = float64(b.Elapsed().Nanoseconds()) / float64(b.N)
		if sortNs > 0 {
			b.ReportMetric(selNs/sortNs, "select/sort")
		}
	})
}
