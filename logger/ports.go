package logger

import (
	"fmt"
	"sort"
	"strings"
)

// PortInfo describes one serial port of the system.
type PortInfo struct {
	Path         string // e.g. /dev/ttyUSB0, COM3
	USB          bool   // a USB serial device
	VID, PID     string // USB vendor and product ids, 4 hex digits each; "" if not USB
	SerialNumber string // USB serial number; "" if unknown
	Product      string // USB product string; "" if unknown
	Manufacturer string // USB manufacturer string; "" if unknown
}

// VIDPID is "vvvv:pppp", or "" for a port that is not USB.
func (p PortInfo) VIDPID() string {
	if p.VID == "" && p.PID == "" {
		return ""
	}
	return strings.ToLower(p.VID) + ":" + strings.ToLower(p.PID)
}

// enumerate (the system's port list; tests may replace it) lives in ports_enum.go, or in
// ports_nocgo_darwin.go for macOS builds without cgo.

// Ports lists the serial ports of the system, USB ones first, then by path.
func Ports() ([]PortInfo, error) {
	list, err := enumerate()
	if err != nil {
		return nil, fmt.Errorf("logger: listing serial ports: %w", err)
	}
	out := make([]PortInfo, 0, len(list))
	for _, d := range list {
		out = append(out, PortInfo{Path: d.Name, USB: d.IsUSB, VID: d.VID, PID: d.PID,
			SerialNumber: d.SerialNumber, Product: d.Product, Manufacturer: d.Manufacturer})
	}
	sort.SliceStable(out, func(i, j int) bool {
		if out[i].USB != out[j].USB {
			return out[i].USB
		}
		return out[i].Path < out[j].Path
	})
	return out, nil
}
