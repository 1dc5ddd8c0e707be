package main

import (
	"errors"
	"flag"
	"fmt"
)

// Exit codes shared by every subcommand.
const (
	exitOK    = 0
	exitWork  = 1 // the work failed (a port vanished, a disk filled up)
	exitUsage = 2 // bad usage or bad input
)

// exitError attaches an exit code to an error.
type exitError struct {
	code int
	err  error
}

func (e *exitError) Error() string { return e.err.Error() }
func (e *exitError) Unwrap() error { return e.err }

// usageErrorf reports bad flags or arguments (exit 2).
func usageErrorf(format string, a ...any) error {
	return &exitError{exitUsage, fmt.Errorf(format, a...)}
}

// inputError marks err as bad input, such as a malformed file (exit 2).
func inputError(err error) error {
	if err == nil {
		return nil
	}
	return &exitError{exitUsage, err}
}

// workErrorf reports a failure of the work itself (exit 1).
func workErrorf(format string, a ...any) error {
	return &exitError{exitWork, fmt.Errorf(format, a...)}
}

// exitCode maps an error to the process exit code. Errors without a code are work failures.
func exitCode(err error) int {
	if err == nil || errors.Is(err, flag.ErrHelp) {
		return exitOK
	}
	var ee *exitError
	if errors.As(err, &ee) {
		return ee.code
	}
	return exitWork
}
