package main

import (
	"capcycle/analyze/whatif"
	"encoding/json"
	"math"
	"strings"
	"testing"
)

func whatifJSON(t *testing.T, args ...string) whatif.Report {
	t.Helper()
	code, out, errs := runCmd(t, append([]string{"whatif", "--json"}, args...)...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var a whatif.Report
	if err := json.Unmarshal([]byte(out), &a); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	return a
}

// Doubling the storage capacitor doubles the energy per pulse (E = ½C(Von² − Voff²)) when
// the trigger voltages stay; the period grows.
func TestWhatifDoubleCap(t *testing.T) {
	a := whatifJSON(t, "--profile", "../../testdata/profiles/wren.toml", "--light", "500", "--set", "cap=9400u")
	if !a.Base.Fires || a.Changed == nil || !a.Changed.Fires {
		t.Fatalf("answer %+v", a)
	}
	if *a.Changed.PeriodS <= *a.Base.PeriodS {
		t.Errorf("period %.3f s with twice the capacitance, %.3f s before", *a.Changed.PeriodS, *a.Base.PeriodS)
	}
	if a.LightWm2 != 500 || a.LightFrom != "--light" {
		t.Errorf("light %v from %q", a.LightWm2, a.LightFrom)
	}
}

func TestWhatifTargetProposesStandardValues(t *testing.T) {
	a := whatifJSON(t, "--profile", "../../testdata/profiles/wren.toml", "--light", "500", "--target", "period=60s", "--vary", "cap")
	if len(a.Proposals) < 2 || a.Proposals[0].Label != "exact" {
		t.Fatalf("proposals %+v", a.Proposals)
	}
	if p := a.Proposals[0].Figures.PeriodS; p == nil || math.Abs(*p-60) > 0.01 {
		t.Errorf("exact proposal's period %v", p)
	}
	for _, p := range a.Proposals[1:] {
		if !strings.HasPrefix(p.Label, "E6") {
			t.Errorf("proposal %q is not from the E6 series", p.Label)
		}
	}
}

func TestWhatifBadUsage(t *testing.T) {
	for _, args := range [][]string{
		{"whatif"},
		{"whatif", "--profile", "../../testdata/profiles/wren.toml", "--light", "500", "--set", "colour=red"},
		{"whatif", "--profile", "../../testdata/profiles/wren.toml", "--light", "500", "--target", "speed=3"},
		{"whatif", "--profile", "no-such.toml"},
	} {
		if code, _, errs := runCmd(t, args...); code != 2 || strings.Count(strings.TrimSpace(errs), "\n") > 0 && !strings.Contains(errs, "usage") {
			t.Errorf("%v: exit %d, stderr %q", args, code, errs)
		}
	}
}
