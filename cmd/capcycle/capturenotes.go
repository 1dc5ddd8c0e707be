package main

import (
	"capcycle/analyze/analysis"
	"fmt"
	"io"
)

// printReaderNotes writes to w what the capture reader read past without stopping: each
// warning (file:line and what was expected; nothing in a warned-about line was used as
// data) and the time origin it subtracted from time stamps far from zero.
func printReaderNotes(w io.Writer, s *analysis.Source) {
	for _, pe := range s.Warnings {
		fmt.Fprintf(w, "warning: %s\n", pe)
	}
	if n := s.WarningCount - len(s.Warnings); n > 0 {
		fmt.Fprintf(w, "warning: %d more warnings in %s not shown\n", n, s.Path)
	}
	if o := s.OriginS; o != 0 {
		fmt.Fprintf(w, "note: %s: the time stamps start far from zero; times are counted from an origin of %.17g s (the first time stamp's whole part)\n", s.Path, o)
	}
}
