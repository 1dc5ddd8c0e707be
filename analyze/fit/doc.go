// Package fit fits models to measurements and says how well the data determine them.
//
// Everything here is pure computation on slices: no I/O, no global state.
//
// # The least-squares engine
//
// Solve minimises Σ w_i r_i(x)² for residuals r written by a Problem's Func, by the
// Levenberg-Marquardt method with Moré's scaling (Moré 1978): the damping is applied in
// units set by the Jacobian's column norms, so the result does not depend on the units
// of the parameters. Each iteration factorises the Jacobian once by Householder QR and
// then tries damped steps on the small triangular factor, as MINPACK does; a geodesic
// acceleration term (Transtrum and Sethna 2012) lets it follow curved valleys and keeps
// it from running off along flat directions. Without an analytic Jacobian it uses
// central differences.
//
//	res, err := fit.Solve(fit.Problem{M: len(t), Func: residuals}, []float64{3, 0.1}, nil)
//
// The Result carries the parameters, the residual sum of squares, the degrees of
// freedom, the residual standard deviation, the covariance s²·(JᵀWJ)⁻¹ computed through a
// singular value decomposition of the column-scaled Jacobian, standard errors, Student-t
// confidence intervals, the numerical rank and, per parameter, whether the data
// identify it at all. A parameter that is not identifiable gets NaN errors rather than a
// made-up number. Settings has a documented default for every field; nil means all
// defaults.
//
// The engine is checked against the NIST Statistical Reference Datasets (Misra1a,
// Chwirut2, BoxBOD, Lanczos3 from both certified starting points, and Norris for lines);
// see nist_test.go.
//
// # Models for the capacitor circuit
//
//   - ExpApproach fits v∞ + (v0 − v∞)·exp(−(t − t0)/τ): a discharge through a load while
//     the cell keeps charging, a dark decay towards an offset, or the approach to an
//     equilibrium. It finds its own starting point.
//   - ResidualPattern says whether residuals look like noise (runs test, lag-1
//     correlation, RMS against the noise level); LocalTaus gives the effective time
//     constant at the start and end of a discharge; LoadShape combines them into a
//     resistive / not resistive (motor) verdict.
//   - SingleDiode fits the five single-diode parameters of a solar cell to I-V points,
//     using the explicit Lambert W current of Jain and Kapoor (2004), and reports Voc,
//     Isc and the maximum power point. It is checked against the RTC France cell data.
//   - Line fits a straight line with standard errors; RobustLine does the same with
//     Huber's M-estimator, for slow drifts that a few wild points should not tilt.
//
// # Identifiability
//
// From a voltage trace alone only time constants (R·C) and currents over C are
// identifiable; absolute resistances and currents need the capacitance. The fits here
// return what the data determine (τ, not R) and leave the conversion to the caller.
package fit
