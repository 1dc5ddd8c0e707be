package analyze

import (
	"bytes"
	"compress/gzip"
	"context"
	"io"
	"os"
	"path/filepath"
	"testing"

	"capcycle/analyze/analysis"
)

// TestDensityHoldsEveryCycle analyses the testdata captures (and the simulated demo days)
// and checks that the cycle density holds every cycle the analysis found, no more: the
// density decides which falls are fires while the capture streams, the cycle list when it
// ends, and the two must agree.
func TestDensityHoldsEveryCycle(t *testing.T) {
	for _, name := range []string{"captures/wren-rc-10min.csv", "captures/wren-emulated-burst.csv",
		"captures/fern-rc-stall-3h.csv", "golden/wren-sim-15min.csv.gz", "golden/fern-sim-3h.csv.gz"} {
		t.Run(filepath.Base(name), func(t *testing.T) {
			res := analyseTestdata(t, name)
			d := res.CycleDensity
			if len(res.Cycles) == 0 {
				if d != nil {
					t.Errorf("no cycles, but a density of %d", d.Cycles)
				}
				return
			}
			if d == nil {
				t.Fatalf("%d cycles and no density", len(res.Cycles))
			}
			if d.Cycles != len(res.Cycles) {
				t.Errorf("density holds %d cycles, the analysis found %d", d.Cycles, len(res.Cycles))
			}
			// Every column's counts are cycles that reached that time: never more than all.
			peak := 0
			for c, col := range d.Counts {
				sum := 0
				for _, n := range col {
					sum += n
				}
				if sum > d.Cycles {
					t.Errorf("column %d holds %d counts, more than the %d cycles", c, sum, d.Cycles)
				}
				peak = max(peak, sum)
			}
			if peak < d.Cycles*9/10 {
				t.Errorf("no column holds most cycles (best %d of %d)", peak, d.Cycles)
			}
			// The grid's top row holds the recharge's end, just below the next fire (each
			// cell holds a mean over its column, so it may sit a row or two lower).
			top, fire := float64(len(d.Counts[0]))*d.VStepV, 0.0
			for _, c := range res.Cycles {
				fire = max(fire, c.FireV)
			}
			if top < fire-2*d.VStepV || top > fire+d.VStepV {
				t.Errorf("the grid tops out at %.3g V (rows of %.3g V), the highest fire is at %.3g V", top, d.VStepV, fire)
			}
		})
	}
}

// analyseTestdata runs the analysis on a file of testdata (gunzipped when it ends in .gz).
func analyseTestdata(t *testing.T, name string) *analysis.Result {
	t.Helper()
	path := filepath.Join("..", "testdata", name)
	if filepath.Ext(name) == ".gz" {
		raw, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		z, err := gzip.NewReader(bytes.NewReader(raw))
		if err != nil {
			t.Fatal(err)
		}
		b, err := io.ReadAll(z)
		if err != nil {
			t.Fatal(err)
		}
		path = filepath.Join(t.TempDir(), filepath.Base(name[:len(name)-3]))
		if err := os.WriteFile(path, b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	res, err := File(context.Background(), path, &Options{})
	if err != nil {
		t.Fatal(err)
	}
	return res
}
