//go:build !darwin || cgo

package logger

import "go.bug.st/serial/enumerator"

// portDetails is what the enumerator reports about one port.
type portDetails = enumerator.PortDetails

// enumerate is the system's port list; tests replace it.
var enumerate = func() ([]*portDetails, error) { return enumerator.GetDetailedPortsList() }
