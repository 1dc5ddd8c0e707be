// Package spicetest reads what ngspice writes, for the tests that cross-check capcycle
// against it.
package spicetest

import (
	"bufio"
	"io"
	"math"
	"strconv"
	"strings"
)

// ReadWrdata reads the output of ngspice's "wrdata FILE v(node)" with "set
// wr_singlescale": one time column, then the node's voltage. Lines that do not start with
// two numbers are skipped, and so are repeated or earlier time points (ngspice writes a
// time twice at breakpoints), so ts is strictly increasing.
func ReadWrdata(r io.Reader) (ts, vs []float64, err error) {
	sc := bufio.NewScanner(r)
	last := math.Inf(-1)
	for sc.Scan() {
		fs := strings.Fields(sc.Text())
		if len(fs) < 2 {
			continue
		}
		t, err1 := strconv.ParseFloat(fs[0], 64)
		v, err2 := strconv.ParseFloat(fs[1], 64)
		if err1 != nil || err2 != nil || t <= last {
			continue
		}
		last = t
		ts, vs = append(ts, t), append(vs, v)
	}
	return ts, vs, sc.Err()
}

// ReadColumns reads the output of "wrdata FILE a b ..." with "set wr_singlescale": a time
// column, then n vectors. It skips lines as ReadWrdata does; cols[k] is the k-th vector.
func ReadColumns(r io.Reader, n int) (ts []float64, cols [][]float64, err error) {
	sc := bufio.NewScanner(r)
	last := math.Inf(-1)
	cols = make([][]float64, n)
	row := make([]float64, n+1)
next:
	for sc.Scan() {
		fs := strings.Fields(sc.Text())
		if len(fs) < n+1 {
			continue
		}
		for k := range row {
			x, err := strconv.ParseFloat(fs[k], 64)
			if err != nil {
				continue next
			}
			row[k] = x
		}
		if row[0] <= last {
			continue
		}
		last = row[0]
		ts = append(ts, row[0])
		for k := range cols {
			cols[k] = append(cols[k], row[k+1])
		}
	}
	return ts, cols, sc.Err()
}
