package main

import (
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// The virtual rover under a steady lamp, simulated with its load current: analyze reads
// the iload_a column and measures the capacitance from it, within 3 % of the 4.7 mF in the
// profile (its declared value is overridden to 6.8 mF, which the measurement ignores), and
// --current-col none falls back to the declared value.
func TestAnalyzeCapacitanceFromCurrentColumn(t *testing.T) {
	dir := t.TempDir()
	src, err := os.ReadFile(filepath.Join("..", "..", "testdata", "profiles", "wren.toml"))
	if err != nil {
		t.Fatal(err)
	}
	p := string(src)
	i := strings.Index(p, "[light]")
	if i < 0 {
		t.Fatal("wren.toml has no [light] table")
	}
	p = p[:i] + "[light]\nkind = \"constant\"\nirradiance_w_m2 = 300\n"
	prof := filepath.Join(dir, "lamp.toml")
	if err := os.WriteFile(prof, []byte(p), 0o644); err != nil {
		t.Fatal(err)
	}
	capFile := filepath.Join(dir, "lamp.csv")
	if code, _, errs := runCmd(t, "simulate", "--profile", prof, "--hours", "0.02", "--rate", "500", "--current", "-o", capFile); code != 0 {
		t.Fatalf("simulate: exit %d: %s", code, errs)
	}
	code, out, errs := runCmd(t, "analyze", capFile, "--cap", "6.8m")
	if code != 0 {
		t.Fatalf("analyze: exit %d: %s", code, errs)
	}
	m := regexp.MustCompile(`capacitance: ([0-9.]+) mF ± [0-9.]+ [µm]?F \(measured from the load current at (\d+) fires\)`).FindStringSubmatch(out)
	if m == nil {
		t.Fatalf("no measured capacitance in the summary:\n%s", out)
	}
	c, _ := strconv.ParseFloat(m[1], 64)
	if n, _ := strconv.Atoi(m[2]); n < 3 || c < 4.7*0.97 || c > 4.7*1.03 {
		t.Errorf("capacitance %s mF from %s fires, want 4.7 mF within 3 %%", m[1], m[2])
	}
	code, out, errs = runCmd(t, "analyze", capFile, "--cap", "6.8m", "--current-col", "none")
	if code != 0 || !strings.Contains(out, "capacitance: 6.80 mF (flag)") {
		t.Errorf("--current-col none: exit %d, %s\n%s", code, errs, out)
	}
}
