package main

import (
	"flag"
	"fmt"
	"io"
	"strings"
)

// newFlags makes a subcommand's flag set. usage is the synopsis after "capcycle NAME";
// examples are whole command lines. -h prints the synopsis, every flag with its default
// (flag help strings name the unit), and the examples.
func newFlags(name, usage string, w io.Writer, examples ...string) *flag.FlagSet {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	fs.SetOutput(w)
	fs.Usage = func() {
		fmt.Fprintf(w, "usage: capcycle %s %s\n", name, usage)
		var any bool
		fs.VisitAll(func(*flag.Flag) { any = true })
		if any {
			fmt.Fprintln(w, "\nflags:")
			fs.PrintDefaults()
		}
		if len(examples) > 0 {
			fmt.Fprintln(w, "\nexamples:")
			for _, ex := range examples {
				fmt.Fprintf(w, "  %s\n", ex)
			}
		}
	}
	return fs
}

// parseFlags parses args and turns a flag error into a usage error (exit 2).
// -h returns flag.ErrHelp, which exits 0 after the usage text.
func parseFlags(fs *flag.FlagSet, args []string) error {
	if err := fs.Parse(args); err != nil {
		if err == flag.ErrHelp {
			return err
		}
		return usageErrorf("%s", strings.TrimSpace(err.Error()))
	}
	return nil
}
