package main

import (
	"strings"
	"testing"

	"capcycle/logger"
)

func TestPortsList(t *testing.T) {
	old := listPorts
	defer func() { listPorts = old }()
	listPorts = func() ([]logger.PortInfo, error) {
		return []logger.PortInfo{
			{Path: "/dev/ttyUSB0", USB: true, VID: "1A86", PID: "7523", SerialNumber: "A1", Product: "USB serial"},
			{Path: "/dev/ttyS0"},
		}, nil
	}
	code, out, errs := runCmd(t, "ports")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, want := range []string{"PORT", "/dev/ttyUSB0  1a86:7523  A1      USB serial", "/dev/ttyS0    -"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
}
