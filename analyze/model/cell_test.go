package model

import (
	"bufio"
	"fmt"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"
)

// readCSV returns the data rows (after the header) of a testdata CSV with '#' comments,
// and for each row its line number.
func readCSV(t *testing.T, path string) (header []string, rows [][]string, lines []int) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	n := 0
	for sc.Scan() {
		n++
		line := sc.Text()
		if strings.HasPrefix(line, "#") || strings.TrimSpace(line) == "" {
			continue
		}
		fs := strings.Split(line, ",")
		if header == nil {
			header = fs
			continue
		}
		rows = append(rows, fs)
		lines = append(lines, n)
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return header, rows, lines
}

func atof(t *testing.T, s string, line int) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
	if err != nil {
		t.Fatalf("line %d: %v", line, err)
	}
	return v
}

// TestThermalVoltage checks kT/q against the CODATA 2018 file (constants from the NIST
// listing via scipy's codata_constants_2018.txt; thermal voltages computed there with
// 50-digit arithmetic).
func TestThermalVoltage(t *testing.T) {
	_, rows, lines := readCSV(t, "../../testdata/physical_constants_codata2018.csv")
	checked := 0
	for i, r := range rows {
		name, val := r[0], atof(t, r[1], lines[i])
		switch {
		case name == "boltzmann_constant_k":
			if Boltzmann != val {
				t.Errorf("Boltzmann = %g, CODATA %g", Boltzmann, val)
			}
			checked++
		case name == "elementary_charge_q":
			if ElementaryCharge != val {
				t.Errorf("ElementaryCharge = %g, CODATA %g", ElementaryCharge, val)
			}
			checked++
		case strings.HasPrefix(name, "thermal_voltage_kT_over_q_at_"):
			tk := atof(t, strings.TrimSuffix(strings.TrimPrefix(name, "thermal_voltage_kT_over_q_at_"), "K"), lines[i])
			if got := ThermalVoltage(tk); math.Abs(got-val) > 2e-16*val {
				t.Errorf("ThermalVoltage(%g) = %.17g, want %.17g", tk, got, val)
			}
			checked++
		}
	}
	if checked != 6 {
		t.Fatalf("checked %d constants, want 6", checked)
	}
}

// legacyVt is kT/q at 306.15 K with the older constants the RTC France literature used
// (k = 1.3806503e-23 J/K, q = 1.60217646e-19 C; see rtc_france_sdm_published_params.csv).
const legacyVt = 1.3806503e-23 * 306.15 / 1.60217646e-19

// TestRTCFrance reproduces the published RMSE of single-diode parameter sets for the RTC
// France cell (data: Easwarakhanthan et al. 1986 via the DEPV repository copy; parameter
// sets and the RMSE definition: rtc_france_sdm_published_params.csv, rows C1 and P1
// Table 3). The literature RMSE is that of the implicit residual with the legacy constants;
// the file also gives the RMSE of the explicitly solved current, which checks the Lambert W
// solution itself. Each must round to the quoted figure.
func TestRTCFrance(t *testing.T) {
	_, iv, ivLines := readCSV(t, "../../testdata/rtc_france/rtc_france_iv.csv")
	if len(iv) != 26 {
		t.Fatalf("RTC France: %d points, want 26", len(iv))
	}
	vs := make([]float64, len(iv))
	is := make([]float64, len(iv))
	for k, r := range iv {
		vs[k], is[k] = atof(t, r[0], ivLines[k]), atof(t, r[1], ivLines[k])
	}
	_, ps, pLines := readCSV(t, "../../testdata/rtc_france/rtc_france_sdm_published_params.csv")
	want := map[string]struct {
		implicit  float64 // quoted RMSE, rounded as quoted
		digits    float64 // half a unit in its last quoted digit
		explicit  float64 // explicit-current RMSE recomputed in the file's notes (0: none given)
		explicitH float64
	}{
		"best_known": {9.8602e-04, 0.5e-8, 7.753913e-04, 0.5e-10},
		// Printed to 4-5 digits only; see the rounding check below.
		"Newton_Easwarakhanthan_1986": {0.00970, -1, 0, 0},
	}
	seen := 0
	for k, r := range ps {
		w, ok := want[r[0]]
		if !ok {
			continue
		}
		seen++
		line := pLines[k]
		tk := atof(t, r[6], line)
		if tk != 306.15 {
			t.Fatalf("line %d: T = %g K", line, tk)
		}
		c := Cell{
			IphA: atof(t, r[1], line), I0A: atof(t, r[2], line), RsOhm: atof(t, r[3], line),
			RshOhm: atof(t, r[4], line), N: atof(t, r[5], line),
			// The temperature at which the CODATA 2018 kT/q equals the legacy one.
			TempK: legacyVt / ThermalVoltage(1),
		}
		if math.Abs(ThermalVoltage(c.TempK)-legacyVt) > 1e-15*legacyVt {
			t.Fatal("legacy thermal voltage not reproduced")
		}
		var si, se float64
		for j := range vs {
			ri := c.ImplicitResidual(vs[j], is[j], RefIrradianceWm2)
			re := c.Current(vs[j], RefIrradianceWm2) - is[j]
			si += ri * ri
			se += re * re
			// The explicit current must satisfy the implicit equation.
			if ic := c.Current(vs[j], RefIrradianceWm2); math.Abs(c.ImplicitResidual(vs[j], ic, RefIrradianceWm2)) > 1e-14 {
				t.Errorf("%s: I(%g) = %g leaves residual %g", r[0], vs[j], ic, c.ImplicitResidual(vs[j], ic, RefIrradianceWm2))
			}
		}
		rmseI := math.Sqrt(si / float64(len(vs)))
		rmseE := math.Sqrt(se / float64(len(vs)))
		if w.digits < 0 {
			// The printed parameters are rounded so coarsely that they give 1.002e-2 A, not
			// the quoted 9.70e-3 A (the file's note of 9.6964e-3 could not be reproduced).
			// What can be checked: the quoted figure lies within the RMSE range spanned by the
			// printed parameters moved by half a unit of their last printed digit.
			lo, hi := rmseRange(r[1:6], vs, is)
			if w.implicit < lo || w.implicit > hi {
				t.Errorf("%s: quoted RMSE %.4e outside [%.4e, %.4e] from the rounding", r[0], w.implicit, lo, hi)
			}
			t.Logf("%s: RMSE over the rounding box [%.4e, %.4e], quoted %.4e", r[0], lo, hi, w.implicit)
		} else if math.Abs(rmseI-w.implicit) > w.digits {
			t.Errorf("%s: implicit RMSE %.6e, published %.4e", r[0], rmseI, w.implicit)
		}
		if w.explicit != 0 && math.Abs(rmseE-w.explicit) > w.explicitH {
			t.Errorf("%s: explicit RMSE %.7e, file notes %.7e", r[0], rmseE, w.explicit)
		}
		t.Logf("%s: implicit RMSE %.6e A, explicit %.6e A", r[0], rmseI, rmseE)
	}
	if seen != 2 {
		t.Fatalf("found %d of 2 parameter sets", seen)
	}
}

// halfUnit returns half a unit in the last printed digit of a decimal number.
func halfUnit(s string) float64 {
	s = strings.ToLower(strings.TrimSpace(s))
	exp := 0
	if i := strings.IndexByte(s, 'e'); i >= 0 {
		exp, _ = strconv.Atoi(s[i+1:])
		s = s[:i]
	}
	dec := 0
	if i := strings.IndexByte(s, '.'); i >= 0 {
		dec = len(s) - i - 1
	}
	return 0.5 * math.Pow(10, float64(exp-dec))
}

// rmseRange returns the smallest and largest implicit RMSE over the corners of the box of
// parameters (Iph, I0, Rs, Rsh, n as printed) ± half a unit of their last digit.
func rmseRange(p []string, vs, is []float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for mask := range 32 {
		var x [5]float64
		for k := range 5 {
			v, _ := strconv.ParseFloat(p[k], 64)
			d := halfUnit(p[k])
			if mask&(1<<k) != 0 {
				d = -d
			}
			x[k] = v + d
		}
		c := Cell{IphA: x[0], I0A: x[1], RsOhm: x[2], RshOhm: x[3], N: x[4], TempK: legacyVt / ThermalVoltage(1)}
		var s float64
		for j := range vs {
			r := c.ImplicitResidual(vs[j], is[j], RefIrradianceWm2)
			s += r * r
		}
		rm := math.Sqrt(s / float64(len(vs)))
		lo, hi = math.Min(lo, rm), math.Max(hi, rm)
	}
	return lo, hi
}

// TestCellLimits checks the explicit solution's special cases against the implicit
// equation: no series resistance, no shunt, and a long string far beyond open circuit
// (where θ in W(θ) overflows a float64 and only the log form works).
func TestCellLimits(t *testing.T) {
	cells := []Cell{
		{IphA: 0.05, I0A: 1e-9, N: 1.5, RsOhm: 0, RshOhm: 500, Cells: 6},
		{IphA: 0.05, I0A: 1e-9, N: 1.5, RsOhm: 0.8, RshOhm: 0, Cells: 6},
		{IphA: 0.05, I0A: 1e-12, N: 1.2, RsOhm: 2, RshOhm: 1e4, Cells: 36},
	}
	for ci, c := range cells {
		for _, v := range []float64{-1, 0, 0.5, 1, 2, 3, 4, 5, 8, 12, 20, 40} {
			for _, g := range []float64{0, 10, 1000} {
				i := c.Current(v, g)
				if math.IsNaN(i) || math.IsInf(i, 0) {
					t.Fatalf("cell %d: I(%g V, %g W/m²) = %g", ci, v, g, i)
				}
				r := c.ImplicitResidual(v, i, g)
				if math.Abs(r) > 1e-12*(1+math.Abs(i)) {
					t.Errorf("cell %d: I(%g V, %g W/m²) = %g: residual %g", ci, v, g, i, r)
				}
			}
		}
		voc := c.OpenCircuitV(1000)
		if i := c.Current(voc, 1000); math.Abs(i) > 1e-12 {
			t.Errorf("cell %d: I(Voc = %g) = %g", ci, voc, i)
		}
	}
}

func ExampleCell_Current() {
	// A small 6-cell panel at 500 W/m², 25 °C.
	c := Cell{IphA: 0.04, I0A: 1e-9, N: 1.5, RsOhm: 1, RshOhm: 2000, Cells: 6}
	fmt.Printf("Isc %.2f mA, Voc %.3f V\n", 1e3*c.Current(0, 500), c.OpenCircuitV(500))
	// Output:
	// Isc 19.99 mA, Voc 3.864 V
}
