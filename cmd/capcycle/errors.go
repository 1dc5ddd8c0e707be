package main

import "capcycle/cmd/internal/cli"

// Exit codes and the errors that carry them: see package cli. The short names keep the
// subcommands readable.
const (
	exitOK    = cli.ExitOK
	exitWork  = cli.ExitWork  // the work failed (a port vanished, a disk filled up)
	exitUsage = cli.ExitUsage // bad usage or bad input
)

type exitError = cli.ExitError

var (
	usageErrorf = cli.UsageErrorf // bad flags or arguments (exit 2)
	inputError  = cli.InputError  // bad input, such as a malformed file (exit 2)
	workErrorf  = cli.WorkErrorf  // the work itself failed (exit 1)
	exitCode    = cli.ExitCode
)
