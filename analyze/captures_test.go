package analyze

import (
	"bufio"
	"context"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"capcycle/analyze/analysis"
	"capcycle/analyze/detect/detecttest"
	"capcycle/logger/capture"
)

var updateCaptures = flag.Bool("update-captures", false, "rewrite the synthetic captures in testdata/captures")

// syntheticCaptures are the files in testdata/captures, made by the closed-form RC
// generator (package detecttest); "go test ./analyze -run TestSyntheticCaptures
// -update-captures" rewrites them.
var syntheticCaptures = []struct {
	name  string
	note  string
	c     detecttest.Circuit
	light []detecttest.Light
	dur   float64
	s     detecttest.Sampling
	a     detecttest.ADC
	fires int
}{
	{"wren-rc-10min.csv", "Wren as an RC circuit: 4.7 mF, 1 MOhm leak, 20 Ohm load, trigger 2.8 V / 1.6 V, 0.6 mA of light, 20 Hz, 2 mV noise, 12-bit ADC on 5 V",
		wrenRC, []detecttest.Light{{FromS: 0, IA: 0.6e-3}}, 600, detecttest.Sampling{DtS: 0.05}, detecttest.ADC{NoiseV: 2e-3, Bits: 12, FullV: 5, Seed: 11}, -1},
	{"fern-rc-stall-3h.csv", "Fern as an RC circuit: 0.1 F, 200 kOhm leak, trigger 4.5 V (never reached), 20 uA of light, one sample every 2 s, 1 mV noise",
		detecttest.Circuit{C: 0.1, RLeakOhm: 2e5, RLoadOhm: 50, OnV: 4.5, OffV: 3, V0: 0.2}, []detecttest.Light{{FromS: 0, IA: 20e-6}}, 3 * 3600,
		detecttest.Sampling{DtS: 2}, detecttest.ADC{NoiseV: 1e-3, Seed: 13}, 0},
}

func TestSyntheticCaptures(t *testing.T) {
	dir := filepath.Join("..", "testdata", "captures")
	for _, sc := range syntheticCaptures {
		path := filepath.Join(dir, sc.name)
		var tr detecttest.Truth
		if *updateCaptures {
			if err := os.MkdirAll(dir, 0o755); err != nil {
				t.Fatal(err)
			}
			f, err := os.Create(path)
			if err != nil {
				t.Fatal(err)
			}
			w := bufio.NewWriter(f)
			fmt.Fprintf(w, "# format: %s\n# note: synthetic, made by the closed-form RC generator (analyze/detect/detecttest) in analyze/captures_test.go\n# note: %s\n", capture.FormatVersion, sc.note)
			fmt.Fprintf(w, "time_s,vcap_v\n")
			tr = detecttest.Stream(sc.c, sc.light, sc.dur, sc.s, sc.a, func(ts, vs float64) {
				fmt.Fprintf(w, "%s,%s\n", strconv.FormatFloat(ts, 'f', 6, 64), strconv.FormatFloat(vs, 'f', 5, 64))
			})
			if err := w.Flush(); err != nil {
				t.Fatal(err)
			}
			f.Close()
		} else {
			tr = detecttest.Stream(sc.c, sc.light, sc.dur, sc.s, sc.a, func(float64, float64) {})
		}
		f, err := os.Open(path)
		if err != nil {
			t.Fatalf("%v (run with -update-captures to make it)", err)
		}
		res, err := Run(context.Background(), capture.NewReader(f, path), &Options{Declared: analysis.Declared{CapF: sc.c.C}})
		f.Close()
		if err != nil {
			t.Fatal(err)
		}
		want := 0
		for _, r := range tr.ResetS {
			if r < sc.dur-3*sc.s.DtS {
				want++
			}
		}
		if len(res.Cycles) != want {
			t.Errorf("%s: %d cycles, want %d", sc.name, len(res.Cycles), want)
		}
	}
}
