package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"capcycle/analyze/analysis"
)

// Every template "profile init" writes, and the plateau template with its other release
// (off_v instead of pulse_s, at or above half the cell's Voc, where an arming voltage
// taken as half of Voc would sit below the release), is simulated and the capture
// analysed with it: exit 0 and a prediction, never "the profile's circuit cannot be
// built".
func TestEveryTemplateAnalyses(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates and analyses a capture per template")
	}
	plateau := func(edit func(string) string) func(string) string { return edit }
	offV := func(v string) func(string) string {
		return plateau(func(s string) string {
			s = strings.Replace(s, "\npulse_s = \"80m\"", "\n# pulse_s = \"80m\"", 1)
			return strings.Replace(s, "\n# off_v = 1.6 ", "\noff_v = "+v+" ", 1)
		})
	}
	cases := []struct {
		name, kind string
		edit       func(string) string
	}{
		{"voltage", "voltage", nil},
		{"timer", "timer", nil},
		{"plateau", "plateau", nil},
		{"plateau released at off_v", "plateau", offV("1.6")},
		{"plateau released above half of Voc", "plateau", offV("2.3")},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			prof := filepath.Join(dir, "robot.toml")
			code, text, errs := runCmd(t, "profile", "init", "--kind", c.kind)
			if code != 0 {
				t.Fatalf("init: exit %d %q", code, errs)
			}
			if c.edit != nil {
				edited := c.edit(text)
				if edited == text {
					t.Fatal("the edit did not apply: the template changed")
				}
				text = edited
			}
			if err := os.WriteFile(prof, []byte(text), 0o644); err != nil {
				t.Fatal(err)
			}
			if code, _, errs := runCmd(t, "profile", "check", prof); code != 0 {
				t.Fatalf("check: exit %d %q", code, errs)
			}
			capPath := filepath.Join(dir, "run.csv")
			if code, _, errs := runCmd(t, "simulate", "--profile", prof, "--hours", "0.1", "--rate", "50", "-o", capPath); code != 0 {
				t.Fatalf("simulate: exit %d %q", code, errs)
			}
			code, out, errs := runCmd(t, "analyze", capPath, "--profile", prof, "--json")
			if code != 0 {
				t.Fatalf("analyze: exit %d %q", code, errs)
			}
			var res analysis.Result
			if err := json.Unmarshal([]byte(out), &res); err != nil {
				t.Fatal(err)
			}
			if res.Prediction == nil {
				t.Errorf("no prediction; notes %q", res.Notes)
			}
		})
	}
}
