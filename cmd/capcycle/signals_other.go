//go:build !unix

package main

import (
	"os"
	"syscall"
)

// stopSignals end a command cleanly (a recording closes its file with its trailer):
// Ctrl-C and a polite kill. There is no hang-up signal here.
var stopSignals = []os.Signal{os.Interrupt, syscall.SIGTERM}
