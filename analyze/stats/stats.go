// Package stats holds the small statistics the analysis uses everywhere: the mean, the
// sample standard deviation, the median, and the inverse-variance combination of
// estimates. It is a list of short functions, each saying what it returns for too few
// values, so that every package treats n < 2 the same way:
//
//   - Mean of no values is NaN.
//   - SD of fewer than two values is NaN (one value says nothing about the spread).
//   - Median of no values is NaN.
//
// Mean and SD are the plain two-pass sums (gonum's stat.Mean sums in another order, which
// moves results in the last bits and, through the circuit simulator's step control, in the
// eighth digit of a predicted time); the median is found by selection (Hoare's
// quickselect), in O(n) rather than a full sort.
package stats

import (
	"math"
)

// Mean returns the arithmetic mean of x, NaN for an empty x.
func Mean(x []float64) float64 {
	if len(x) == 0 {
		return math.NaN()
	}
	var sum float64
	for _, v := range x {
		sum += v
	}
	return sum / float64(len(x))
}

// SD returns the sample standard deviation of x, sqrt(Σ(x−m)²/(n−1)), NaN for fewer than
// two values.
func SD(x []float64) float64 {
	if len(x) < 2 {
		return math.NaN()
	}
	m := Mean(x)
	var ss float64
	for _, v := range x {
		ss += (v - m) * (v - m)
	}
	return math.Sqrt(ss / float64(len(x)-1))
}

// MeanSD returns Mean(x) and SD(x).
func MeanSD(x []float64) (mean, sd float64) { return Mean(x), SD(x) }

// Median returns the median of x (the mean of the two middle values for an even count),
// NaN for an empty x. x is not changed.
func Median(x []float64) float64 {
	if len(x) == 0 {
		return math.NaN()
	}
	return MedianInPlace(append([]float64(nil), x...))
}

// MedianInPlace is Median that reorders x instead of copying it.
func MedianInPlace(x []float64) float64 {
	n := len(x)
	if n == 0 {
		return math.NaN()
	}
	hi := Select(x, n/2)
	if n%2 == 1 {
		return hi
	}
	// The lower middle value is the largest of the values left of n/2.
	lo := x[0]
	for _, v := range x[1 : n/2] {
		lo = math.Max(lo, v)
	}
	return (lo + hi) / 2
}

// Select reorders x so that x[k] is the value a sort would put there, with no larger
// value before it and no smaller after, and returns x[k]. It panics when k is out of range
// (a programmer's error). NaNs compare as neither smaller nor larger; keep them out.
func Select(x []float64, k int) float64 {
	if k < 0 || k >= len(x) {
		panic("stats: Select index out of range")
	}
	lo, hi := 0, len(x)-1
	for lo < hi {
		// Median of three as the pivot keeps sorted and reversed input linear.
		mid := lo + (hi-lo)/2
		if x[mid] < x[lo] {
			x[mid], x[lo] = x[lo], x[mid]
		}
		if x[hi] < x[lo] {
			x[hi], x[lo] = x[lo], x[hi]
		}
		if x[hi] < x[mid] {
			x[hi], x[mid] = x[mid], x[hi]
		}
		p := x[mid]
		i, j := lo, hi
		for i <= j {
			for x[i] < p {
				i++
			}
			for p < x[j] {
				j--
			}
			if i <= j {
				x[i], x[j] = x[j], x[i]
				i++
				j--
			}
		}
		switch {
		case k <= j:
			hi = j
		case k >= i:
			lo = i
		default:
			return x[k]
		}
	}
	return x[k]
}

// Combine is the inverse-variance weighted mean of the estimates xs (standard errors
// sds), with its standard error widened by the Birge ratio sqrt(χ²/(n−1)) when the values
// scatter more than their errors say (R. T. Birge, Phys. Rev. 40, 207 (1932)). When any
// estimate lacks a usable error (zero, negative, NaN or infinite) the values are averaged
// plainly, with the standard error of that mean from their spread (NaN for one value).
func Combine(xs, sds []float64) (mean, se float64) {
	var sw, swx float64
	for k, x := range xs {
		s := sds[k]
		if !(s > 0) || math.IsInf(s, 0) {
			return Mean(xs), SD(xs) / math.Sqrt(float64(len(xs)))
		}
		w := 1 / (s * s)
		sw += w
		swx += w * x
	}
	if sw == 0 {
		return Mean(xs), SD(xs) / math.Sqrt(float64(len(xs)))
	}
	mean = swx / sw
	se = math.Sqrt(1 / sw)
	if len(xs) > 1 {
		var chi float64
		for k, x := range xs {
			chi += (x - mean) * (x - mean) / (sds[k] * sds[k])
		}
		if r := chi / float64(len(xs)-1); r > 1 {
			se *= math.Sqrt(r)
		}
	}
	return mean, se
}

// CombineScale combines positive estimates of a scale (a time constant) whose standard
// errors grow in proportion to them, as a fit's do: in logarithms, each weighted by its
// relative error. Weighting the values themselves by 1/sd² would favour the estimates
// whose noise happened to make them small (their sd is small with them) and so bias the
// mean low. With any value not positive it is Combine.
func CombineScale(xs, sds []float64) (mean, se float64) {
	ls, lsds := make([]float64, len(xs)), make([]float64, len(xs))
	for k, x := range xs {
		if !(x > 0) {
			return Combine(xs, sds)
		}
		ls[k], lsds[k] = math.Log(x), sds[k]/x
	}
	m, s := Combine(ls, lsds)
	mean = math.Exp(m)
	return mean, mean * s
}
