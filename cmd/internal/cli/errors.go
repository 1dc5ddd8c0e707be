package cli

import (
	"errors"
	"flag"
	"fmt"
)

// Exit codes shared by every subcommand.
const (
	ExitOK    = 0
	ExitWork  = 1 // the work failed (a port vanished, a disk filled up)
	ExitUsage = 2 // bad usage or bad input
)

// ExitError attaches an exit code to an error.
type ExitError struct {
	Code int // ExitWork or ExitUsage
	Err  error
}

func (e *ExitError) Error() string { return e.Err.Error() }
func (e *ExitError) Unwrap() error { return e.Err }

// UsageErrorf reports bad flags or arguments (exit 2).
func UsageErrorf(format string, a ...any) error {
	return &ExitError{ExitUsage, fmt.Errorf(format, a...)}
}

// InputError marks err as bad input, such as a malformed file (exit 2).
func InputError(err error) error {
	if err == nil {
		return nil
	}
	return &ExitError{ExitUsage, err}
}

// WorkErrorf reports a failure of the work itself (exit 1).
func WorkErrorf(format string, a ...any) error {
	return &ExitError{ExitWork, fmt.Errorf(format, a...)}
}

// ExitCode maps an error to the process exit code. Errors without a code are work failures.
func ExitCode(err error) int {
	if err == nil || errors.Is(err, flag.ErrHelp) {
		return ExitOK
	}
	var ee *ExitError
	if errors.As(err, &ee) {
		return ee.Code
	}
	return ExitWork
}
