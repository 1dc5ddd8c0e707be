package main

import "capcycle/cmd/internal/cli"

// Every subcommand parses its flags with package cli: --name before, between or after
// the arguments, --out (-o) for what it writes, one-line errors with a did-you-mean.
var (
	newFlags   = cli.NewFlags
	outVar     = cli.OutVar
	outFlag    = cli.OutFlag
	parseFlags = cli.Parse
	suggest    = cli.Suggest
)

type perInputFlag = cli.PerInput
