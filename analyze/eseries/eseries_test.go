package eseries

import (
	"os"
	"testing"
)

// The E6 and E12 decades as printed in the sources of ../../testdata/e_series_iec60063.csv
// ([E1] rob-smallshire/eseries, [E2] its PyPI page: "the E6 series contains six values
// (10, 15, 22, 33, 47, 68)"; [E3] a calculator's help text citing IEC 60063).
func TestSeriesMatchTable(t *testing.T) {
	want := map[string][]float64{
		"E3":  {10, 22, 47},
		"E6":  {10, 15, 22, 33, 47, 68},
		"E12": {10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82},
		"E24": {10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30, 33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91},
	}
	for name, w := range want {
		s, err := Get(name)
		if err != nil {
			t.Fatal(err)
		}
		if len(s.Base) != len(w) {
			t.Fatalf("%s: %d values, want %d", name, len(s.Base), len(w))
		}
		for i := range w {
			if s.Base[i] != w[i] {
				t.Errorf("%s[%d] = %v, want %v", name, i, s.Base[i], w[i])
			}
		}
	}
}

// The embedded table must be the shared reference file, byte for byte.
func TestEmbeddedIsReference(t *testing.T) {
	ref, err := os.ReadFile("../../testdata/e_series_iec60063.csv")
	if err != nil {
		t.Fatal(err)
	}
	if string(ref) != string(table) {
		t.Fatal("embedded e_series_iec60063.csv differs from testdata/e_series_iec60063.csv")
	}
}

func TestNearest(t *testing.T) {
	e6, _ := Get("E6")
	e12, _ := Get("E12")
	cases := []struct {
		s    *Series
		v    float64
		want float64
	}{
		{e6, 4700e-6, 4700e-6}, // exact
		{e6, 5000e-6, 4700e-6}, // log-nearest of 4.7m and 6.8m
		{e6, 6000e-6, 6800e-6}, // sqrt(4.7*6.8)=5.65m
		{e6, 9e-6, 10e-6},      // next decade up
		{e12, 2.61, 2.7},       // the geometric value that the table lists as 2.7
		{e12, 1.0e6, 1.0e6},    // exact at a decade boundary
		{e12, 0.95e6, 1.0e6},   // just below a decade
		{e12, 8.3e3, 8.2e3},    // 8.2k
		{e6, 1.5e-9, 1.5e-9},   // 1.5 nF
		{e6, 0.011, 0.010},     // between 10m and 15m, log-nearest is 10m
	}
	for _, c := range cases {
		got, _ := c.s.Nearest(c.v)
		if rel := (got - c.want) / c.want; rel > 1e-12 || rel < -1e-12 {
			t.Errorf("%s.Nearest(%g) = %g, want %g", c.s.Name, c.v, got, c.want)
		}
	}
}

func TestBracket(t *testing.T) {
	e6, _ := Get("E6")
	lo, hi := e6.Bracket(2.5e-6)
	if !close(lo, 2.2e-6) || !close(hi, 3.3e-6) {
		t.Errorf("Bracket(2.5u) = %g, %g; want 2.2u, 3.3u", lo, hi)
	}
}

func close(a, b float64) bool { d := (a - b) / b; return d < 1e-12 && d > -1e-12 }

func TestUnknownSeries(t *testing.T) {
	if _, err := Get("E7"); err == nil {
		t.Fatal("E7 accepted")
	}
}
