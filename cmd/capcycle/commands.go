package main

import (
	"capcycle/cmd/internal/cli"
	"context"
	"fmt"
	"io"
	"text/tabwriter"
)

// command is one subcommand. run gets the arguments after the command name.
type command struct {
	name    string
	summary string
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

// aliases are other spellings of command names that are accepted as they are.
var aliases = map[string]string{
	"analyse": "analyze",
}

func lookup(name string) *command {
	if a, ok := aliases[name]; ok {
		name = a
	}
	for _, c := range commands() {
		if c.name == name {
			return c
		}
	}
	return nil
}

// find is lookup with an error for an unknown name, suggesting the nearest command.
func find(name string) (*command, error) {
	if c := lookup(name); c != nil {
		return c, nil
	}
	var names []string
	for _, c := range commands() {
		names = append(names, c.name)
	}
	return nil, cli.UnknownCommand(name, names)
}

func printHelp(w io.Writer) {
	fmt.Fprintln(w, "capcycle: log, analyse, model and report small solar-engine circuits")
	fmt.Fprintln(w)
	fmt.Fprintln(w, "usage: capcycle COMMAND [flags] [args]")
	fmt.Fprintln(w)
	fmt.Fprintln(w, "commands:")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	for _, c := range commands() {
		fmt.Fprintf(tw, "  %s\t%s\n", c.name, c.summary)
	}
	tw.Flush()
	fmt.Fprintln(w)
	fmt.Fprintln(w, "Run \"capcycle COMMAND -h\" for a command's flags and examples; flags may come")
	fmt.Fprintln(w, "before or after the arguments. \"capcycle --version\" prints the version.")
	fmt.Fprintln(w, "Exit codes: 0 ok, 1 the work failed, 2 bad usage or bad input.")
}
