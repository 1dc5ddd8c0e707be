// Package diagnose turns an analysis into findings: what is wrong with the circuit (or the
// capture), in numbers, and what to change, with the model's prediction of that change.
//
// # What a finding is
//
// Every finding (analysis.Finding) has a short kebab-case code of our own (the Code
// constants; Codes maps each to its meaning, and DEVELOPERS.md's table copies it), a
// severity (analysis.Info, Warn or Fault), a one-sentence message with the numbers in
// it, a suggestion of what to try, and the numbers themselves in a map whose keys carry
// their units ("light_wm2", "period_s"). A healthy capture produces no warn or fault
// finding.
//
// # How Diagnose works
//
// Diagnose looks at an Input: the analysis, and with a profile the nominal circuit and
// the fitted one (the nominal circuit with every part the capture measured put in its
// place, predict.Fitted). The best circuit it has (fitted, else nominal) at the light the
// capture measured (predict.MeasuredLight) answers every "what if" a finding proposes.
// The rules run in this order, each in its own method of rules.go:
//
//  1. the capture itself: clipping at the ADC's full scale, lost samples, gaps, noise
//     too large for the steps the analysis needs;
//  2. the circuit's state: no fires at all (it settles below the trigger, or passes it
//     and never discharges, or was still charging when the capture ended), chatter
//     (fires that let go at once), or cycling (the headline figures) and the pulse (too
//     little energy for the load to start, an early release);
//  3. the drains: leakage against the capacitor's datasheet limit, the probe's share;
//  4. the parts against their nominal values: capacitance and trigger voltage outside
//     their tolerance.
//
// Findings are sorted by severity, faults first, keeping this order within one.
//
// # Attribution
//
// Attribute compares each declared part that the capture measured with its declared
// value against the part's tolerance, one analysis.Attribution row per part, the largest
// contradiction first: the report's agreement column is drawn from it.
package diagnose
