// Package detect finds the events of a storage capacitor's voltage: every fire (the
// onset of a fast fall, far faster than any leakage) and reset (the fall ends and
// charging resumes), and the stretches between them: charging, firing, dark decay,
// plateau, saturated, gap. It also infers what kind of trigger made the fires
// (TriggerEvidence runs each kind's test, so that a declared kind can be checked).
//
// # Streaming
//
// A Detector takes samples in time order (Push, in batches of any size) and keeps only
// what the cycles need: a compact Swing per rise or fall, a few hundred raw samples, and
// per swing at most Config.PointLimit averaged points (Point) that it hands to
// Config.OnSwing when the swing is confirmed. Memory therefore does not grow with the
// length of the capture beyond the per-cycle records. Finish closes the stream and
// returns a Summary.
//
// # How a fire is found
//
//  1. Noise and resolution: the noise SD from the median absolute second difference
//     (NoiseSD, exact for non-uniform spacing), re-estimated block by block; the ADC step
//     from the grid the samples sit on (ADCStep), unless Config.StepV gives it (a
//     capture's metadata). Both look at the stretches that move: a run of one value
//     counts as at most RunCap repeats, a block that hardly moves is skipped, and when
//     the first samples hold one value (an empty capacitor at night) the estimates wait
//     for the first samples after it changes.
//  2. A median of 3 removes single-sample spikes (a motor's commutation) from the
//     decisions; the raw samples are kept for the values.
//  3. A zigzag with hysteresis MinSwingV (8 noise SDs, 3 ADC steps) splits the trace into
//     rises and falls. A fall's end stays provisional until the rise after it proves
//     itself, so a spike inside a pulse does not cut the pulse in two.
//  4. Onset: the last sample at the level the fall starts from (within 4 noise SDs).
//     The fire voltage is a straight line through the samples at that level, at the
//     onset (their mean on a flat top, the last one's level on a steep charge). Reset:
//     the first sample (median of 3) within that band of the trough.
//     A fall with a slow tail (a motor's back-EMF, a supercapacitor's slow branch) ends
//     where robust lines through the tail's last points and the rise's first points
//     meet: the true minimum, where the switch let go.
//  5. At Finish, a fall is a fire when it is fast: its implied time constant
//     (fall time * V / dV, or V over the rate at which it leaves its onset when it leaves
//     it 4 times faster than it falls on average and is still falling at its end, so that
//     a pulse bent into a slow tail by a motor's back-EMF still counts)
//     sits in the lower of two groups a factor of 8 apart when the falls form two groups
//     (pulses through the load, slow decays through the leak), it falls at least 3 times
//     faster than the charging before it rose, and it takes less time than that charging
//     (or leaves its onset 30 times faster). Tiny fires are chatter.
//
// # Smoothing and slopes
//
// SGCoeffs gives the Savitzky-Golay convolution coefficients for any window, order and
// derivative (they match the published tables of Savitzky and Golay, 1964); LocalPoly and
// Smooth apply the same local least-squares polynomial on non-uniform time grids, which
// is what the I-V tracing uses for dV/dt.
package detect
