//go:build !(linux || darwin || freebsd || openbsd || netbsd || dragonfly)

package logger

import "os"

// lockPort does nothing here: Windows opens a serial port exclusively for everyone, and
// the remaining systems have no flock in the standard library.
func lockPort(string) (*os.File, error) { return nil, nil }
