package main

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// writeSawCapture writes a short capture for the report command's tests. Test data,
// invented: a capacitor charged through a resistor-limited source from 1.5 V to a 2.7 V
// trigger and dumped back in 0.4 s, for half an hour at 10 samples per second.
func writeSawCapture(t *testing.T, path string) {
	t.Helper()
	var b strings.Builder
	b.WriteString("# capture: test data for the report command\ntime_s,vcap_v\n")
	v, on := 1.5, false
	const dt = 0.1
	for i := 0; i < 18000; i++ {
		ts := float64(i) * dt
		if on {
			v -= (v - 0.9) * (1 - math.Exp(-dt/0.8))
			if v <= 1.5 {
				on = false
			}
		} else {
			v += (3.2 - v) * (1 - math.Exp(-dt/40))
			if v >= 2.7 {
				on = true
			}
		}
		fmt.Fprintf(&b, "%.1f,%.4f\n", ts, v+0.002*math.Sin(float64(i)*0.7))
	}
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

func runReportCmd(args ...string) (code int, stdout, stderr string) {
	var o, e bytes.Buffer
	code = run(context.Background(), args, &env{stdin: strings.NewReader(""), stdout: &o, stderr: &e})
	return code, o.String(), e.String()
}

func TestReportCommand(t *testing.T) {
	dir := t.TempDir()
	capPath := filepath.Join(dir, "saw.csv")
	writeSawCapture(t, capPath)
	orig, _ := os.ReadFile(capPath)
	out := filepath.Join(dir, "saw.html")

	code, stdout, stderr := runReportCmd("report", capPath, "-o", out)
	if code != 0 {
		t.Fatalf("report CAPTURE: exit %d\n%s", code, stderr)
	}
	for _, f := range []string{"saw.html", "saw.analysis.json", "saw.cycles.csv"} {
		if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
			t.Errorf("%s not written: %v", f, err)
		}
	}
	if !strings.Contains(stdout, "full cycles") || !strings.Contains(stdout, out) {
		t.Errorf("stdout does not give the verdict and the paths:\n%s", stdout)
	}

	// Again: the files exist; refuse without --force, replace with it.
	if code, _, stderr = runReportCmd("report", capPath, "-o", out); code != exitUsage || !strings.Contains(stderr, "--force") {
		t.Errorf("second run without --force: exit %d, %q", code, stderr)
	}
	if code, _, stderr = runReportCmd("report", capPath, "-o", out, "--force"); code != 0 {
		t.Errorf("with --force: exit %d, %s", code, stderr)
	}

	// From the saved JSON, the same page (bar the file names it links to).
	again := filepath.Join(dir, "again.html")
	if code, _, stderr = runReportCmd("report", "--from-json", filepath.Join(dir, "saw.analysis.json"), "-o", again); code != 0 {
		t.Fatalf("--from-json: exit %d, %s", code, stderr)
	}
	a, _ := os.ReadFile(out)
	b, _ := os.ReadFile(again)
	if !bytes.Equal(a, bytes.ReplaceAll(b, []byte("again."), []byte("saw."))) {
		t.Error("the report rebuilt from the saved JSON differs from the first")
	}

	// Two inputs: a comparison; flags after the inputs work.
	cmp := filepath.Join(dir, "cmp.html")
	code, stdout, stderr = runReportCmd("report", "--from-json", filepath.Join(dir, "saw.analysis.json"), filepath.Join(dir, "again.analysis.json"), "-o", cmp)
	if code != 0 || !strings.Contains(stdout, cmp) {
		t.Errorf("comparison: exit %d, %s%s", code, stdout, stderr)
	}

	// Bad inputs and usage.
	bad := []struct {
		name string
		args []string
		want string
	}{
		{"capture given as JSON", []string{"report", "--from-json", capPath}, "not an analysis JSON"},
		{"three inputs", []string{"report", capPath, capPath, capPath}, "not 3"},
		{"no input", []string{"report"}, "give a capture"},
		{"output not html", []string{"report", capPath, "-o", filepath.Join(dir, "x.txt")}, "end in .html"},
		{"missing file", []string{"report", filepath.Join(dir, "nope.csv")}, "nope.csv"},
	}
	for _, tt := range bad {
		code, _, stderr := runReportCmd(tt.args...)
		if code != exitUsage || !strings.Contains(stderr, tt.want) {
			t.Errorf("%s: exit %d, %q; want exit 2 and %q", tt.name, code, stderr, tt.want)
		}
	}
	// The capture itself as the cycle CSV's place: refused, the capture untouched.
	sneaky := filepath.Join(dir, "s.cycles.csv")
	if err := os.WriteFile(sneaky, orig, 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, stderr = runReportCmd("report", sneaky, "-o", filepath.Join(dir, "s.html"), "--force")
	if code != exitUsage || !strings.Contains(stderr, "never written over") {
		t.Errorf("report over its own capture: exit %d, %q", code, stderr)
	}
	if now, _ := os.ReadFile(sneaky); !bytes.Equal(now, orig) {
		t.Error("the capture was changed")
	}
	if now, _ := os.ReadFile(capPath); !bytes.Equal(now, orig) {
		t.Error("the capture was changed")
	}
}
