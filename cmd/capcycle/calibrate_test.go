package main

import (
	"math"
	"strings"
	"testing"

	"capcycle/firmware-protocol/wire"
)

func TestCalibrateOnePoint(t *testing.T) {
	b := newRecBoard(t, 1)
	// The board reads 2048 of 4096 counts at 5 V with divider 1: 2.5 V raw. The
	// multimeter says 2.55 V, so the gain is 2.55/2.5 = 1.02.
	code, out, errs := runCmd(t, "calibrate", "--port", b.path, "--yes", "--samples", "5", "2.55")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var cal *wire.CmdCal
	saved := false
	for _, f := range b.commands() {
		switch c := f.(type) {
		case wire.CmdCal:
			cal = &c
		case wire.CmdSave:
			saved = cal != nil
		}
	}
	if cal == nil || !saved {
		t.Fatalf("commands %v; output %s", b.commands(), out)
	}
	if math.Abs(cal.Gain.Float64()-1.02) > 1e-6 || cal.OffUV != 0 || cal.Ch != 0 {
		t.Errorf("cal %+v, want gain 1.02 offset 0", cal)
	}
	if !strings.Contains(out, "raw_v=2.50000") {
		t.Errorf("output %s", out)
	}
	if !strings.Contains(errs, "Safety") {
		t.Errorf("no safety note on stderr")
	}
}

func TestCalibrateTwoPoints(t *testing.T) {
	b := newRecBoard(t, 1)
	// Both readings see 2048 counts (the test board does not change), so the two points
	// cannot give a line: the command must refuse rather than invent one.
	code, _, errs := runCmd(t, "calibrate", "--port", b.path, "--yes", "--samples", "3", "1.0", "4.0")
	if code != exitWork || !strings.Contains(errs, "too close") {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, f := range b.commands() {
		if _, ok := f.(wire.CmdSave); ok {
			t.Fatal("a failed calibration was saved")
		}
	}
}

func TestCalibrateUsage(t *testing.T) {
	for _, args := range [][]string{{}, {"1", "2", "3"}, {"minus"}, {"-1"}} {
		if code, _, _ := runCmd(t, append([]string{"calibrate", "--port", "/dev/null"}, args...)...); code != exitUsage {
			t.Errorf("%v: exit %d", args, code)
		}
	}
}

func TestCalibrateDryRunWithProfile(t *testing.T) {
	b := newRecBoard(t, 1)
	// The board divides by 1; the profile's divider is 1:2, so 2048 counts at 5 V are
	// 2.5 V at the pin and 5 V at the node. A meter reading of 5.10 V gives gain 1.02.
	code, out, errs := runCmd(t, "calibrate", "--port", b.path, "--yes", "--dry-run", "--samples", "3",
		"--profile", "../../analyze/model/scenarios/wren.toml", "5.10")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !strings.Contains(out, "raw_v=5.00000") || !strings.Contains(out, "gain=1.02 ") || !strings.Contains(out, "divider=0.5 ") {
		t.Errorf("output:\n%s", out)
	}
	for _, f := range b.commands() {
		if _, ok := f.(wire.CmdCal); ok {
			t.Error("a dry run sent >cal")
		}
	}
}
