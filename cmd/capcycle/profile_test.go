package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// runCmd runs capcycle in-process and returns the exit code, stdout and stderr.
func runCmd(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(context.Background(), args, &env{stdin: strings.NewReader(""), stdout: &out, stderr: &errb})
	return code, out.String(), errb.String()
}

func TestProfileCheckWren(t *testing.T) {
	code, out, errs := runCmd(t, "profile", "check", "../../analyze/model/scenarios/wren.toml")
	if code != 0 {
		t.Fatalf("exit %d, stderr %q", code, errs)
	}
	for _, want := range []string{
		"Wren is a valid profile",
		"ratio 0.5 ",
		"1.35 µA at 2.70 V",        // 2.7 V / 2 MΩ
		"11.1 mJ",                  // ½ · 4.7 mF · (2.7² − 1.6²)
		"296 µA at 6.30 V",         // 0.01 · 4700 · 6.3 µA
		"hold time         110 ms", // 2.2 µF · 50 mV / 1 µA
		"9.77 mV per count",        // 5 V / 1024 / 0.5
	} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
}

func TestProfileCheckFern(t *testing.T) {
	code, out, _ := runCmd(t, "profile", "check", "../../analyze/model/scenarios/fern.toml")
	if code != 0 || !strings.Contains(out, "supercapacitor 470 mF") || !strings.Contains(out, "leakage limit     not known") {
		t.Fatalf("exit %d:\n%s", code, out)
	}
}

func TestProfileCheckBad(t *testing.T) {
	dir := t.TempDir()
	base, err := os.ReadFile("../../analyze/model/scenarios/wren.toml")
	if err != nil {
		t.Fatal(err)
	}
	bad := strings.Replace(string(base), "off_v = 1.6 ", "off_v = 2.9 ", 1)
	path := filepath.Join(dir, "bad.toml")
	if err := os.WriteFile(path, []byte(bad), 0o644); err != nil {
		t.Fatal(err)
	}
	code, out, errs := runCmd(t, "profile", "check", path)
	if code != exitUsage || out != "" {
		t.Fatalf("exit %d, stdout %q", code, out)
	}
	// One line: the command, then file:line: key: what was expected.
	want := regexp.MustCompile(`^capcycle profile: ` + regexp.QuoteMeta(path) + `:21: trigger\.off_v: off_v 2\.90 V must be below on_v 2\.70 V\n$`)
	if !want.MatchString(errs) {
		t.Errorf("stderr %q", errs)
	}

	code, _, errs = runCmd(t, "profile", "check", filepath.Join(dir, "absent.toml"))
	if code != exitUsage || !strings.Contains(errs, "absent.toml") || strings.Count(errs, "\n") != 1 {
		t.Errorf("missing file: exit %d, stderr %q", code, errs)
	}
	if code, _, _ := runCmd(t, "profile", "check"); code != exitUsage {
		t.Errorf("no file: exit %d", code)
	}
}

func TestProfileInit(t *testing.T) {
	for _, kind := range []string{"voltage", "timer", "plateau"} {
		code, out, errs := runCmd(t, "profile", "init", "--kind", kind)
		if code != 0 || !strings.Contains(out, `kind = "`+kind+`"`) {
			t.Fatalf("%s: exit %d, stderr %q", kind, code, errs)
		}
		// What init writes, check accepts.
		path := filepath.Join(t.TempDir(), kind+".toml")
		if code, _, errs := runCmd(t, "profile", "init", "--kind", kind, "-o", path); code != 0 {
			t.Fatalf("init -o: exit %d %q", code, errs)
		}
		if code, _, errs := runCmd(t, "profile", "check", path); code != 0 {
			t.Fatalf("check of the %s template: exit %d %q", kind, code, errs)
		}
	}
	if code, _, errs := runCmd(t, "profile", "init", "--kind", "sunset"); code != exitUsage || !strings.Contains(errs, "sunset") {
		t.Errorf("bad kind: exit %d %q", code, errs)
	}
}

func TestProfileInitNeverOverwrites(t *testing.T) {
	path := filepath.Join(t.TempDir(), "mine.toml")
	if err := os.WriteFile(path, []byte("# my notes\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, errs := runCmd(t, "profile", "init", "-o", path)
	if code != exitUsage || !strings.Contains(errs, "--force") {
		t.Fatalf("exit %d %q", code, errs)
	}
	if b, _ := os.ReadFile(path); string(b) != "# my notes\n" {
		t.Fatalf("file was changed: %q", b)
	}
	if code, _, errs := runCmd(t, "profile", "init", "--force", "-o", path); code != 0 {
		t.Fatalf("--force: exit %d %q", code, errs)
	}
	if b, _ := os.ReadFile(path); !strings.Contains(string(b), "[storage]") {
		t.Fatalf("--force did not write the template")
	}
}

func TestProfileHelp(t *testing.T) {
	code, _, errs := runCmd(t, "profile", "-h")
	if code != 0 || !strings.Contains(errs, "capcycle profile init") || !strings.Contains(errs, "examples:") {
		t.Errorf("profile -h: exit %d %q", code, errs)
	}
	code, _, errs = runCmd(t, "profile", "init", "-h")
	for _, want := range []string{"-kind", `(default "voltage")`, "-o", `(default "-")`, "-force", "examples:"} {
		if !strings.Contains(errs, want) {
			t.Errorf("profile init -h lacks %q:\n%s", want, errs)
		}
	}
	if code != 0 {
		t.Errorf("init -h exit %d", code)
	}
	if code, _, _ := runCmd(t, "profile", "frobnicate"); code != exitUsage {
		t.Errorf("unknown action: exit %d", code)
	}
}
