package analyze

import (
	"math"

	"capcycle/analyze/analysis"
	"capcycle/analyze/stats"
)

// spread is the mean of xs with the SD across them, and the 95 % interval of the mean.
func spread(xs []float64, origin analysis.Origin) *analysis.Estimate {
	if len(xs) == 0 {
		return nil
	}
	m := stats.Mean(xs)
	e := &analysis.Estimate{Value: m, Origin: origin}
	if len(xs) > 1 {
		s := stats.SD(xs)
		e.SD = ptr(s)
		h := 1.96 * s / math.Sqrt(float64(len(xs)))
		e.Lo95, e.Hi95 = ptr(m-h), ptr(m+h)
	}
	return e
}

// est makes an Estimate; an SD that is NaN or negative is left null. The 95 % interval
// is value ± 1.96 SD.
func est(v, sd float64, origin analysis.Origin) *analysis.Estimate {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	e := &analysis.Estimate{Value: v, Origin: origin}
	if sd >= 0 && !math.IsInf(sd, 0) {
		e.SD = ptr(sd)
		e.Lo95, e.Hi95 = ptr(v-1.96*sd), ptr(v+1.96*sd)
	}
	return e
}

func sdOf(e *analysis.Estimate) float64 {
	if e == nil || e.SD == nil {
		return math.NaN()
	}
	return *e.SD
}

func ptr(v float64) *float64 { return &v }
