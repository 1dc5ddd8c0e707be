package main

import (
	"bytes"
	"errors"
	"flag"
	"math"
	"regexp"
	"slices"
	"strings"
	"testing"

	"capcycle/analyze/model"
)

// testFlagSet is a flag set with one flag of each kind the commands use.
func testFlagSet(w *bytes.Buffer) (*flag.FlagSet, *string, *bool, *float64) {
	fs := newFlags("try", "FILE [flags]", w, "capcycle try a.csv --json")
	profile := fs.String("profile", "", "bench profile")
	asJSON := fs.Bool("json", false, "write JSON")
	scale := fs.Float64("scale", 1, "a factor")
	outFlag(fs, "", "file to write")
	return fs, profile, asJSON, scale
}

func TestParseFlagsAnyOrder(t *testing.T) {
	for _, tc := range []struct {
		name    string
		args    []string
		profile string
		json    bool
		scale   float64
		pos     []string
	}{
		{"flags first", []string{"--profile", "wren.toml", "wren.csv"}, "wren.toml", false, 1, []string{"wren.csv"}},
		{"flags last", []string{"wren.csv", "--profile", "wren.toml"}, "wren.toml", false, 1, []string{"wren.csv"}},
		{"between", []string{"a.csv", "--profile=p.toml", "b.csv"}, "p.toml", false, 1, []string{"a.csv", "b.csv"}},
		{"bool takes no value", []string{"--json", "wren.csv"}, "", true, 1, []string{"wren.csv"}},
		{"bool with =false", []string{"--json=false", "wren.csv"}, "", false, 1, []string{"wren.csv"}},
		{"single dash", []string{"-profile", "p.toml", "-json", "x"}, "p.toml", true, 1, []string{"x"}},
		{"value that looks like a flag", []string{"--scale", "-1", "x"}, "", false, -1, []string{"x"}},
		{"negative number is an argument", []string{"-2.5", "--json"}, "", true, 1, []string{"-2.5"}},
		{"lone dash is an argument", []string{"-", "--json"}, "", true, 1, []string{"-"}},
		{"double dash ends the flags", []string{"--json", "--", "--profile", "-x"}, "", true, 1, []string{"--profile", "-x"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var w bytes.Buffer
			fs, profile, asJSON, scale := testFlagSet(&w)
			if err := parseFlags(fs, tc.args); err != nil {
				t.Fatal(err)
			}
			if *profile != tc.profile || *asJSON != tc.json || *scale != tc.scale || !slices.Equal(fs.Args(), tc.pos) {
				t.Errorf("got profile %q json %v scale %g args %q; want %q %v %g %q",
					*profile, *asJSON, *scale, fs.Args(), tc.profile, tc.json, tc.scale, tc.pos)
			}
			if w.Len() > 0 {
				t.Errorf("printed %q", w.String())
			}
		})
	}
}

func TestParseFlagsErrorsAreOneLine(t *testing.T) {
	for _, tc := range []struct {
		name string
		args []string
		want string
	}{
		{"misspelt", []string{"a.csv", "--profle", "p.toml"}, `unknown flag --profle; did you mean --profile? (run "capcycle try -h" for its flags)`},
		{"prefix", []string{"--prof", "p.toml"}, "did you mean --profile?"},
		{"swapped letters", []string{"--jsno"}, "did you mean --json?"},
		{"nothing close", []string{"--zzzzzz"}, `unknown flag --zzzzzz (run "capcycle try -h" for its flags)`},
		{"no value", []string{"a.csv", "--profile"}, "--profile needs a value: bench profile"},
		{"bad number", []string{"--scale", "lots"}, `--scale "lots": not a number`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var w bytes.Buffer
			fs, _, _, _ := testFlagSet(&w)
			err := parseFlags(fs, tc.args)
			if err == nil || exitCode(err) != exitUsage {
				t.Fatalf("err %v (exit %d); want a usage error", err, exitCode(err))
			}
			if !strings.Contains(err.Error(), tc.want) || strings.Contains(err.Error(), "\n") {
				t.Errorf("error %q; want one line containing %q", err, tc.want)
			}
			if w.Len() > 0 {
				t.Errorf("printed the usage on a flag error:\n%s", w.String())
			}
		})
	}
}

func TestParseFlagsHelp(t *testing.T) {
	var w bytes.Buffer
	fs, _, _, _ := testFlagSet(&w)
	if err := parseFlags(fs, []string{"a.csv", "-h"}); !errors.Is(err, flag.ErrHelp) {
		t.Fatalf("err %v; want flag.ErrHelp", err)
	}
	want := `usage: capcycle try FILE [flags]

flags:
  --json
        write JSON
  --out string, -o string
        file to write
  --profile string
        bench profile
  --scale float
        a factor (default 1)

examples:
  capcycle try a.csv --json
`
	if w.String() != want {
		t.Errorf("help:\n%s\nwant:\n%s", w.String(), want)
	}
}

func TestOutAndShortO(t *testing.T) {
	for _, arg := range []string{"-o", "--out", "-out"} {
		var w bytes.Buffer
		fs, _, _, _ := testFlagSet(&w)
		if err := parseFlags(fs, []string{arg, "x.html"}); err != nil {
			t.Fatal(err)
		}
		if got := fs.Lookup("out").Value.String(); got != "x.html" {
			t.Errorf("%s x.html: --out is %q", arg, got)
		}
	}
}

func TestSuggest(t *testing.T) {
	names := []string{"analyze", "report", "record", "robot", "simulate", "profile", "version"}
	for _, tc := range []struct{ in, want string }{
		{"anlyze", "analyze"},
		{"analyse", "analyze"},
		{"recrod", "record"},
		{"simulte", "simulate"},
		{"ver", "version"},
		{"re", ""}, // report, record: ambiguous prefix, and too far from both
		{"x", ""},
		{"calendar", ""},
	} {
		if got := suggest(tc.in, names); got != tc.want {
			t.Errorf("suggest(%q) = %q; want %q", tc.in, got, tc.want)
		}
	}
}

func TestCommandSuggestionsAndAliases(t *testing.T) {
	code, _, errs := runCmd(t, "anlyze", "x.csv")
	if code != exitUsage || !strings.Contains(errs, `did you mean "analyze"?`) {
		t.Errorf("anlyze: exit %d, %q", code, errs)
	}
	code, _, errs = runCmd(t, "analyse", "-h")
	if code != 0 || !strings.Contains(errs, "usage: capcycle analyze") {
		t.Errorf("analyse -h: exit %d, %q", code, errs)
	}
	code, _, errs = runCmd(t, "analyse", "--profle", "p.toml", "x.csv")
	if code != exitUsage || strings.Count(errs, "\n") != 1 || !strings.Contains(errs, "did you mean --profile?") {
		t.Errorf("analyse --profle: exit %d, want one line with the suggestion:\n%s", code, errs)
	}
	for _, v := range []string{"--version", "-version"} {
		code, out, _ := runCmd(t, v)
		if code != 0 || !strings.HasPrefix(out, "capcycle "+version) {
			t.Errorf("%s: exit %d, %q", v, code, out)
		}
	}
}

func TestOnePrefixOnErrors(t *testing.T) {
	code, _, errs := runCmd(t, "analyze", "--profile", "../../analyze/model/scenarios/wren.toml", "no-such-capture.csv")
	if code == 0 {
		t.Fatalf("exit 0 for a missing capture")
	}
	if strings.Count(errs, "analyze:") != 1 || !strings.HasPrefix(errs, "capcycle analyze: ") || !strings.Contains(errs, "no-such-capture.csv") {
		t.Errorf("want one prefix and the file name: %q", errs)
	}
	var b strings.Builder
	if report(&env{stderr: &b}, "analyze", workErrorf("analyze: analyze: open x")) != exitWork || b.String() != "capcycle analyze: open x\n" {
		t.Errorf("report: %q", b.String())
	}
}

// TestHelpIsConsistent checks every command's help: flags printed as --name, each
// default said once, and a usage line that names every flag or says [flags].
func TestHelpIsConsistent(t *testing.T) {
	helps := [][]string{{"profile", "init", "-h"}, {"profile", "check", "-h"}}
	for _, c := range commands() {
		if c.name != "profile" {
			helps = append(helps, []string{c.name, "-h"})
		}
	}
	singleDash := regexp.MustCompile(`(?m)^  -[a-z]{2,}`)
	flagLine := regexp.MustCompile(`(?m)^  --([a-z0-9-]+)`)
	for _, h := range helps {
		name := strings.Join(h[:len(h)-1], " ")
		code, stdout, stderr := runCmd(t, h...)
		text := stdout + stderr
		if code != 0 {
			t.Errorf("%s -h: exit %d", name, code)
			continue
		}
		if singleDash.MatchString(text) {
			t.Errorf("%s -h lists a flag with one dash:\n%s", name, text)
		}
		for _, l := range strings.Split(text, "\n") {
			if strings.Count(l, "(default") > 1 {
				t.Errorf("%s -h: a default said twice: %q", name, l)
			}
		}
		usage, _, _ := strings.Cut(text, "\n")
		if strings.Contains(usage, "[flags]") {
			continue
		}
		for _, m := range flagLine.FindAllStringSubmatch(text, -1) {
			if !strings.Contains(usage, "--"+m[1]) {
				t.Errorf("%s: the usage line %q omits --%s", name, usage, m[1])
			}
		}
	}
}

func TestReportOneProfilePerCapture(t *testing.T) {
	dir := t.TempDir()
	wren, fern := "../../testdata/captures/wren-rc-10min.csv", "../../testdata/captures/fern-rc-stall-3h.csv"
	code, out, errs := runCmd(t, "report", wren, fern, "--profile", "../../analyze/model/scenarios/wren.toml",
		"--profile", "../../analyze/model/scenarios/fern.toml", "--out", dir+"/cmp.html")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	// Fern's profile declares a 4.00 V trigger, Wren's 2.70 V: each capture got its own.
	before, after, _ := strings.Cut(out, "\nafter: ")
	if !strings.Contains(after, "4.00") || strings.Contains(before, "4.00 V trigger") {
		t.Errorf("the second capture was not analysed with the second profile:\n%s", out)
	}
	code, _, errs = runCmd(t, "report", wren, fern, "--profile", "a.toml", "--profile", "b.toml", "--profile", "c.toml")
	if code != exitUsage || !strings.Contains(errs, "--profile given 3 times for 2 inputs") {
		t.Errorf("three profiles for two captures: exit %d, %q", code, errs)
	}
}

func TestSimulateRate(t *testing.T) {
	sc, err := model.Scenario("wren")
	if err != nil {
		t.Fatal(err)
	}
	// Wren: 4.7 mF into an 18 Ω armature through a 0.4 Ω switch (analyze/model/scenarios/wren.toml):
	// τ = 4.7e-3 · 18.4 = 86.48 ms (hand arithmetic); 5 samples in it need 57.8 Hz, and the
	// next step of 10, 20, 50, 100 Hz is 100 Hz.
	pulse, _ := model.ExpectedPulse(sc.Circuit)
	if math.Abs(pulse-0.08648) > 1e-9 {
		t.Errorf("Wren's load time constant %g s; want 0.08648", pulse)
	}
	if r := model.RateFor(pulse); r != 100 {
		t.Errorf("default rate for Wren %g Hz; want 100", r)
	}
	if r := model.RateFor(30); r != model.DefaultRateHz {
		t.Errorf("default rate for a 30 s pulse %g Hz; want %g", r, model.DefaultRateHz)
	}

	code, _, errs := runCmd(t, "simulate", "--scenario", "wren", "--hours", "0.02", "--light", "800", "--out", t.TempDir()+"/w.csv")
	if code != 0 || strings.Contains(errs, "warning") || !strings.Contains(errs, "rows at 100 Hz") {
		t.Errorf("default rate: exit %d, want 100 Hz and no warning:\n%s", code, errs)
	}
	code, _, errs = runCmd(t, "simulate", "--scenario", "wren", "--hours", "0.02", "--light", "800", "--rate", "10", "--out", t.TempDir()+"/w.csv")
	if code != 0 || !strings.Contains(errs, "warning: --rate 10 Hz gives 0.9 samples per the load's time constant of 86.5 ms") {
		t.Errorf("--rate 10: exit %d, want the warning:\n%s", code, errs)
	}
}

func TestSimulateLight(t *testing.T) {
	// Fern stalls in its own December light (the profile's [light]); in a constant
	// 300 W/m² the same circuit fires. The fire count is read from the summary.
	fires := func(args ...string) string {
		t.Helper()
		code, _, errs := runCmd(t, append([]string{"simulate", "--profile", "../../analyze/model/scenarios/fern.toml", "--hours", "2", "--rate", "1", "--out", t.TempDir() + "/f.csv"}, args...)...)
		if code != 0 {
			t.Fatalf("exit %d: %s", code, errs)
		}
		m := regexp.MustCompile(`: (\d+) fires`).FindStringSubmatch(errs)
		if m == nil {
			t.Fatalf("no fire count in %q", errs)
		}
		return m[1]
	}
	if n := fires(); n != "0" {
		t.Errorf("Fern in its own light: %s fires; want 0", n)
	}
	if n := fires("--light", "300"); n == "0" {
		t.Errorf("Fern at 300 W/m²: no fire")
	}
}
