package main

import (
	"fmt"
	"io"

	"capcycle/logger/capture"
)

// printReaderNotes writes to w what the capture reader read past without stopping: each
// warning (file:line and what was expected; nothing in a warned-about line was used as
// data) and the time origin it subtracted from time stamps far from zero.
func printReaderNotes(w io.Writer, r *capture.Reader) {
	for _, pe := range r.Warnings() {
		fmt.Fprintf(w, "warning: %v\n", pe)
	}
	if n := r.WarningCount() - len(r.Warnings()); n > 0 {
		fmt.Fprintf(w, "warning: %d more warnings in %s not shown\n", n, r.Name)
	}
	if o := r.OriginS(); o != 0 {
		fmt.Fprintf(w, "note: %s: the time stamps start far from zero; times are counted from an origin of %.17g s (the first time stamp's whole part)\n", r.Name, o)
	}
}
