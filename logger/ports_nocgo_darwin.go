//go:build darwin && !cgo

package logger

import "go.bug.st/serial"

// On macOS, go.bug.st/serial/enumerator reads USB details through IOKit with cgo and does
// not build without it. A cgo-free build (the cross-built release) lists port paths only:
// no USB ids, serial numbers or product strings.

// portDetails mirrors the fields of enumerator.PortDetails that Ports uses.
type portDetails struct {
	Name         string
	IsUSB        bool
	VID, PID     string
	SerialNumber string
	Product      string
	Manufacturer string
}

// enumerate is the system's port list; tests replace it.
var enumerate = func() ([]*portDetails, error) {
	names, err := serial.GetPortsList()
	if err != nil {
		return nil, err
	}
	out := make([]*portDetails, len(names))
	for i, n := range names {
		out[i] = &portDetails{Name: n}
	}
	return out, nil
}
