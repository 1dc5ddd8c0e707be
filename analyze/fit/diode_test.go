package fit

import (
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"capcycle/analyze/lambertw"
)

// The RTC France silicon cell I-V curve (26 points, 33 °C, one cell) and its published
// single-diode parameters, as copied in ../../testdata/rtc_france with their source notes.

// Legacy constants used by the RTC France literature code, as stated in
// testdata/rtc_france/rtc_france_sdm_published_params.csv ("k = 1.3806503e-23 J/K,
// q = 1.60217646e-19 C").
const (
	legacyK = 1.3806503e-23
	legacyQ = 1.60217646e-19
	rtcTK   = 306.15 // "#@ temperature_K = 306.15" in rtc_france_iv.csv
)

func readCommentedCSV(t *testing.T, name string) [][]string {
	t.Helper()
	path := filepath.Join("..", "..", "testdata", "rtc_france", name)
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	r := csv.NewReader(strings.NewReader(string(b)))
	r.Comment = '#'
	recs, err := r.ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return recs
}

func rtcData(t *testing.T) (v, i []float64) {
	recs := readCommentedCSV(t, "rtc_france_iv.csv")
	if recs[0][0] != "V(V)" || recs[0][1] != "I(A)" {
		t.Fatalf("unexpected header %v", recs[0])
	}
	for _, r := range recs[1:] {
		vv, err1 := strconv.ParseFloat(r[0], 64)
		ii, err2 := strconv.ParseFloat(r[1], 64)
		if err1 != nil || err2 != nil {
			t.Fatalf("bad row %v", r)
		}
		v, i = append(v, vv), append(i, ii)
	}
	if len(v) != 26 {
		t.Fatalf("%d points, the file says 26", len(v))
	}
	return v, i
}

type published struct {
	p    DiodeParams
	rmse float64
	raw  string // the RMSE as printed, for its digits
}

func rtcPublished(t *testing.T) map[string]published {
	recs := readCommentedCSV(t, "rtc_france_sdm_published_params.csv")
	col := map[string]int{}
	for k, h := range recs[0] {
		col[h] = k
	}
	out := map[string]published{}
	for _, r := range recs[1:] {
		f := func(name string) float64 {
			x, err := strconv.ParseFloat(r[col[name]], 64)
			if err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			return x
		}
		out[r[col["label"]]] = published{
			p:    DiodeParams{Iph: f("Iph_A"), I0: f("I0_A"), N: f("n"), Rs: f("Rs_ohm"), Rsh: f("Rsh_ohm")},
			rmse: f("quoted_RMSE_A"),
			raw:  r[col["quoted_RMSE_A"]],
		}
	}
	return out
}

// halfUnit returns half a unit in the last printed digit of a number like "9.8602e-04".
func halfUnit(s string) float64 {
	mant, exp, _ := strings.Cut(strings.ToLower(s), "e")
	e := 0
	if exp != "" {
		e, _ = strconv.Atoi(exp)
	}
	digits := 0
	if _, frac, ok := strings.Cut(mant, "."); ok {
		digits = len(frac)
	}
	return 0.5 * math.Pow(10, float64(e-digits))
}

func rmse(p DiodeParams, v, i []float64, vt float64, implicit bool) float64 {
	s := 0.0
	for k := range v {
		var r float64
		if implicit {
			r = p.Implicit(v[k], i[k], vt)
		} else {
			r = p.Current(v[k], vt) - i[k]
		}
		s += r * r
	}
	return math.Sqrt(s / float64(len(v)))
}

// TestRTCFranceRecomputed checks our model equations against the values recomputed in
// the notes of rtc_france_sdm_published_params.csv for the "best_known" set: implicit
// RMSE 9.860218781e-04 (legacy constants) and 9.860373323e-04 (CODATA 2018), and the
// current-error RMSE with I solved exactly (Newton) 7.753913e-04 (legacy constants),
// which checks the Lambert W current against an independent solver.
func TestRTCFranceRecomputed(t *testing.T) {
	v, i := rtcData(t)
	best := rtcPublished(t)["best_known"].p
	vtOld := legacyK * rtcTK / legacyQ
	for _, c := range []struct {
		what string
		got  float64
		want float64
		tol  float64
	}{
		{"implicit RMSE, legacy constants", rmse(best, v, i, vtOld, true), 9.860218781e-04, 1e-12},
		{"implicit RMSE, CODATA 2018", rmse(best, v, i, ThermalVoltage(rtcTK), true), 9.860373323e-04, 1e-12},
		{"current RMSE (Lambert W), legacy constants", rmse(best, v, i, vtOld, false), 7.753913e-04, 5e-11},
	} {
		t.Logf("RTC France best_known %s: %.10e (notes: %.10e)", c.what, c.got, c.want)
		if math.Abs(c.got-c.want) > c.tol {
			t.Errorf("RTC France best_known %s = %.10e, notes give %.10e", c.what, c.got, c.want)
		}
	}
}

// TestRTCFranceImplicitFit fits the implicit residual with the literature's constants and
// checks the RMSE against the best published 9.8602E-04 to its printed digits, and the
// parameters against the published "best_known" set (source [C1] in the file).
func TestRTCFranceImplicitFit(t *testing.T) {
	v, i := rtcData(t)
	pub := rtcPublished(t)["best_known"]
	f, err := SingleDiodeWith(v, i, 1, rtcTK, nil, &DiodeSettings{Implicit: true, Boltzmann: legacyK, Charge: legacyQ})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("RTC France implicit fit: RMSE %.8e (published %s), %+v, %v, %d iterations",
		f.RMSE, pub.raw, f.Params, f.Result.Status, f.Result.Iterations)
	if d := math.Abs(f.RMSE - pub.rmse); d > halfUnit(pub.raw) {
		t.Errorf("RTC France RMSE %.8e, published %s (off by %.2g, allowed %.2g)", f.RMSE, pub.raw, d, halfUnit(pub.raw))
	}
	checkNear(t, "RTC France implicit fit", f.Params, pub.p, 1e-3)
}

// TestRTCFranceCurrentFit fits the current error (the default) and checks that it does
// at least as well as the published set does on that measure (7.753913e-04, recomputed
// in the file's notes), that the parameters stay near the published ones, and that Voc,
// Isc and the maximum power point agree with the measured curve.
func TestRTCFranceCurrentFit(t *testing.T) {
	v, i := rtcData(t)
	pub := rtcPublished(t)["best_known"]
	f, err := SingleDiodeWith(v, i, 1, rtcTK, nil, &DiodeSettings{Boltzmann: legacyK, Charge: legacyQ})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("RTC France current fit: RMSE %.8e, %+v ± %+v", f.RMSE, f.Params, f.SD)
	t.Logf("Voc %.6f V, Isc %.6f A, MPP %.6f V %.6f A %.6f W", f.Voc, f.Isc, f.Vmp, f.Imp, f.Pmp)
	if f.RMSE > 7.753913e-04 {
		t.Errorf("RTC France current-error RMSE %.8e, worse than the published set's 7.753913e-04", f.RMSE)
	}
	checkNear(t, "RTC France current fit", f.Params, pub.p, 0.1)
	// Papers that fit the exact current error of this curve report RMSE 7.7301e-04 (value
	// from memory, source not at hand).
	if math.Abs(f.RMSE-7.7301e-04) > 0.5e-8 {
		t.Errorf("RTC France current-error RMSE %.8e, literature (from memory) 7.7301e-04", f.RMSE)
	}

	// Voc lies between the last two measured points around I = 0 (0.5633 V, 0.1035 A
	// and 0.5736 V, -0.0100 A in rtc_france_iv.csv) and close to their linear
	// interpolation; Isc near the point at 0.0057 V, 0.7605 A.
	if f.Voc < 0.5633 || f.Voc > 0.5736 {
		t.Errorf("Voc %.5f V outside the measured bracket", f.Voc)
	}
	if lin := 0.5633 + (0.5736-0.5633)*0.1035/(0.1035+0.0100); math.Abs(f.Voc-lin) > 2e-3 {
		t.Errorf("Voc %.5f V, interpolated %.5f V", f.Voc, lin)
	}
	if math.Abs(f.Isc-0.7605) > 2e-3 {
		t.Errorf("Isc %.5f A, measured about 0.7605 A", f.Isc)
	}
	if r := f.Current(f.Voc); math.Abs(r) > 1e-12 {
		t.Errorf("I(Voc) = %g", r)
	}
	// The best measured power is 0.459 V × 0.6755 A = 0.31005 W (from the file); the
	// fitted curve passes within its RMSE of the points, so Pmp is close to it and above.
	if f.Pmp < 0.459*0.6755-0.459*3*f.RMSE || f.Pmp > 0.459*0.6755*1.01 {
		t.Errorf("Pmp %.5f W, best measured 0.31005 W", f.Pmp)
	}
	// dP/dV = 0 at the maximum power point.
	h := 1e-5
	if d := (f.Vmp+h)*f.Current(f.Vmp+h) - (f.Vmp-h)*f.Current(f.Vmp-h); math.Abs(d/(2*h)) > 1e-5 {
		t.Errorf("dP/dV at Vmp = %g", d/(2*h))
	}

	// CODATA 2018 constants move the optimum only slightly.
	g, err := SingleDiode(v, i, 1, rtcTK, nil)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("RTC France current fit, CODATA 2018: RMSE %.8e, %+v", g.RMSE, g.Params)
	if math.Abs(g.RMSE-f.RMSE) > 1e-3*f.RMSE {
		t.Errorf("RMSE %.8e with CODATA 2018 constants vs %.8e with the legacy ones", g.RMSE, f.RMSE)
	}
}

func checkNear(t *testing.T, what string, got, want DiodeParams, rel float64) {
	t.Helper()
	for _, c := range []struct {
		name      string
		got, want float64
	}{{"Iph", got.Iph, want.Iph}, {"I0", got.I0, want.I0}, {"n", got.N, want.N}, {"Rs", got.Rs, want.Rs}, {"Rsh", got.Rsh, want.Rsh}} {
		d := math.Abs(c.got/c.want - 1)
		t.Logf("%s %s = %.8g, published %.8g (rel %.2g)", what, c.name, c.got, c.want, d)
		if d > rel {
			t.Errorf("%s %s = %.8g, published %.8g: relative difference %.2g > %g", what, c.name, c.got, c.want, d, rel)
		}
	}
}

// TestSingleDiodeSynthetic recovers known parameters from a noiseless 36-cell module
// curve (invented for the test), with and without a starting point.
func TestSingleDiodeSynthetic(t *testing.T) {
	truth := DiodeParams{Iph: 0.12, I0: 2e-9, N: 1.3, Rs: 0.8, Rsh: 900}
	vt := 36 * ThermalVoltage(298.15)
	voc := truth.Voc(vt)
	var v, i []float64
	for k := 0; k <= 60; k++ {
		x := -1 + (voc+1.5)*float64(k)/60
		v, i = append(v, x), append(i, truth.Current(x, vt))
	}
	for _, start := range []*DiodeParams{nil, {Iph: 0.1, I0: 1e-8, N: 1.5, Rs: 0.5, Rsh: 500}} {
		f, err := SingleDiode(v, i, 36, 298.15, start)
		if err != nil {
			t.Fatal(err)
		}
		checkNear(t, "synthetic module", f.Params, truth, 1e-6)
	}
}

// TestW0ExpWindow checks W0(exp(l)) near l = ln 3, where lambertw once recursed without
// end (a fitted I-V curve that stopped below the knee hit it), against w + ln w = l.
func TestW0ExpWindow(t *testing.T) {
	for _, l := range []float64{1.05, 1.0899, 1.09, 1.0986, 1.09862, 1.0999, 1.1, 1.1001, 1.11, 1.2} {
		w := lambertw.W0Exp(l)
		if r := w + math.Log(w) - l; math.Abs(r) > 4e-16*l {
			t.Errorf("W0Exp(%v) = %v: w + ln w − l = %g", l, w, r)
		}
	}
}
