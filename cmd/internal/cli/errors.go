package cli

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"strings"
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

// Report prints err as one line on w and returns the exit code it stands for (0 for nil
// and for -h). The line starts "PROGRAM NAME: " once: a message that starts with the
// command's name already (a package's own prefix, "analyze: ...") does not repeat it.
func Report(w io.Writer, name string, err error) int {
	if err == nil {
		return ExitOK
	}
	code := ExitCode(err)
	if code == ExitOK { // -h / --help
		return ExitOK
	}
	msg := err.Error()
	for strings.HasPrefix(msg, name+": ") {
		msg = msg[len(name)+2:]
	}
	fmt.Fprintf(w, "%s %s: %s\n", Program, name, msg)
	return code
}

// UnknownCommand is the usage error for a command name that is not one of names, with
// the nearest one when there is a close one.
func UnknownCommand(name string, names []string) error {
	if strings.HasPrefix(name, "-") {
		return UsageErrorf("%s before a command: flags go after it (run \"%s help\")", name, Program)
	}
	if s := Suggest(name, names); s != "" {
		return UsageErrorf("unknown command %q; did you mean %q? (run \"%s help\")", name, s, Program)
	}
	return UsageErrorf("unknown command %q (run \"%s help\")", name, Program)
}
