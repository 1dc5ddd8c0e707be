package main

import (
	"bytes"
	"capcycle/analyze/analysis"
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

const wrenCapture = "../../testdata/captures/wren-rc-10min.csv"

func runAnalyzeCmd(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var o, e bytes.Buffer
	code = run(context.Background(), args, &env{stdin: strings.NewReader(""), stdout: &o, stderr: &e})
	return code, o.String(), e.String()
}

func TestAnalyzeJSON(t *testing.T) {
	dir := t.TempDir()
	cyc, seg := filepath.Join(dir, "c.csv"), filepath.Join(dir, "s.csv")
	code, out, errs := runAnalyzeCmd(t, "analyze", wrenCapture, "--cap", "4700u", "--json", "--cycles-csv", cyc, "--segments-csv", seg)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var res analysis.Result
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	if res.Schema != analysis.Schema || len(res.Cycles) == 0 || res.Capacitance == nil || res.Capacitance.F.Origin != "flag" {
		t.Fatalf("result: schema %q, %d cycles, capacitance %+v", res.Schema, len(res.Cycles), res.Capacitance)
	}
	if res.Cycles[0].EnergyJ == nil {
		t.Error("no energy with the capacitance known")
	}
	b, err := os.ReadFile(cyc)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	if lines[0] != "index,fire_s,fire_v,reset_s,reset_v,charge_s,pulse_s,energy_j,kind,light" || len(lines) != len(res.Cycles)+1 {
		t.Errorf("cycles CSV: header %q, %d lines for %d cycles", lines[0], len(lines), len(res.Cycles))
	}
	if b, err := os.ReadFile(seg); err != nil || !strings.HasPrefix(string(b), "kind,start_s,end_s,start_v,end_v\n") {
		t.Errorf("segments CSV: %v %q", err, b)
	}
}

func TestAnalyzeSummaryWithoutCapacitance(t *testing.T) {
	code, out, errs := runAnalyzeCmd(t, "analyze", wrenCapture)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !strings.Contains(out, "cycles: ") || !strings.Contains(out, "capacitance is not known") {
		t.Errorf("summary:\n%s", out)
	}
}

// Bad input: exit 2 and one line that names file:line:column.
func TestAnalyzeBadInput(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "bad.csv")
	os.WriteFile(bad, []byte("time_s,vcap_v\n0,1\n0.1,1.1\n0.05,1.2\n"), 0o644)
	code, out, errs := runAnalyzeCmd(t, "analyze", bad, "--json")
	if code != 2 || out != "" {
		t.Fatalf("exit %d, stdout %q", code, out)
	}
	if strings.Count(errs, "\n") != 1 || !strings.Contains(errs, bad+":4:1:") || !strings.Contains(errs, "backwards") {
		t.Errorf("stderr %q", errs)
	}
	code, _, errs = runAnalyzeCmd(t, "analyze", wrenCapture, "--cycles-csv", wrenCapture)
	if code != 2 || !strings.Contains(errs, "never written over") {
		t.Errorf("writing over the input: exit %d, %q", code, errs)
	}
	code, _, _ = runAnalyzeCmd(t, "analyze", wrenCapture, "--cap", "4700x")
	if code != 2 {
		t.Errorf("bad --cap: exit %d", code)
	}
}

// A foreign CSV: semicolons, decimal commas, millivolts, RFC 3339 times, columns named
// by flags.
func TestAnalyzeForeignColumns(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "logger.csv")
	var b strings.Builder
	b.WriteString("stamp;ch1;ch2\n")
	for i := 0; i < 200; i++ {
		b.WriteString("2026-12-01T10:00:" + pad2(i/4) + "." + []string{"00", "25", "50", "75"}[i%4] + "Z;" + strings.Replace(strings.TrimRight(strings.TrimRight(fmtFloat(1000+float64(i)*5), "0"), "."), ".", ",", 1) + ";0\n")
	}
	os.WriteFile(p, []byte(b.String()), 0o644)
	code, out, errs := runAnalyzeCmd(t, "analyze", p, "--time-col", "stamp", "--volt-col", "ch1", "--volt-unit", "mV", "--time-format", "rfc3339", "--delim", ";", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var res analysis.Result
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	if res.Samples != 200 || res.DurationS < 49.7 || res.DurationS > 49.8 || len(res.Envelope) == 0 || res.Envelope[len(res.Envelope)-1].MaxV < 1.9 {
		t.Errorf("samples %d, duration %v, envelope %v", res.Samples, res.DurationS, res.Envelope[len(res.Envelope)-1])
	}
}

func pad2(i int) string {
	s := "0" + strings.TrimSpace(fmtInt(i))
	return s[len(s)-2:]
}

func fmtInt(i int) string       { return strconv.Itoa(i) }
func fmtFloat(f float64) string { return strconv.FormatFloat(f, 'f', 2, 64) }

// The profile gives the declared values; a flag wins over it.
func TestAnalyzeProfileAndFlagOverride(t *testing.T) {
	code, out, errs := runAnalyzeCmd(t, "analyze", wrenCapture, "--profile", "../../testdata/profiles/wren.toml", "--cap", "0.1", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var res analysis.Result
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	if res.Capacitance == nil || res.Capacitance.F.Value != 0.1 || res.Capacitance.F.Origin != "flag" {
		t.Errorf("capacitance %+v, want the flag's 0.1 F", res.Capacitance)
	}
	if res.Declared == nil || res.Declared.OnV == 0 || res.Declared.ProbeOhm == 0 || res.Source.Profile == "" {
		t.Errorf("declared %+v, profile %q: the profile's values are missing", res.Declared, res.Source.Profile)
	}
}
