package logger

import (
	"errors"
	"fmt"
	"io"
	"os"
	"runtime"
	"sync"
	"syscall"
	"time"

	"go.bug.st/serial"
)

// Port is what the logger needs of a serial port: bytes in, bytes out, and a Close that
// unblocks a pending Read. The ports Open returns never answer a Read with (0, nil).
type Port interface {
	io.ReadWriteCloser
}

// Mode is how Open sets the port up. The zero value (or nil) means the defaults.
type Mode struct {
	BaudRate    int           // bits per second; default 115200 (8 data bits, no parity, 1 stop bit)
	ReadTimeout time.Duration // how long one read of the serial library waits; default 200 ms
	// NoDTR opens with DTR and RTS low. By default both go high on open, as the serial
	// library does; most boards reset on that edge and then send their identity.
	NoDTR bool
}

const (
	defaultBaud        = 115200
	defaultReadTimeout = 200 * time.Millisecond
)

// Opener opens a port by path; Open is the real one, tests substitute a fake.
type Opener func(path string, mode *Mode) (Port, error)

// PortError is a port that could not be opened or failed, with what to do about it.
type PortError struct {
	Path string
	Op   string // "open", "read", "write"
	Kind PortErrorKind
	Err  error
}

// PortErrorKind sorts port failures by what the user can do about them.
type PortErrorKind int

// Kinds of PortError.
const (
	PortFailed     PortErrorKind = iota // anything else
	PortBusy                            // another program has it open
	PortPermission                      // the user may not open it
	PortMissing                         // no such port (unplugged, or a wrong path)
	PortGone                            // it was open and went away (unplugged)
)

func (k PortErrorKind) String() string {
	switch k {
	case PortBusy:
		return "busy"
	case PortPermission:
		return "permission denied"
	case PortMissing:
		return "not found"
	case PortGone:
		return "gone"
	}
	return "failed"
}

func (e *PortError) Error() string {
	msg := fmt.Sprintf("logger: %s %s: %s", e.Op, e.Path, e.Kind)
	if e.Err != nil && e.Kind == PortFailed {
		msg += ": " + e.Err.Error()
	}
	if h := e.Hint(); h != "" {
		msg += " (" + h + ")"
	}
	return msg
}

func (e *PortError) Unwrap() error { return e.Err }

// LockedError is the Err of a busy PortError when another recorder (or calibrate, or a
// probe) holds the port's lock.
type LockedError struct {
	Pid int // the holder's process id; 0 when the system does not tell
}

func (e *LockedError) Error() string {
	if e.Pid > 0 {
		return fmt.Sprintf("locked by process %d", e.Pid)
	}
	return "locked by another process"
}

// Hint says what to try, for the kinds where there is something to try.
func (e *PortError) Hint() string {
	var le *LockedError
	switch {
	case errors.As(e.Err, &le) && le.Pid > 0:
		return fmt.Sprintf("process %d has it locked, most likely another capcycle recording from it: stop that one first (kill %d), or record from another port", le.Pid, le.Pid)
	case errors.As(e.Err, &le):
		return "another process has it locked, most likely another capcycle recording from it: stop that one first"
	}
	switch e.Kind {
	case PortBusy:
		return "another program has the port open: close serial monitors and other loggers"
	case PortPermission:
		return permissionHint()
	case PortMissing:
		return "check the cable, and run \"capcycle ports\" for the list"
	}
	return ""
}

func permissionHint() string {
	switch runtime.GOOS {
	case "linux":
		return "add yourself to the group that owns the port, usually dialout (uucp on some systems): sudo usermod -aG dialout $USER, then log in again"
	case "darwin", "freebsd", "openbsd", "netbsd":
		return "add yourself to the group that owns the port (dialer, uucp or wheel)"
	}
	return "check the port's permissions"
}

// Open opens a serial port with go.bug.st/serial and wraps it so that the library's
// read timeout (a Read that returns 0 bytes and no error) is retried inside Read instead
// of reaching the caller: bufio readers give up with io.ErrNoProgress after 100 empty
// reads, and a loop around Read would spin. Read returns only with data, or with an
// error once the port fails or is closed (a *PortError of kind PortGone when the device
// went away). Close unblocks a pending Read; a second Close does nothing.
//
// The port is locked for as long as it is open (an advisory flock on the device, which
// holds for root too, where the serial library's exclusive open does not): a second
// Open of it, in this process or another, fails with a busy *PortError whose Err is a
// *LockedError naming the holder's process id.
func Open(path string, mode *Mode) (Port, error) {
	m := Mode{}
	if mode != nil {
		m = *mode
	}
	if m.BaudRate == 0 {
		m.BaudRate = defaultBaud
	}
	if m.ReadTimeout <= 0 {
		m.ReadTimeout = defaultReadTimeout
	}
	sm := &serial.Mode{BaudRate: m.BaudRate, DataBits: 8, Parity: serial.NoParity, StopBits: serial.OneStopBit}
	if m.NoDTR {
		sm.InitialStatusBits = &serial.ModemOutputBits{}
	}
	lock, err := lockPort(path)
	if err != nil {
		return nil, &PortError{Path: path, Op: "open", Kind: PortBusy, Err: err}
	}
	p, err := serial.Open(path, sm)
	if err != nil {
		if lock != nil {
			lock.Close()
		}
		return nil, openError(path, err)
	}
	if err := p.SetReadTimeout(m.ReadTimeout); err != nil {
		p.Close()
		if lock != nil {
			lock.Close()
		}
		return nil, &PortError{Path: path, Op: "open", Err: err}
	}
	return &retryPort{p: p, path: path, timeout: m.ReadTimeout, lock: lock}, nil
}

func openError(path string, err error) error {
	kind := PortFailed
	var pe *serial.PortError
	switch {
	case errors.As(err, &pe) && pe.Code() == serial.PortBusy, errors.Is(err, syscall.EBUSY):
		kind = PortBusy
	case errors.As(err, &pe) && pe.Code() == serial.PermissionDenied, errors.Is(err, os.ErrPermission):
		kind = PortPermission
	case errors.As(err, &pe) && pe.Code() == serial.PortNotFound, errors.Is(err, os.ErrNotExist):
		kind = PortMissing
	}
	return &PortError{Path: path, Op: "open", Kind: kind, Err: err}
}

// retryPort turns the serial library's (0, nil) timeouts into a wait inside Read.
type retryPort struct {
	p       serial.Port
	path    string
	timeout time.Duration
	lock    *os.File // holds the port's lock; nil where there is none

	closeOnce sync.Once
	closeErr  error
}

// minWait is the least time an empty read takes: if the library returns (0, nil) sooner
// than half its timeout (a driver that does not wait), Read sleeps so that it never spins.
func (r *retryPort) minWait() time.Duration { return r.timeout / 2 }

func (r *retryPort) Read(b []byte) (int, error) {
	if len(b) == 0 {
		return 0, nil
	}
	for {
		start := time.Now()
		n, err := r.p.Read(b)
		if n > 0 || err != nil {
			if err != nil {
				return n, r.readError(err)
			}
			return n, nil
		}
		if d := time.Since(start); d < r.minWait() {
			time.Sleep(r.minWait() - d)
		}
	}
}

func (r *retryPort) readError(err error) error {
	var pe *serial.PortError
	if errors.As(err, &pe) && pe.Code() == serial.PortClosed || errors.Is(err, syscall.EIO) ||
		errors.Is(err, syscall.ENXIO) || errors.Is(err, syscall.ENODEV) {
		return &PortError{Path: r.path, Op: "read", Kind: PortGone, Err: err}
	}
	return &PortError{Path: r.path, Op: "read", Err: err}
}

func (r *retryPort) Write(b []byte) (int, error) {
	n, err := r.p.Write(b)
	if err != nil {
		return n, &PortError{Path: r.path, Op: "write", Kind: PortFailed, Err: err}
	}
	return n, nil
}

// Close closes the port, then releases its lock.
func (r *retryPort) Close() error {
	r.closeOnce.Do(func() {
		r.closeErr = r.p.Close()
		if r.lock != nil {
			r.lock.Close()
		}
	})
	return r.closeErr
}
