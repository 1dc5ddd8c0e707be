//go:build unix

package loggertest

import (
	"os"
	"syscall"
)

// nonblocking returns a non-blocking duplicate of f and closes f. (f.Fd() has put f in
// blocking mode for good; a new descriptor set non-blocking is run by the poller.) The
// duplicate is close-on-exec, so that a child process does not keep the board's side
// open and the host sees an unplug when the test closes it.
func nonblocking(f *os.File) (*os.File, error) {
	fd, err := syscall.Dup(int(f.Fd()))
	if err != nil {
		return nil, err
	}
	syscall.CloseOnExec(fd) // a child process must not keep the board's side open
	if err := syscall.SetNonblock(fd, true); err != nil {
		syscall.Close(fd)
		return nil, err
	}
	name := f.Name()
	f.Close()
	return os.NewFile(uintptr(fd), name), nil
}
