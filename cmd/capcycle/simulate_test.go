package main

import (
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"capcycle/analyze/model"
	"capcycle/logger/capture"
)

// readCapture reads a whole capture file back with the capture package's reader.
func readCapture(t *testing.T, path string) (meta map[string]string, ts, vs []float64) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	r := capture.NewReader(f, path)
	bt, bv := make([]float64, 4096), make([]float64, 4096)
	for {
		n, err := r.Read(bt, bv)
		ts = append(ts, bt[:n]...)
		vs = append(vs, bv[:n]...)
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			t.Fatal(err)
		}
	}
	return r.Meta(), ts, vs
}

// TestSimulateProfile writes two hours of Fern from its profile and checks the file against
// the model's own sampler: metadata, one row per sample, and the same voltages to the
// file's 10 µV resolution.
func TestSimulateProfile(t *testing.T) {
	out := filepath.Join(t.TempDir(), "fern.csv")
	code, _, errs := runCmd(t, "simulate", "--profile", "../../analyze/model/scenarios/fern.toml", "--hours", "2", "--rate", "0.5", "-o", out)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !strings.Contains(errs, "simulated Fern for 2.00 h") {
		t.Errorf("summary: %q", errs)
	}
	meta, ts, vs := readCapture(t, out)
	if meta["format"] != capture.FormatVersion || meta["profile"] != "Fern" || !strings.HasPrefix(meta["start"], "2026-12-02T00:00:00") ||
		meta["source"] != "simulation profile=fern.toml" {
		t.Errorf("metadata %v", meta)
	}
	if len(ts) != 3601 {
		t.Fatalf("%d rows, want 3601 (2 h at 0.5 Hz, both ends)", len(ts))
	}
	sc, err := model.Scenario("fern")
	if err != nil {
		t.Fatal(err)
	}
	sp, err := model.NewSampler(sc.Circuit, sc.Light, &model.Options{DurationS: 7200, RateHz: 0.5})
	if err != nil {
		t.Fatal(err)
	}
	for i := range ts {
		s, ok := sp.Next()
		if !ok {
			t.Fatalf("sampler ended at row %d", i)
		}
		if math.Abs(ts[i]-s.TS) > 1e-6 || math.Abs(vs[i]-s.V) > 5e-6 {
			t.Fatalf("row %d: %g s %g V, model %g s %g V", i, ts[i], vs[i], s.TS, s.V)
		}
	}
}

func TestSimulateScenarioToStdout(t *testing.T) {
	code, out, errs := runCmd(t, "simulate", "--scenario", "wren", "--hours", "0.01", "--rate", "10")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	lines := strings.Split(strings.TrimSpace(out), "\n")
	var rows int
	header := false
	for _, l := range lines {
		switch {
		case strings.HasPrefix(l, "#"):
		case l == "time_s,vcap_v":
			header = true
		default:
			rows++
		}
	}
	if !header || rows != 361 || !strings.Contains(out, "# source: simulation scenario=wren") {
		t.Errorf("header %v, %d rows:\n%s", header, rows, out[:min(len(out), 400)])
	}
}

// TestSimulateRefusesOverwrite: an existing file is kept unless --force is given.
func TestSimulateRefusesOverwrite(t *testing.T) {
	out := filepath.Join(t.TempDir(), "keep.csv")
	if err := os.WriteFile(out, []byte("precious\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errs := runCmd(t, "simulate", "--scenario", "fern", "--hours", "0.01", "-o", out)
	if code != exitUsage || !strings.Contains(errs, "--force") {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if b, _ := os.ReadFile(out); string(b) != "precious\n" {
		t.Fatalf("file changed: %q", b)
	}
	if code, _, errs := runCmd(t, "simulate", "--scenario", "fern", "--hours", "0.01", "-o", out, "--force"); code != 0 {
		t.Fatalf("with --force: exit %d: %s", code, errs)
	}
	if b, _ := os.ReadFile(out); !strings.HasPrefix(string(b), "# format: ") {
		t.Fatalf("not replaced: %q", b[:min(len(b), 40)])
	}
}

func TestSimulateUsage(t *testing.T) {
	for _, tc := range []struct {
		name string
		args []string
		want string
	}{
		{"neither", nil, "exactly one"},
		{"both", []string{"--scenario", "wren", "--profile", "x.toml"}, "exactly one"},
		{"unknown scenario", []string{"--scenario", "robin"}, "known scenarios"},
		{"bad hours", []string{"--scenario", "wren", "--hours", "-1"}, "--hours"},
		{"bad rate", []string{"--scenario", "wren", "--rate", "0"}, "--rate"},
		{"missing profile", []string{"--profile", "no-such-file.toml"}, "no-such-file.toml"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			code, _, errs := runCmd(t, append([]string{"simulate"}, tc.args...)...)
			if code != exitUsage || !strings.Contains(errs, tc.want) {
				t.Errorf("exit %d, stderr %q; want exit 2 mentioning %q", code, errs, tc.want)
			}
		})
	}
}
