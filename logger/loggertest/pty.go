package loggertest

import (
	"errors"
	"fmt"
	"os"

	"github.com/creack/pty"
	"golang.org/x/term"
)

// ErrNoPty is wrapped by OpenPty's error when the system gives no pseudo-terminal (none
// on Windows; none in some containers): tests skip on it.
var ErrNoPty = errors.New("loggertest: no pseudo-terminals here")

// OpenPty opens a pseudo-terminal pair for a test that plays a board on a real serial
// port: the host opens slave.Name() as it opens a USB board, the test reads and writes
// master. The slave is raw (no echo, no line editing, as a serial port). The master is
// non-blocking, so Go's poller runs it: Close ends a pending Read, and the host sees the
// hang-up at once, as with a pulled cable.
func OpenPty() (master, slave *os.File, err error) {
	m0, s, err := pty.Open()
	if err != nil {
		return nil, nil, fmt.Errorf("%w: %w", ErrNoPty, err)
	}
	if _, err := term.MakeRaw(int(s.Fd())); err != nil {
		m0.Close()
		s.Close()
		return nil, nil, fmt.Errorf("loggertest: raw mode on %s: %w", s.Name(), err)
	}
	m, err := nonblocking(m0)
	if err != nil {
		m0.Close()
		s.Close()
		return nil, nil, fmt.Errorf("loggertest: non-blocking pty master: %w", err)
	}
	return m, s, nil
}
