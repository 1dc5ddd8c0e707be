package report

import (
	"capcycle/analyze/analysis"
	"encoding/csv"
	"math"
	"os"
	"strconv"
	"testing"
)

func TestEstimateFormat(t *testing.T) {
	tests := []struct {
		v, sd float64
		unit  string
		want  string
	}{
		{0.0298, 0.0006, "F", "29.80 ± 0.60 mF"},
		{2.7132, 0.0041, "V", "2.7132 ± 0.0041 V"},
		{0.541, 0.012, "s", "541 ± 12 ms"},
		{3580, 95, "s", "59.7 ± 1.6 min"},
		{121e3, 4e3, "Ω", "121.0 ± 4.0 kΩ"},
		{1.07e-6, 0.08e-6, "A", "1.070 ± 0.080 µA"},
		{12.8, 0.4, "", "12.80 ± 0.40"},
		{2.3, 0, "V", "2.30 V"}, // no error: three digits
	}
	for _, tt := range tests {
		e := &analysis.Estimate{Value: tt.v}
		if tt.sd > 0 {
			e.SD = &tt.sd
		}
		if got := estimate(e, tt.unit); got != tt.want {
			t.Errorf("estimate(%g ± %g %s) = %q, want %q", tt.v, tt.sd, tt.unit, got, tt.want)
		}
	}
	if got := estimate(nil, "V"); got != "not determined" {
		t.Errorf("estimate(nil) = %q", got)
	}
}

func TestDurAndClock(t *testing.T) {
	tests := []struct {
		s    float64
		dur  string
		clck string
	}{
		{0.0231, "23.1 ms", "0:00.0"},
		{41.27, "41.3 s", "0:41.3"},
		{850, "14.2 min", "14:10.0"},
		{86000, "23.9 h", "23:53:20"},
	}
	for _, tt := range tests {
		if got := dur(tt.s); got != tt.dur {
			t.Errorf("dur(%g) = %q, want %q", tt.s, got, tt.dur)
		}
		if got := clock(tt.s); got != tt.clck {
			t.Errorf("clock(%g) = %q, want %q", tt.s, got, tt.clck)
		}
	}
}

func TestMinMaxKeepsSpikes(t *testing.T) {
	n := 100000
	x, y := make([]float64, n), make([]float64, n)
	for i := range x {
		x[i] = float64(i)
		y[i] = math.Sin(float64(i) / 5000)
	}
	y[31337] = 9  // a one-sample spike up
	y[77777] = -9 // and down
	y[5] = math.NaN()
	dx, dy := MinMax(x, y, 400)
	if len(dx) > 400 {
		t.Errorf("MinMax gave %d points, want at most 400", len(dx))
	}
	var up, down bool
	for i := range dx {
		if dy[i] == 9 && dx[i] == 31337 {
			up = true
		}
		if dy[i] == -9 && dx[i] == 77777 {
			down = true
		}
		if math.IsNaN(dy[i]) {
			t.Error("a NaN survived")
		}
		if i > 0 && dx[i] <= dx[i-1] {
			t.Fatalf("x not increasing at %d", i)
		}
	}
	if !up || !down {
		t.Errorf("spikes lost: up %v, down %v", up, down)
	}
}

func TestMergeEnvelopeKeepsExtremesAndGaps(t *testing.T) {
	var env []analysis.EnvelopePt
	for i := range 3000 {
		ts := float64(i) * 30
		if i >= 1500 {
			ts += 1800 // a half-hour gap
		}
		env = append(env, analysis.EnvelopePt{TS: ts, MinV: 1.5 + float64(i%7)/100, MaxV: 2.7 - float64(i%5)/100})
	}
	env[1234].MinV, env[2345].MaxV = 0.2, 3.9
	out := MergeEnvelope(env, 500)
	if len(out) > 502 {
		t.Errorf("%d bins, want about 500", len(out))
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	var sawGap bool
	for i, e := range out {
		lo, hi = math.Min(lo, e.MinV), math.Max(hi, e.MaxV)
		if i > 0 && out[i].TS-out[i-1].TS > 1800 {
			sawGap = true
		}
		if e.TS > 1499*30 && e.TS < 1500*30+1800 {
			t.Errorf("a merged bin at %g s sits inside the gap", e.TS)
		}
	}
	if lo != 0.2 || hi != 3.9 {
		t.Errorf("extremes %g..%g, want 0.2..3.9", lo, hi)
	}
	if !sawGap {
		t.Error("the gap was merged over")
	}
}

// TestToleranceCodesMatchReference checks the tolerance letters against
// testdata/capacitance_tolerance_codes.csv (copied from the shared reference data; its
// header names the secondary sources for IEC 60062 that agree on each letter).
func TestToleranceCodesMatchReference(t *testing.T) {
	f, err := os.Open("testdata/capacitance_tolerance_codes.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	cr := csv.NewReader(f)
	cr.Comment = '#'
	rows, err := cr.ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	seen := 0
	for _, row := range rows[1:] {
		code, minus, plus := row[0], row[1], row[2]
		tol, ok := toleranceCodes[code]
		if minus == "" || code == "D" {
			// absolute pF bands (and D, ±0.5 % only on a resistor chart): not a capacitor percentage here
			if ok {
				t.Errorf("code %s has a percent band in the report, but the reference gives it in pF", code)
			}
			continue
		}
		m, _ := strconv.ParseFloat(minus, 64)
		p, _ := strconv.ParseFloat(plus, 64)
		if !ok || tol.minus != m || tol.plus != p {
			t.Errorf("code %s: report has -%g/+%g %%, reference -%g/+%g %%", code, tol.minus, tol.plus, m, p)
		}
		seen++
	}
	if seen != len(toleranceCodes) {
		t.Errorf("reference covers %d of the report's %d codes", seen, len(toleranceCodes))
	}
}

func TestAgreement(t *testing.T) {
	sd := 0.004
	tests := []struct {
		name     string
		tol      string
		declared float64
		found    float64
		sd       *float64
		want     string
	}{
		{"1.75 s.e. agrees", "", 2.70, 2.707, &sd, "ok"},
		{"3.2 s.e. differs", "", 2.70, 2.713, &sd, "diff"},
		{"no s.e.", "", 2.70, 2.713, nil, "muted"},
		{"M, -9.7 %", "M", 0.033, 0.0298, nil, "ok"},
		{"M, -24 %", "M", 0.033, 0.025, nil, "bad"},
		{"Z, +70 %", "Z", 0.1, 0.17, nil, "ok"},
		{"Z, -21 %", "Z", 0.1, 0.079, nil, "bad"},
		{"tolerance beats s.e.", "K", 1.0, 1.05, &sd, "ok"},
	}
	for _, tt := range tests {
		p := paramRow{unit: "F", tolCode: tt.tol, fitted: &analysis.Estimate{Value: tt.found, SD: tt.sd}}
		if c := agreement(p, tt.declared, tt.found); c.Class != tt.want {
			t.Errorf("%s: %+v, want class %s", tt.name, c, tt.want)
		}
	}
}
