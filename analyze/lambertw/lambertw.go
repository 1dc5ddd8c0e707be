package lambertw

import "math"

// invE is 1/e split into a leading double and the remainder, so that x + 1/e can be formed
// near the branch point without cancellation: invEHi + invELo = 1/e to about 1e-33.
const (
	invEHi = 0.36787944117144233     // float64 nearest 1/e
	invELo = -1.2428753672788363e-17 // 1/e - invEHi
)

// seriesMax is the |x| below which W0 sums its Taylor series instead of iterating.
const seriesMax = 2e-3

// halleyDone is the step size after which one more Halley step is not needed: the error
// left after a step dw is of order dw³.
const halleyDone = 1e-6

// maxHalley bounds the iteration; convergence from the initial guesses takes 1 to 4 steps.
const maxHalley = 12

// W0 returns the principal branch W0(x) for x >= -1/e: the w >= -1 with w*exp(w) = x.
// W0(-1/e) = -1, W0(0) = 0, W0(+Inf) = +Inf; NaN for x < -1/e or NaN.
func W0(x float64) float64 {
	switch {
	case math.IsNaN(x):
		return x
	case math.IsInf(x, 1):
		return x
	case x == 0:
		return 0
	}
	q := branchOffset(x)
	if q < 0 {
		if q > -1e-16 { // within rounding of the branch point
			return -1
		}
		return math.NaN()
	}
	if math.Abs(x) < seriesMax {
		// Taylor series W = Σ (-n)^(n-1)/n! xⁿ through x⁷; the first omitted term is
		// 52 x⁸, below 1e-17 of W here.
		return x * (1 + x*(-1+x*(1.5+x*(-8.0/3+x*(125.0/24+x*(-10.8+x*(16807.0/720)))))))
	}
	if x > 3 {
		// Work in logarithms: w + ln w = ln x avoids exp(w) for huge w.
		return W0Exp(math.Log(x))
	}
	var w float64
	switch {
	case q < 0.3:
		w = branchSeries(math.Sqrt(2 * math.E * q))
	case math.Abs(x) < 0.25:
		// Padé-like start from the Taylor series W = x - x^2 + 3/2 x^3.
		w = x * (1 + 4.0/3.0*x) / (1 + 7.0/3.0*x + 5.0/6.0*x*x)
	default:
		// Start of Winitzki type: W ~ L (1 - ln(1+L)/(2+L)), L = ln(1+x).
		l := math.Log1p(x)
		w = l * (1 - math.Log1p(l)/(2+l))
	}
	return halley(x, w)
}

// Wm1 returns the lower branch W-1(x) for -1/e <= x < 0: the w <= -1 with w*exp(w) = x.
// Wm1(-1/e) = -1, Wm1(0) = -Inf; NaN outside [-1/e, 0].
func Wm1(x float64) float64 {
	switch {
	case math.IsNaN(x) || x > 0:
		return math.NaN()
	case x == 0:
		return math.Inf(-1)
	}
	q := branchOffset(x)
	if q < 0 {
		if q > -1e-16 {
			return -1
		}
		return math.NaN()
	}
	var w float64
	if q < 0.25 {
		w = branchSeries(-math.Sqrt(2 * math.E * q))
	} else {
		// Asymptotic start for x -> 0-: W ~ L1 - L2 + L2/L1, L1 = ln(-x), L2 = ln(-L1).
		l1 := math.Log(-x)
		l2 := math.Log(-l1)
		w = l1 - l2 + l2/l1
	}
	return halley(x, w)
}

// W0Exp returns W0(exp(l)) for any finite l, without forming exp(l). It solves
// w + ln(w) = l by Halley's method. W0Exp(1) = 1; W0Exp(-Inf) = 0; W0Exp(+Inf) = +Inf.
func W0Exp(l float64) float64 {
	switch {
	case math.IsNaN(l):
		return l
	case math.IsInf(l, 1):
		return l
	case math.IsInf(l, -1):
		return 0
	}
	if l < 1 {
		// exp(l) < e < 3: the direct form is accurate, cannot overflow, and W0 does not
		// hand arguments below 3 back to W0Exp (no mutual recursion).
		return W0(math.Exp(l))
	}
	// Start from the asymptotic series W ~ L1 - L2 + L2/L1 + L2(L2-2)/(2 L1^2).
	l2 := math.Log(l)
	w := l - l2 + l2/l + l2*(l2-2)/(2*l*l)
	if w < 0.5 {
		w = 0.5
	}
	for range maxHalley {
		// f(w) = w + ln w - l, f' = 1 + 1/w = (w+1)/w, f'' = -1/w^2.
		f := w + math.Log(w) - l
		fp := (w + 1) / w
		fpp := -1 / (w * w)
		dw := f / (fp - f*fpp/(2*fp))
		w -= dw
		if math.Abs(dw) <= halleyDone*math.Abs(w) {
			break
		}
	}
	return w
}

// branchOffset returns x + 1/e using the two-part constant.
func branchOffset(x float64) float64 {
	return (x + invEHi) + invELo
}

// branchSeries evaluates the series of W about the branch point in p = ±sqrt(2(e x + 1))
// (p > 0 for W0, p < 0 for W-1), as given by Corless et al. (1996), eq. 4.22.
func branchSeries(p float64) float64 {
	return -1 + p*(1+p*(-1.0/3+p*(11.0/72+p*(-43.0/540+p*(769.0/17280+p*(-221.0/8505))))))
}

// halley refines w for w*exp(w) = x, stopping if it lands on the branch point where the
// derivative vanishes.
func halley(x, w float64) float64 {
	for range maxHalley {
		ew := math.Exp(w)
		f := w*ew - x
		wp1 := w + 1
		if wp1 == 0 {
			return w
		}
		// Halley: w -= f / (e^w (w+1) - (w+2) f / (2(w+1))).
		den := ew*wp1 - (w+2)*f/(2*wp1)
		if den == 0 {
			return w
		}
		dw := f / den
		w -= dw
		if math.Abs(dw) <= halleyDone*(1+math.Abs(w)) {
			break
		}
	}
	return w
}
