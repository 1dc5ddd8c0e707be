// Package screen looks at the samples of a capture before event detection and takes
// out what no circuit makes, so that detection and the fits see only real samples.
//
// # Wild values
//
// A cheap board or a damaged file sometimes writes one absurd value (1e300 V, an
// overflowed count, a NaN) among sane ones. One such cell used to set the detector's
// voltage scale, and with it the smallest swing it follows, so that hours of fires read
// as "no fires". A sample is wild when it is not a finite number, or when it jumps from
// the last kept value by more than WildJumpV + WildJumpFactor·|last| and the voltage comes
// back within that distance no more than MaxWildRun samples later. Wild samples are
// dropped and counted (Summary.Wild); a longer excursion is a real change of level and is
// kept. A motor's commutation spike (tens of millivolts to a volt) is far below the limit
// and stays: the detector's median of 3 deals with it.
//
// # Held values
//
// A board that repeats its last conversion when the host asks faster than it converts,
// or a link too slow for the rate it was set to, writes a staircase: every value k
// times. Read as real samples, a staircase makes 10 ms pulses and 35 ms leaks out of a
// circuit sampled every 100 ms. Honest samples of a voltage that moves by two ADC steps
// or more between samples cannot repeat a value; held ones do. So the screen looks at the
// runs of one value that sit in the middle of a fast move (entered and left by jumps of
// at least three steps, the same way; with no step in the data, any jump): when at least
// MinFastRuns of them are seen and their median length k is 2 or more, the capture is
// held, and only the first sample of each run, and then every k-th of a long run, is
// passed on. The effective spacing (the median time between new values in a fast move)
// is reported beside the logged spacing (Summary.Held). The decision is made on the
// first samples (up to DecideN, or sooner once DecideRuns fast runs are seen), which are
// held back until then; memory stays bounded.
//
// The times kept are those at which a new value first appeared: the conversion itself
// was made up to one effective spacing earlier.
package screen
