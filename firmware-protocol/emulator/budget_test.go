package emulator_test

import (
	"os/exec"
	"path/filepath"
	"testing"

	"capcycle/firmware-protocol/emulator"
)

// TestFirmwareBudget runs the firmware Makefile's check-size target, which fails when
// flash reaches 8192 bytes or RAM (data + bss + noinit) 1024 bytes (PROTOCOL.md,
// "Firmware budget"), so plain `go test` enforces the budget too.
func TestFirmwareBudget(t *testing.T) {
	if skipMsg != "" {
		t.Skip("firmware toolchain unavailable: " + skipMsg)
	}
	if buildErr != nil {
		t.Fatalf("building the firmware: %v", buildErr)
	}
	src, err := emulator.SourceDir()
	if err != nil {
		t.Fatal(err)
	}
	out, err := exec.Command("make", "-s", "-C", filepath.Join(src, "firmware"),
		"BUILD="+filepath.Dir(bins.Firmware), "check-size").CombinedOutput()
	t.Logf("%s", out)
	if err != nil {
		t.Fatalf("firmware over budget: %v", err)
	}
}
