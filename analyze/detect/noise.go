package detect

import (
	"capcycle/analyze/stats"
	"math"
	"slices"
)

var nan = math.NaN()

// NoiseSD estimates the white-noise standard deviation of samples v at times t from the
// median absolute value of their second differences, made exact for non-uniform
// spacing: e_i = (v_i - (a v_{i-1} + b v_{i+1})) / sqrt(1 + a^2 + b^2), with a and b the
// linear-interpolation weights, has the noise's variance for white noise and ignores
// any straight-line trend. SD = 1.4826 * median|e| (the MAD's consistency factor for a
// normal distribution). scratch is reused when large enough; the result is 0 for fewer
// than 3 points.
//
// Quantised samples with noise near one ADC step make most second differences exactly
// zero, and the median then says 0; so the larger of that and the 10 %-trimmed mean of
// |e| times sqrt(pi/2) (the mean absolute deviation's factor for a normal distribution)
// is returned. Both estimate the SD of normal noise; the trimming keeps the few large
// differences of fires out.
//
// A run of identical values (a storage node at exactly 0 V all night, an input stuck at
// one code) says nothing about the noise of the stretches that move: each run counts as
// at most RunCap repeats, so hours of one value cannot drive the estimate to 0.
func NoiseSD(t, v, scratch []float64) float64 {
	sd, _ := noiseSD(t, v, scratch)
	return sd
}

// RunCap is the most repeats a run of identical values counts as in NoiseSD and ADCStep.
const RunCap = 16

// noiseSD is NoiseSD that also returns the number of second differences used.
func noiseSD(t, v, scratch []float64) (float64, int) {
	e := secondDiffs(t, v, scratch[:0])
	if len(e) == 0 {
		return 0, 0
	}
	slices.Sort(e)
	med := stats.MedianInPlace(e) // e sorted: the smallest 90 % are e[:keep]
	keep := len(e) - len(e)/10
	var sum float64
	for _, x := range e[:keep] {
		sum += x
	}
	mean := sum / float64(keep)
	return math.Max(1.4826*med, 1.2533*mean), len(e)
}

func secondDiffs(t, v, e []float64) []float64 {
	run := 0 // second differences so far inside the current run of identical values
	for i := 1; i+1 < len(v); i++ {
		if v[i-1] == v[i] && v[i] == v[i+1] {
			run++
			if run > RunCap {
				continue
			}
		} else {
			run = 0
		}
		h := t[i+1] - t[i-1]
		if !(h > 0) {
			continue
		}
		a := (t[i+1] - t[i]) / h
		b := 1 - a
		d := (v[i] - (a*v[i-1] + b*v[i+1])) / math.Sqrt(1+a*a+b*b)
		e = append(e, math.Abs(d))
	}
	return e
}

// ADCStep estimates the quantisation step of samples v: the typical size of the smallest
// non-zero differences between neighbours, accepted only when at least 90 % of the
// differences are whole multiples of it (within 15 %) and other multiples than one step
// (zero, two, three...) make up at least 5 % of them. It returns 0 when the samples show
// no step (no quantisation, or noise far above it). scratch is reused when large enough.
// A run of identical values counts as at most RunCap repeats (see NoiseSD).
func ADCStep(v, scratch []float64) float64 {
	d := scratch[:0]
	zeros, run := 0, 0
	for i := 1; i < len(v); i++ {
		x := math.Abs(v[i] - v[i-1])
		if x == 0 {
			run++
			if run <= RunCap {
				zeros++
			}
			continue
		}
		run = 0
		d = append(d, x)
	}
	if len(d) < 8 {
		return 0
	}
	slices.Sort(d)
	q := d[len(d)/100]
	var sum float64
	var n int
	for _, x := range d {
		if x > 1.3*q {
			break
		}
		sum += x
		n++
	}
	step := sum / float64(n)
	// Quantised samples move by whole steps: nearly all differences are whole multiples
	// of it, and more than one multiple shows (0 and 1, or 1, 2, 3 with noise); a smooth
	// curve sampled slowly has all its differences alike and fails the second test.
	good, other := 0, zeros
	for _, x := range d {
		r := x / step
		k := math.Round(r)
		if math.Abs(r-k) < 0.15 {
			good++
			if k >= 2 {
				other++
			}
		}
	}
	all := len(d) + zeros
	if float64(good+zeros) < 0.9*float64(all) || float64(other) < 0.05*float64(all) {
		return 0
	}
	return step
}
