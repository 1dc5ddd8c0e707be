// Package lambertw evaluates the real branches of the Lambert W function, the inverse of
// w -> w*exp(w).
//
// W0 is the principal branch (W >= -1, defined for x >= -1/e) and Wm1 the lower branch
// (W <= -1, defined for -1/e <= x < 0). Both start from a closed-form initial guess and
// refine it by Halley's iteration (cubic convergence), so two or three steps reach full
// double precision.
//
// # Large arguments
//
// The explicit solar-cell current of Jain and Kapoor (2004) needs W(θ) where θ itself is
// exp of a large number (exp(800) overflows a float64). W0Exp takes the logarithm of the
// argument instead: W0Exp(l) = W0(exp(l)), solved as w + ln(w) = l, so it is finite for any
// finite l.
//
// # Accuracy
//
// Away from the branch point the result is within a few ulps. Near x = -1/e the function
// has infinite slope, so the answer can be no better than the argument: an argument error
// of one ulp moves W by about sqrt(ulp). The branch point offset x + 1/e is formed with a
// two-part 1/e so that no further precision is lost there.
package lambertw
