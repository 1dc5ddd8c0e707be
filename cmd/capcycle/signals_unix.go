//go:build unix

package main

import (
	"os"
	"syscall"
)

// stopSignals end a command cleanly (a recording closes its file with its trailer):
// Ctrl-C, a polite kill, and the hang-up a terminal sends when it goes away (a dropped
// remote login).
var stopSignals = []os.Signal{os.Interrupt, syscall.SIGTERM, syscall.SIGHUP}
