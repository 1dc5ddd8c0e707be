// Package analyze turns a capture of a storage capacitor's voltage into what the circuit
// really is: every fire and reset, the trigger's on and off voltages, the load, the
// leakage, the cell's I-V curve, and where the voltage settles when it never fires.
//
// The sub-packages each hold one concept and do pure computation on slices and structs:
// units (engineering notation), profile (the bench profile), fit (least squares), model
// (the circuit and its simulator), report (the HTML report). This package holds the
// Result type, the analysis JSON that every later stage reads.
package analyze
