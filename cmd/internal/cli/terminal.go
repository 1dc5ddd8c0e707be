package cli

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"time"

	"golang.org/x/term"
)

// SameFile reports whether the paths a and b name the same file: the same existing file,
// or, when either does not exist, the same absolute path. An empty path is no file.
func SameFile(a, b string) bool {
	if a == "" || b == "" {
		return false
	}
	if sa, err := os.Stat(a); err == nil {
		if sb, err := os.Stat(b); err == nil {
			return os.SameFile(sa, sb)
		}
	}
	aa, err1 := filepath.Abs(a)
	ab, err2 := filepath.Abs(b)
	return err1 == nil && err2 == nil && aa == ab
}

// IsTerminal reports whether w is a terminal.
func IsTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	return ok && term.IsTerminal(int(f.Fd()))
}

// Progress draws a bar on a terminal, at most ten times a second.
type Progress struct {
	W     io.Writer // where the bar goes (a terminal)
	Total int64     // the bytes to read
	last  time.Time
}

// Update redraws the bar for the rows and bytes read so far.
func (p *Progress) Update(rows int, bytes int64) {
	if time.Since(p.last) < 100*time.Millisecond {
		return
	}
	p.last = time.Now()
	frac := float64(bytes) / float64(p.Total)
	frac = min(1, max(0, frac))
	n := int(frac * 30)
	fmt.Fprintf(p.W, "\r[%s%s] %3.0f %% %d rows", strings.Repeat("#", n), strings.Repeat(" ", 30-n), frac*100, rows)
}

// Done clears the bar.
func (p *Progress) Done() { fmt.Fprint(p.W, "\r\033[K") }
