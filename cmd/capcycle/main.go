// Command capcycle measures small solar-powered "charge a capacitor, then dump it into a
// motor" circuits: it records the storage-capacitor voltage from a USB ADC board, finds
// every fire and reset, fits what the circuit really is, simulates it, compares measured
// cycles with predicted ones, diagnoses faults and writes a report.
//
// Usage:
//
//	capcycle COMMAND [flags] [args]
//
// Run "capcycle help" for the list of commands and "capcycle COMMAND -h" for one.
package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"os/signal"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), stopSignals...)
	code := run(ctx, os.Args[1:], &env{stdin: os.Stdin, stdout: os.Stdout, stderr: os.Stderr})
	stop()
	os.Exit(code)
}

// env is what a command may touch besides its arguments; tests give it buffers.
type env struct {
	stdin  io.Reader
	stdout io.Writer
	stderr io.Writer
}

// run dispatches args to a subcommand and turns its error into an exit code:
// 0 ok, 1 the work failed, 2 bad usage or bad input.
func run(ctx context.Context, args []string, e *env) int {
	if len(args) == 0 {
		printHelp(e.stderr)
		return exitUsage
	}
	name := args[0]
	if name == "help" || name == "-h" || name == "--help" || name == "-help" {
		if len(args) > 1 {
			if c := lookup(args[1]); c != nil {
				return report(e, c.name, c.run(ctx, []string{"-h"}, e))
			}
			fmt.Fprintf(e.stderr, "capcycle: unknown command %q (run \"capcycle help\")\n", args[1])
			return exitUsage
		}
		printHelp(e.stdout)
		return exitOK
	}
	c := lookup(name)
	if c == nil {
		fmt.Fprintf(e.stderr, "capcycle: unknown command %q (run \"capcycle help\")\n", name)
		return exitUsage
	}
	return report(e, c.name, c.run(ctx, args[1:], e))
}

// report prints err as one line on stderr and returns the exit code it stands for.
func report(e *env, name string, err error) int {
	if err == nil {
		return exitOK
	}
	code := exitCode(err)
	if code == exitOK { // -h / --help
		return exitOK
	}
	fmt.Fprintf(e.stderr, "capcycle %s: %v\n", name, err)
	return code
}
