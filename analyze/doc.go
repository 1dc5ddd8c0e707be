// Package analyze turns a capture of a storage capacitor's voltage into what the circuit
// really is: every fire and reset, the trigger's on and off voltages, the load, the
// leakage, the capacitance, the cell's I-V curve and the light it saw, and where the
// voltage settles when it never fires; then, with a bench profile, what the circuit
// should have done and what is wrong with it.
//
// # One pipeline
//
// File opens a capture and runs the whole analysis; every command that analyses a file
// calls it (Run does the same on a reader, RunSamples on samples in memory):
//
//  1. read: the capture package parses rows on one goroutine and hands batches to the
//     analysis on another (Run); the metadata give the ADC step at the storage node.
//  2. screen: package screen drops wild samples (not a number, or an absurd jump that
//     comes straight back) and, for a held-value staircase (a board that repeats its last
//     value), passes on only the first of each value, so that detection works at the
//     effective sample rate; both are counted in Result.Screen and raise a warning.
//  3. detect: package detect follows the voltage sample by sample and confirms each
//     rise and fall (a swing); the collector (collect.go) keeps what the later fits need
//     from each swing (an exponential fit of every fall, the traced I-V points of every
//     rise, a few points for the plots), never the samples themselves.
//  4. measure (measure.go): first every fire and reset is placed between samples, where
//     the curves on its two sides meet (events.go); then one function per quantity, each
//     taking what it rests on and returning its estimate, in the order of the data:
//     measureTrigger (fires and resets; checkTriggerKind against the declared kind) →
//     measureDecay (the slow falls: every drain together, no capacitance needed) →
//     measureCapacitance (declared, or measured through a calibration resistor or a
//     load-current channel) → classifyPulses (a motor that turned or stalled in each
//     pulse) → measureLoad (the pulses; with a motor that stalled at times, the stalled
//     ones: its armature) and measureLeak (the decay in ohms and amperes) →
//     measureEquilibrium (a rise that levels off) → measureCell (I = C dV/dt + drains on
//     each rise; the single-diode fit; the light level of every cycle). For a plateau
//     trigger, plateauThreshold gives the current over C at which it fires.
//  5. predict and diagnose (stages.go): with a profile, package predict predicts every
//     measured cycle from the declared and from the fitted circuit at the light that
//     cycle saw, and File adds the held-out check (fit on the first half, predict the
//     second); package diagnose then turns the numbers into findings with what to try,
//     and compares each declared part with its measurement (Result.Attribution).
//
// The result is an analysis.Result: the analysis JSON, whose keys are a contract (see
// package analysis).
//
// # What voltage alone can tell
//
// From the voltage of one node only time constants (R·C) and currents over C (V/s) are
// identifiable. Ohms, amperes and joules need the capacitance: declared in the profile
// (Options.Declared), or measured. Every Result says which in its notes, and a value
// that cannot be determined is null, never a made-up number.
//
// # Uncertainties
//
// Every Estimate's SD is a standard uncertainty (JCGM 100:2008): for a mean over cycles
// the standard error of the mean, the cycle-to-cycle scatter being Spread (estimate.go);
// for a value that rests on the capacitance, the fit's part and the capacitance's
// (declared: its tolerance band) combined, listed in Budget (capbudget.go); for the
// equilibrium, a model-discrepancy part where the approach is not a clean exponential
// (equilibrium.go). calibration_test.go checks on synthetic captures with exact truth
// that the 95 % intervals cover the truth in about 95 % of noise realisations.
//
// # Sub-packages
//
// Each holds one concept: analysis (the JSON contract), units (engineering notation),
// profile (the bench profile), detect (events and segments), fit (least squares and
// their standard errors), stats (means, SDs, medians, combination of estimates),
// lambertw, eseries (preferred values), model (the circuit and its simulator), predict,
// diagnose, whatif (changed parts) and report (the HTML report, fed only the Result).
package analyze
