//go:build unix

package virtualboard

import (
	"errors"
	"fmt"
	"io"
	"os"
	"sync"
	"sync/atomic"
	"syscall"
	"time"

	"github.com/creack/pty"
	"golang.org/x/sys/unix"
	"golang.org/x/term"
)

// port is one pseudo-terminal pair: the board holds the master, the host opens the
// slave by its path. The board does not keep the slave open, so it can tell whether
// a host has the port open: with no slave open, reading the master fails with EIO.
type port struct {
	master  *os.File
	path    string
	present atomic.Bool // a host has the slave open
	done    chan struct{}
	once    sync.Once
}

func openPort() (*port, error) {
	m, s, err := pty.Open()
	if err != nil {
		return nil, fmt.Errorf("virtualboard: open pseudo-terminal: %w", err)
	}
	defer m.Close()
	// Raw mode, so the line discipline neither echoes nor rewrites bytes before a
	// host sets its own mode; the setting lives with the terminal, not the descriptor.
	if _, err := term.MakeRaw(int(s.Fd())); err != nil {
		s.Close()
		return nil, fmt.Errorf("virtualboard: raw mode: %w", err)
	}
	path := s.Name()
	s.Close()
	// A non-blocking duplicate of the master goes into Go's poller, so reads and
	// writes take deadlines and Close interrupts them.
	fd, err := unix.Dup(int(m.Fd()))
	if err != nil {
		return nil, fmt.Errorf("virtualboard: dup master: %w", err)
	}
	if err := unix.SetNonblock(fd, true); err != nil {
		unix.Close(fd)
		return nil, fmt.Errorf("virtualboard: non-blocking master: %w", err)
	}
	return &port{master: os.NewFile(uintptr(fd), "/dev/ptmx"), path: path, done: make(chan struct{})}, nil
}

// close ends the pair: the host's open port fails, and the path goes away.
func (p *port) close() {
	p.once.Do(func() {
		close(p.done)
		p.master.Close()
	})
}

// sleep waits d or until the port closes; it reports whether the port is still open.
func (p *port) sleep(d time.Duration) bool {
	select {
	case <-p.done:
		return false
	case <-time.After(d):
		return true
	}
}

// Read reads what the host sent, tracking whether a host is there. It returns io.EOF
// once the port is closed.
func (p *port) Read(b []byte) (int, error) {
	for {
		if err := p.master.SetReadDeadline(time.Now().Add(20 * time.Millisecond)); err != nil {
			return 0, io.EOF
		}
		n, err := p.master.Read(b)
		switch {
		case n > 0:
			p.present.Store(true)
			return n, nil
		case errors.Is(err, os.ErrDeadlineExceeded):
			p.present.Store(true)
		case errors.Is(err, syscall.EIO):
			p.present.Store(false)
			if !p.sleep(pollInterval) {
				return 0, io.EOF
			}
		case errors.Is(err, os.ErrClosed):
			return 0, io.EOF
		case err != nil:
			return 0, fmt.Errorf("virtualboard: read pseudo-terminal: %w", err)
		}
	}
}

// write writes b to the host. If the host stops reading, the write waits; if wait
// is false and the host is gone, the rest is dropped. It reports the bytes written.
func (p *port) write(b []byte, wait bool) int {
	written := 0
	for len(b) > 0 {
		if !p.present.Load() && !wait {
			return written
		}
		if err := p.master.SetWriteDeadline(time.Now().Add(50 * time.Millisecond)); err != nil {
			return written
		}
		n, err := p.master.Write(b)
		written += n
		b = b[n:]
		switch {
		case err == nil, errors.Is(err, os.ErrDeadlineExceeded):
		case errors.Is(err, syscall.EIO), errors.Is(err, syscall.EAGAIN):
			if !p.sleep(pollInterval) {
				return written
			}
		default:
			return written
		}
	}
	return written
}
