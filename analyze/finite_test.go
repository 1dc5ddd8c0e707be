package analyze

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"

	"capcycle/analyze/analysis"
	"capcycle/logger/capture"
)

// The first 148 rows of an emulated-board demo capture (testdata/captures/
// wren-emulated-burst.csv: the real firmware in the AVR emulator, Wren at 10:00, 2 Hz with
// 50 Hz bursts around each fire). The single-diode solver stops short on its traced rise
// (a near-ideal cell), and the light levels must then not come from the stopped solver's
// parameters, which gave NaN: every light level is a finite number or absent, and the
// analysis encodes as JSON.
func TestFiniteLightLevels(t *testing.T) {
	path := filepath.Join("..", "testdata", "captures", "wren-emulated-burst.csv")
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	// Wren's profile (testdata/profiles/wren.toml): 4700 uF, a 2 MOhm divider, 5 cells.
	res, err := Run(context.Background(), capture.NewReader(f, path), &Options{Declared: analysis.Declared{CapF: 4.7e-3, ProbeOhm: 2e6, CellSeries: 5}})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Cycles) == 0 {
		t.Fatal("no cycles")
	}
	n := 0
	for _, c := range res.Cycles {
		if c.LightA == nil {
			continue
		}
		n++
		if math.IsNaN(*c.LightA) || math.IsInf(*c.LightA, 0) {
			t.Errorf("cycle %d: light_a %v", c.Index, *c.LightA)
		}
	}
	if n == 0 {
		t.Errorf("no cycle has a light level")
	}
	if _, err := json.Marshal(res); err != nil {
		t.Errorf("encoding the analysis: %v", err)
	}
}
