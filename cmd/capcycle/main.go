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
	"capcycle/cmd/internal/cli"
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
	switch name {
	case "help", "-h", "--help", "-help":
		if len(args) > 1 {
			c, err := find(args[1])
			if err != nil {
				fmt.Fprintf(e.stderr, "capcycle: %v\n", err)
				return exitUsage
			}
			return report(e, c.name, c.run(ctx, []string{"-h"}, e))
		}
		printHelp(e.stdout)
		return exitOK
	case "--version", "-version":
		name, args = "version", args[:1]
	}
	c, err := find(name)
	if err != nil {
		fmt.Fprintf(e.stderr, "capcycle: %v\n", err)
		return exitUsage
	}
	return report(e, c.name, c.run(ctx, args[1:], e))
}

// report prints err as one line on stderr and returns the exit code it stands for
// (cli.Report).
func report(e *env, name string, err error) int { return cli.Report(e.stderr, name, err) }
