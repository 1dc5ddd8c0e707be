// Package analysis is the analysis JSON: the contract between the analysis and everything
// that reads it (the report, whatif, scripts outside the project). "capcycle analyze
// --json" writes a Result; "capcycle report --from-json" and "capcycle whatif
// --analysis" read one back with ReadFile.
//
// # The rules of the contract
//
//   - Keys are added, never renamed or removed; the Schema string names the version.
//   - Every quantity carries its unit in its key (_s, _v, _a, _ohm, _f, _j, _w, _hz).
//   - A value that cannot be determined is null (a nil pointer), never a made-up number.
//   - An Estimate is a value with its standard uncertainty (SD) and 95 % interval; a
//     cycle-to-cycle spread is its own field (Spread), never called a standard error.
//   - Enumerations are typed (CycleKind, SegmentKind, TriggerKind, Origin, LeakMethod,
//     CapMethod, StepOrigin, Severity): compare with the constants, never with string
//     literals. Their JSON words are the constants' values.
//
// # What a Result holds
//
// The capture it came from (Source), every cycle (fire and reset) and segment, the
// fitted circuit (Fit: trigger, load, leak, cell), where the voltage settles
// (EquilibriumV), the capacitance used and where it came from, the light over the day,
// the prediction of every cycle from the declared and the fitted circuit, the findings,
// and the attribution of each declared part (Declared, the one description of the
// declared circuit from the profile through the flags) against what was measured.
package analysis
