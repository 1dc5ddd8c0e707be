package model

import (
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"testing"
	"time"
)

// BenchmarkWrenDay simulates 24 hours of the sunny-sill rover (Scenario "wren": hold
// trigger, DC motor, windowsill day with clouds).
func BenchmarkWrenDay(b *testing.B) {
	sc, err := Scenario("wren")
	if err != nil {
		b.Fatal(err)
	}
	var res *Result
	for b.Loop() {
		res, err = Simulate(sc.Circuit, sc.Light, &Options{DurationS: 86400})
		if err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(len(res.Cycles)), "cycles")
	b.ReportMetric(float64(res.Evals), "evals")
}

// BenchmarkDayVersusNgspice simulates the rover's netlist twin (wrenTwin: the same panel,
// capacitor, leakage and probe, a voltage switch with hysteresis and a resistive load,
// under the day's light as a piecewise-linear source) over 24 hours with the model and, in
// the same run, with ngspice, and reports the speed ratio and how well the cycles agree.
// ngspice runs with a 10 ms step limit, which keeps its switch lag near 1 ms. With -short
// the span is 2 hours around noon.
func BenchmarkDayVersusNgspice(b *testing.B) {
	c, light := wrenTwin(b)
	span := 86400.0
	if testing.Short() {
		span = 7200
	}
	var res *Result
	var err error
	t0 := time.Now()
	n := 0
	for b.Loop() {
		res, err = Simulate(c, light, &Options{DurationS: span})
		if err != nil {
			b.Fatal(err)
		}
		n++
	}
	modelS := time.Since(t0).Seconds() / float64(n)
	b.ReportMetric(float64(len(res.Fires())), "model_fires")
	b.ReportMetric(modelS, "model_s")

	bin, lerr := exec.LookPath("ngspice")
	if lerr != nil {
		b.Log("ngspice not installed; reporting the model half only")
		return
	}
	b.StopTimer()
	dir := b.TempDir()
	out := filepath.Join(dir, "out.txt")
	net, err := spiceNetlist(c, light, span, 0, 10e-3, out)
	if err != nil {
		b.Fatal(err)
	}
	cir := filepath.Join(dir, "circuit.cir")
	if err := os.WriteFile(cir, []byte(net), 0o644); err != nil {
		b.Fatal(err)
	}
	cmd := exec.Command(bin, "-b", cir)
	cmd.Dir = dir
	s0 := time.Now()
	if msg, err := cmd.CombinedOutput(); err != nil {
		b.Fatalf("ngspice: %v\n%s", err, msg)
	}
	spiceS := time.Since(s0).Seconds()
	spiceCPU := (cmd.ProcessState.UserTime() + cmd.ProcessState.SystemTime()).Seconds()
	sp := readSpiceOut(b, out, c.Load.Ohm)
	sf, _ := sp.events(c)
	mf := before(res.Fires(), span)
	b.ReportMetric(spiceS, "ngspice_s")
	b.ReportMetric(spiceCPU, "ngspice_cpu_s")
	b.ReportMetric(spiceS/modelS, "speedup")
	b.ReportMetric(float64(len(sf)), "ngspice_fires")

	// Agreement: the number of fires, and the k-th charge-and-fire period of each.
	b.ReportMetric(100*math.Abs(float64(len(sf)-len(mf)))/float64(max(len(mf), 1)), "fires_diff_%")
	m := min(len(sf), len(mf))
	var rels []float64
	for k := 1; k < m; k++ {
		ps, pm := sf[k]-sf[k-1], mf[k]-mf[k-1]
		rels = append(rels, math.Abs(ps-pm)/pm)
	}
	if len(rels) > 0 {
		sort.Float64s(rels)
		b.ReportMetric(100*rels[len(rels)/2], "period_median_diff_%")
		b.ReportMetric(100*rels[len(rels)*99/100], "period_p99_diff_%")
		if rels[len(rels)/2] > 1e-3 {
			b.Errorf("median period differs from ngspice by %.3g %% (limit 0.1 %%)", 100*rels[len(rels)/2])
		}
	}
	if spiceS/modelS < 10 {
		b.Logf("speedup %.1f is below the goal of 10", spiceS/modelS)
	}
}
