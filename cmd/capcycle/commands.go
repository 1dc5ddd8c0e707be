package main

import (
	"context"
	"fmt"
	"io"
	"text/tabwriter"
)

// command is one subcommand. run gets the arguments after the command name.
type command struct {
	name    string
	summary string
	built   bool
	run     func(ctx context.Context, args []string, e *env) error
}

// commands lists every subcommand in the order "capcycle help" shows them.
// Each one lives in its own file, named after it.
func commands() []*command {
	return []*command{
		demoCommand(),
		recordCommand(),
		portsCommand(),
		calibrateCommand(),
		analyzeCommand(),
		reportCommand(),
		simulateCommand(),
		robotCommand(),
		whatifCommand(),
		profileCommand(),
		versionCommand(),
	}
}

func lookup(name string) *command {
	for _, c := range commands() {
		if c.name == name {
			return c
		}
	}
	return nil
}

func printHelp(w io.Writer) {
	fmt.Fprintln(w, "capcycle: log, analyse, model and report small solar-engine circuits")
	fmt.Fprintln(w)
	fmt.Fprintln(w, "usage: capcycle COMMAND [flags] [args]")
	fmt.Fprintln(w)
	fmt.Fprintln(w, "commands:")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	for _, c := range commands() {
		s := c.summary
		if !c.built {
			s += " (not built yet)"
		}
		fmt.Fprintf(tw, "  %s\t%s\n", c.name, s)
	}
	tw.Flush()
	fmt.Fprintln(w)
	fmt.Fprintln(w, "Run \"capcycle COMMAND -h\" for a command's flags and examples.")
	fmt.Fprintln(w, "Exit codes: 0 ok, 1 the work failed, 2 bad usage or bad input.")
}

// notBuilt is the body of a subcommand that does not exist yet: it says so and fails.
func notBuilt(name string) func(context.Context, []string, *env) error {
	return func(context.Context, []string, *env) error {
		return workErrorf("%s is not built yet; nothing was done", name)
	}
}
