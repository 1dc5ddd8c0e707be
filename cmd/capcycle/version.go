package main

import (
	"context"
	"fmt"
	"runtime"
	"runtime/debug"
)

// version is the release; builds from a checkout add the VCS revision from build info.
const version = "0.1.0-dev"

func versionCommand() *command {
	return &command{
		name:    "version",
		summary: "print the version of capcycle and of the Go toolchain that built it",
		run: func(ctx context.Context, args []string, e *env) error {
			fs := newFlags("version", "", e.stderr, "capcycle version")
			if err := parseFlags(fs, args); err != nil {
				return err
			}
			if fs.NArg() > 0 {
				return usageErrorf("takes no arguments, got %q", fs.Arg(0))
			}
			rev := ""
			if bi, ok := debug.ReadBuildInfo(); ok {
				for _, s := range bi.Settings {
					if s.Key == "vcs.revision" && len(s.Value) >= 12 {
						rev = " (" + s.Value[:12] + ")"
					}
				}
			}
			fmt.Fprintf(e.stdout, "capcycle %s%s %s %s/%s\n", version, rev, runtime.Version(), runtime.GOOS, runtime.GOARCH)
			return nil
		},
	}
}
