//go:build !unix

package loggertest

import (
	"errors"
	"os"
)

// nonblocking is not reached where pty.Open fails, as it does off Unix.
func nonblocking(f *os.File) (*os.File, error) {
	return nil, errors.ErrUnsupported
}
