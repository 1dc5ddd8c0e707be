package capture

import (
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// FuzzReader reads whole files, seeded with the captures in testdata (their first 8 KiB)
// and the bad and warned-about inputs of the tests. Whatever the bytes, the reader must
// not panic; every error and every warning is a *ParseError naming the file and a line
// inside it; every row it returns has finite volts and a finite time after the row before;
// and reading in batches of one row gives what reading in large batches gives.
func FuzzReader(f *testing.F) {
	paths, _ := filepath.Glob("../../testdata/captures/*.csv")
	for _, p := range paths {
		b, err := os.ReadFile(p)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b[:min(len(b), 8<<10)])
	}
	for _, tc := range badFiles {
		f.Add([]byte(tc.in))
	}
	f.Add([]byte("# start: yesterday\ntime_s,vcap_v\n0,1\n# gap: start_s=0 end_s=x\n# reset: at_s=1 segment=0\n1,1\n2,1."))
	f.Add([]byte("time_ms;vcap_mv;iload_ma\n1796117400000,5;2415,1;3\n1796117400010;2416;\n"))
	f.Add([]byte("time,v\n2026-12-01T09:30:00Z,1\n2026-12-01 09:30:00.5Z,2\n"))
	f.Fuzz(func(t *testing.T, in []byte) {
		lines := strings.Count(string(in), "\n") + 1
		read := func(batch int) (ts, vs []float64, err error, r *Reader) {
			r = NewReader(strings.NewReader(string(in)), "fuzz.csv")
			bt, bv, bi := make([]float64, batch), make([]float64, batch), make([]float64, batch)
			for k := 0; ; k++ {
				n, err := r.ReadCurrent(bt, bv, bi)
				ts, vs = append(ts, bt[:n]...), append(vs, bv[:n]...)
				if err != nil {
					if errors.Is(err, io.EOF) {
						err = nil
					}
					return ts, vs, err, r
				}
				if k > len(in)+2 {
					t.Fatalf("no end after %d reads", k)
				}
			}
		}
		ts, vs, err, r := read(1)
		check := func(what string, e error) {
			var pe *ParseError
			if !errors.As(e, &pe) {
				t.Fatalf("%s %v is not a *ParseError", what, e)
			}
			if pe.File != "fuzz.csv" || pe.Line < 1 || pe.Line > lines+1 {
				t.Fatalf("%s %v: at %s:%d, outside the %d lines", what, e, pe.File, pe.Line, lines)
			}
		}
		if err != nil {
			check("error", err)
		}
		for _, w := range r.Warnings() {
			check("warning", w)
		}
		if r.WarningCount() < len(r.Warnings()) {
			t.Fatalf("%d warnings kept, %d counted", len(r.Warnings()), r.WarningCount())
		}
		if r.Rows() != len(ts) {
			t.Fatalf("Rows %d, returned %d", r.Rows(), len(ts))
		}
		for i := range ts {
			if math.IsNaN(ts[i]) || math.IsInf(ts[i], 0) || math.IsNaN(vs[i]) || math.IsInf(vs[i], 0) {
				t.Fatalf("row %d: %v s %v V", i, ts[i], vs[i])
			}
			if i > 0 && !(ts[i] > ts[i-1]) {
				t.Fatalf("row %d: %v s after %v s", i, ts[i], ts[i-1])
			}
		}
		for _, g := range r.Gaps() {
			if !(g.EndS >= g.StartS) || g.Lost < 0 {
				t.Fatalf("gap %+v", g)
			}
		}
		ts2, vs2, err2, r2 := read(4096)
		if (err == nil) != (err2 == nil) || (err != nil && err.Error() != err2.Error()) || len(ts2) != len(ts) ||
			r2.WarningCount() != r.WarningCount() {
			t.Fatalf("batches of 1: %d rows, %v, %d warnings; of 4096: %d rows, %v, %d warnings",
				len(ts), err, r.WarningCount(), len(ts2), err2, r2.WarningCount())
		}
		for i := range ts {
			if ts[i] != ts2[i] || vs[i] != vs2[i] {
				t.Fatalf("row %d differs between batch sizes", i)
			}
		}
	})
}
