package emulator

import (
	"bufio"
	"fmt"
	"math"
	"os"
	"strconv"
)

// WriteWaveform writes a waveform file (see the package doc: time, then volts per input,
// one input per name) from sample, which gives the inputs' volts at time t (seconds) and
// reports false when the signal ends. It asks for a sample every 1/rateHz seconds and
// writes only the points a piecewise-linear waveform needs to stay within tolV of every
// sample (and at least one a minute).
func WriteWaveform(path string, names []string, rateHz, tolV float64, sample func(t float64, v []float64) bool) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	w := bufio.NewWriter(f)
	fmt.Fprint(w, "time_s")
	for _, n := range names {
		fmt.Fprintf(w, " %s_v", n)
	}
	fmt.Fprintln(w)
	row := func(t float64, v []float64) {
		w.WriteString(strconv.FormatFloat(t, 'f', 4, 64))
		for _, x := range v {
			w.WriteByte(' ')
			w.WriteString(strconv.FormatFloat(x, 'f', 5, 64))
		}
		w.WriteByte('\n')
	}
	n := len(names)
	last, prev, cur := make([]float64, n), make([]float64, n), make([]float64, n)
	lastT, prevT := 0.0, 0.0
	step := 1.0 / rateHz
	first := true
	for i := 0; ; i++ {
		t := float64(i) * step
		clear(cur)
		if !sample(t, cur) {
			break
		}
		if first {
			row(t, cur)
			copy(last, cur)
			lastT, first = t, false
		} else if t-lastT > 60 || far(last, cur, tolV) {
			// The voltage moved: the previous sample ends the straight stretch.
			if prevT > lastT {
				row(prevT, prev)
				copy(last, prev)
				lastT = prevT
			}
			if far(last, cur, tolV) || t-lastT > 60 {
				row(t, cur)
				copy(last, cur)
				lastT = t
			}
		}
		copy(prev, cur)
		prevT = t
	}
	if prevT > lastT {
		row(prevT, prev)
	}
	if err := w.Flush(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

func far(a, b []float64, tol float64) bool {
	for k := range a {
		if math.Abs(a[k]-b[k]) > tol {
			return true
		}
	}
	return false
}
