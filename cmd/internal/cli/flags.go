// Package cli is the command line's plumbing that is not capcycle's own business: flags
// parsed the same way by every subcommand (before, between or after the arguments, with
// a did-you-mean for a misspelt one), the help they print, and the errors that carry an
// exit code (0 ok, 1 the work failed, 2 bad usage or bad input).
package cli

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"reflect"
	"regexp"
	"strconv"
	"strings"
)

// Program is the command's name in help and hints.
var Program = "capcycle"

// Every subcommand parses its arguments the same way:
//
//   - Flags are written --name (the help prints them so); -name works too, as does
//     --name=value. A flag may come before, between or after the positional arguments:
//     "capcycle analyze --profile wren.toml wren.csv" and "capcycle analyze wren.csv
//     --profile wren.toml" are the same command.
//   - A flag that takes a value takes the next argument whatever it looks like
//     ("--scale -1"); a boolean flag takes none ("--json wren.csv" leaves wren.csv an
//     argument) unless written --json=false.
//   - "--" ends the flags: everything after it is an argument, even "-x".
//   - A lone "-" and a negative number are arguments, not flags.
//   - An unknown flag is one line naming the flag, the nearest known one when there is a
//     close one ("did you mean --profile?"), and where the help is. -h prints the help.
//   - --out, with -o as its short form, names the file or directory a command writes.

// NewFlags makes a subcommand's flag set. usage is the synopsis after "PROGRAM NAME";
// examples are whole command lines. -h prints the synopsis, every flag as --name with its
// default (flag help strings name the unit), and the examples.
func NewFlags(name, usage string, w io.Writer, examples ...string) *flag.FlagSet {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	fs.SetOutput(w)
	fs.Usage = func() { printUsage(w, fs, usage, examples) }
	return fs
}

// OutVar defines --out and its short form -o on p: the one name every command uses for
// the file or directory it writes.
func OutVar(fs *flag.FlagSet, p *string, def, usage string) {
	fs.StringVar(p, "out", def, usage)
	fs.StringVar(p, "o", def, "short for --out")
}

// OutFlag is OutVar on a new variable.
func OutFlag(fs *flag.FlagSet, def, usage string) *string {
	p := new(string)
	OutVar(fs, p, def, usage)
	return p
}

// Parse parses args, flags and positional arguments in any order, and leaves the
// positional arguments, in order, in fs.Args(). A flag error is a usage error (exit 2)
// of one line; -h returns flag.ErrHelp, which exits 0 after the help text.
func Parse(fs *flag.FlagSet, args []string) error {
	flags, positional, err := splitArgs(fs, args)
	if err != nil {
		return err
	}
	usage, out := fs.Usage, fs.Output()
	fs.Usage = func() {}
	fs.SetOutput(io.Discard)
	err = fs.Parse(append(append(flags, "--"), positional...))
	fs.Usage = usage
	fs.SetOutput(out)
	if errors.Is(err, flag.ErrHelp) {
		usage()
		return flag.ErrHelp
	}
	if err != nil {
		return UsageErrorf("%s (%s)", flagMessage(err), helpHint(fs))
	}
	return nil
}

// splitArgs sorts args into flags (each with its value when it takes one) and positional
// arguments, keeping the order within each.
func splitArgs(fs *flag.FlagSet, args []string) (flags, positional []string, err error) {
	for i := 0; i < len(args); i++ {
		a := args[i]
		if a == "--" {
			return flags, append(positional, args[i+1:]...), nil
		}
		if !looksLikeFlag(a) {
			positional = append(positional, a)
			continue
		}
		name, _, hasValue := strings.Cut(strings.TrimPrefix(a[1:], "-"), "=")
		fl := fs.Lookup(name)
		if fl == nil {
			if name == "h" || name == "help" {
				flags = append(flags, a) // the flag package answers with the help
				continue
			}
			return nil, nil, unknownFlag(fs, name)
		}
		flags = append(flags, a)
		if hasValue || isBoolFlag(fl) {
			continue
		}
		if i+1 == len(args) {
			return nil, nil, UsageErrorf("--%s needs a value: %s (%s)", fl.Name, fl.Usage, helpHint(fs))
		}
		i++
		flags = append(flags, args[i])
	}
	return flags, positional, nil
}

// looksLikeFlag reports whether a is written as a flag: a dash and more, not a number.
func looksLikeFlag(a string) bool {
	if len(a) < 2 || a[0] != '-' {
		return false
	}
	_, err := strconv.ParseFloat(a, 64)
	return err != nil
}

func isBoolFlag(fl *flag.Flag) bool {
	b, ok := fl.Value.(interface{ IsBoolFlag() bool })
	return ok && b.IsBoolFlag()
}

// unknownFlag is the error for a flag fs does not define, with the nearest known name.
func unknownFlag(fs *flag.FlagSet, name string) error {
	var names []string
	fs.VisitAll(func(fl *flag.Flag) { names = append(names, fl.Name) })
	if s := Suggest(name, names); s != "" {
		return UsageErrorf("unknown flag --%s; did you mean --%s? (%s)", name, s, helpHint(fs))
	}
	return UsageErrorf("unknown flag --%s (%s)", name, helpHint(fs))
}

func helpHint(fs *flag.FlagSet) string {
	return fmt.Sprintf("run \"%s %s -h\" for its flags", Program, fs.Name())
}

var (
	reInvalidValue = regexp.MustCompile(`^invalid (?:boolean )?value (".*") for (?:flag )?-([^:]+): (.*)$`)
	reNeedsArg     = regexp.MustCompile(`^flag needs an argument: -(.*)$`)
)

// flagMessage rewrites the flag package's error in the help's terms: --name and what was
// wrong with the value.
func flagMessage(err error) string {
	msg := strings.TrimSpace(err.Error())
	if m := reInvalidValue.FindStringSubmatch(msg); m != nil {
		why := m[3]
		switch why {
		case "parse error":
			why = "not a number"
		case "value out of range":
			why = "out of range"
		}
		return fmt.Sprintf("--%s %s: %s", m[2], m[1], why)
	}
	if m := reNeedsArg.FindStringSubmatch(msg); m != nil {
		return fmt.Sprintf("--%s needs a value", m[1])
	}
	return msg
}

// printUsage writes the help of a flag set: the synopsis, every flag as --name (with its
// short form, if any, beside it) and its default once, then the examples.
func printUsage(w io.Writer, fs *flag.FlagSet, usage string, examples []string) {
	fmt.Fprintf(w, "usage: %s %s %s\n", Program, fs.Name(), usage)
	var all []*flag.Flag
	fs.VisitAll(func(fl *flag.Flag) { all = append(all, fl) })
	if len(all) > 0 {
		fmt.Fprintln(w, "\nflags:")
	}
	for _, fl := range all {
		if isShortForm(fl, all) {
			continue
		}
		fmt.Fprintf(w, "  %s", flagSyntax("--", fl))
		for _, s := range all {
			if s != fl && len(s.Name) == 1 && sameValue(s.Value, fl.Value) {
				fmt.Fprintf(w, ", %s", flagSyntax("-", s))
			}
		}
		_, text := flag.UnquoteUsage(fl)
		fmt.Fprintf(w, "\n        %s", strings.ReplaceAll(text, "\n", "\n        "))
		if typ, _ := flag.UnquoteUsage(fl); showDefault(fl) && typ == "string" {
			fmt.Fprintf(w, " (default %q)", fl.DefValue)
		} else if showDefault(fl) {
			fmt.Fprintf(w, " (default %s)", fl.DefValue)
		}
		fmt.Fprintln(w)
	}
	if len(examples) > 0 {
		fmt.Fprintln(w, "\nexamples:")
		for _, ex := range examples {
			fmt.Fprintf(w, "  %s\n", ex)
		}
	}
}

// flagSyntax is "--name TYPE", or "--name" for a boolean flag.
func flagSyntax(dashes string, fl *flag.Flag) string {
	if isBoolFlag(fl) {
		return dashes + fl.Name
	}
	typ, _ := flag.UnquoteUsage(fl)
	return dashes + fl.Name + " " + typ
}

// isShortForm reports whether fl is the one-letter form of a longer flag (both set the
// same variable).
func isShortForm(fl *flag.Flag, all []*flag.Flag) bool {
	if len(fl.Name) != 1 {
		return false
	}
	for _, o := range all {
		if len(o.Name) > 1 && sameValue(o.Value, fl.Value) {
			return true
		}
	}
	return false
}

// sameValue reports whether two flag values set the same variable.
func sameValue(a, b flag.Value) bool {
	ta := reflect.TypeOf(a)
	if ta != reflect.TypeOf(b) || !ta.Comparable() {
		return false
	}
	return a == b
}

// showDefault reports whether the help should print fl's default: not when it is a zero
// value (nothing given) and not when the help text already says what the default is.
func showDefault(fl *flag.Flag) bool {
	if strings.Contains(strings.ToLower(fl.Usage), "default") {
		return false
	}
	d := fl.DefValue
	if d == "" || d == "false" || d == "[]" {
		return false
	}
	num, _, _ := strings.Cut(d, " ")
	if v, err := strconv.ParseFloat(num, 64); err == nil && v == 0 {
		return false
	}
	return d != "0s"
}

// Suggest returns the candidate nearest to s, or "" when none is close: s is a prefix of
// exactly one candidate, or a candidate is at most two edits away (a swap of neighbours
// counts as one) and the edits are under a third of the longer name.
func Suggest(s string, candidates []string) string {
	var prefixed []string
	for _, c := range candidates {
		if len(s) >= 2 && strings.HasPrefix(c, s) {
			prefixed = append(prefixed, c)
		}
	}
	if len(prefixed) == 1 {
		return prefixed[0]
	}
	best, bestD := "", 3
	for _, c := range candidates {
		d := EditDistance(s, c)
		if d < bestD && 3*d <= max(len(s), len(c)) {
			best, bestD = c, d
		}
	}
	return best
}

// EditDistance is the optimal-string-alignment distance between a and b: insertions,
// deletions, substitutions and swaps of neighbouring letters, each costing one.
func EditDistance(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	prev2 := make([]int, len(rb)+1)
	prev := make([]int, len(rb)+1)
	cur := make([]int, len(rb)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(ra); i++ {
		cur[0] = i
		for j := 1; j <= len(rb); j++ {
			cost := 1
			if ra[i-1] == rb[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
			if i > 1 && j > 1 && ra[i-1] == rb[j-2] && ra[i-2] == rb[j-1] {
				cur[j] = min(cur[j], prev2[j-2]+1)
			}
		}
		prev2, prev, cur = prev, cur, prev2
	}
	return prev[len(rb)]
}

// PerInput is a repeatable flag that gives one value for every input, or one per
// input in the order of the inputs ("report a.csv b.csv --profile a.toml --profile
// b.toml").
type PerInput struct {
	Name string // the flag's name, for the error
	vals []string
}

func (p *PerInput) String() string {
	if p == nil {
		return ""
	}
	return strings.Join(p.vals, " ")
}

func (p *PerInput) Set(s string) error { p.vals = append(p.vals, s); return nil }

// Check reports a usage error unless the flag was given never, once, or once per input.
func (p *PerInput) Check(inputs int) error {
	if n := len(p.vals); n > 1 && n != inputs {
		return UsageErrorf("--%s given %d times for %d inputs: give it once for all of them, or once for each, in order", p.Name, n, inputs)
	}
	return nil
}

// ForInput is the value for input i: its own, the one for all, or "" when none was given.
func (p *PerInput) ForInput(i int) string {
	switch {
	case len(p.vals) == 0:
		return ""
	case len(p.vals) == 1:
		return p.vals[0]
	case i < len(p.vals):
		return p.vals[i]
	}
	return ""
}

// IsSet reports whether the flag name was given on the command line.
func IsSet(fs *flag.FlagSet, name string) bool {
	set := false
	fs.Visit(func(fl *flag.Flag) { set = set || fl.Name == name })
	return set
}
