package report

import (
	"capcycle/analyze/analysis"
	"math"
	"sort"
)

// MinMax decimates the series (x, y) to at most n points while keeping its extremes:
// the points are cut into n/2 runs of equal count, and each run gives its lowest and its
// highest point, in time order. A series of n points or fewer comes back as it is (copied);
// n below 2 is treated as 2. Points whose x or y is NaN or infinite are dropped.
//
// This is the usual min/max envelope decimation for plotting: a spike one sample wide
// still shows, which averaging or picking every k-th point would lose.
func MinMax(x, y []float64, n int) (dx, dy []float64) {
	if len(x) != len(y) {
		panic("report: MinMax slice length mismatch")
	}
	n = max(n, 2)
	var fx, fy []float64
	for i := range x {
		if finite(x[i]) && finite(y[i]) {
			fx = append(fx, x[i])
			fy = append(fy, y[i])
		}
	}
	if len(fx) <= n {
		return fx, fy
	}
	runs := n / 2
	dx = make([]float64, 0, 2*runs)
	dy = make([]float64, 0, 2*runs)
	for r := range runs {
		lo := r * len(fx) / runs
		hi := (r + 1) * len(fx) / runs
		imin, imax := lo, lo
		for i := lo; i < hi; i++ {
			if fy[i] < fy[imin] {
				imin = i
			}
			if fy[i] > fy[imax] {
				imax = i
			}
		}
		a, b := min(imin, imax), max(imin, imax)
		dx = append(dx, fx[a])
		dy = append(dy, fy[a])
		if b != a {
			dx = append(dx, fx[b])
			dy = append(dy, fy[b])
		}
	}
	return dx, dy
}

// MergeEnvelope merges neighbouring bins of a min/max envelope until at most n remain:
// each output bin takes the lowest minimum and the highest maximum of the bins it
// covers, at the mean of their times. It never merges across a break: a step between
// bins longer than three times the median step (a gap in the capture) starts a new run.
// Bins with non-finite numbers are dropped.
func MergeEnvelope(env []analysis.EnvelopePt, n int) []analysis.EnvelopePt {
	n = max(n, 1)
	var in []analysis.EnvelopePt
	for _, e := range env {
		if finite(e.TS) && finite(e.MinV) && finite(e.MaxV) {
			in = append(in, e)
		}
	}
	if len(in) <= n {
		return in
	}
	k := (len(in) + n - 1) / n // bins per output bin
	brk := breakStep(in)
	out := make([]analysis.EnvelopePt, 0, n+len(in)/k)
	for i := 0; i < len(in); {
		j := i + 1
		acc := in[i]
		sumT := in[i].TS
		for ; j < len(in) && j-i < k && in[j].TS-in[j-1].TS <= brk; j++ {
			acc.MinV = math.Min(acc.MinV, in[j].MinV)
			acc.MaxV = math.Max(acc.MaxV, in[j].MaxV)
			sumT += in[j].TS
		}
		acc.TS = sumT / float64(j-i)
		out = append(out, acc)
		i = j
	}
	return out
}

// breakStep is the time step between envelope bins above which the bins are not
// neighbours: three times the median step (+Inf for fewer than three bins).
func breakStep(env []analysis.EnvelopePt) float64 {
	if len(env) < 3 {
		return math.Inf(1)
	}
	d := make([]float64, len(env)-1)
	for i := range d {
		d[i] = env[i+1].TS - env[i].TS
	}
	sort.Float64s(d)
	return 3 * d[len(d)/2]
}

// thin picks at most n of the indices 0..count-1, evenly spread, plus every index in
// keep; the result is sorted and has no repeats.
func thin(count, n int, keep []int) []int {
	seen := make(map[int]bool)
	var out []int
	add := func(i int) {
		if i >= 0 && i < count && !seen[i] {
			seen[i] = true
			out = append(out, i)
		}
	}
	if count <= n {
		for i := range count {
			add(i)
		}
	} else {
		for j := range n {
			add(j * count / n)
		}
	}
	for _, i := range keep {
		add(i)
	}
	sort.Ints(out)
	return out
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
