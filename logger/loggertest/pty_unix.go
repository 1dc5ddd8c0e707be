//go:build unix

package loggertest

import (
	"os"
	"syscall"
)

// nonblocking returns a non-blocking duplicate of f and closes f. (f.Fd() has put f in
// blocking mode for good; a new descriptor set non-blocking is run by the poller.)
func nonblocking(f *os.File) (*os.File, error) {
	fd, err := syscall.Dup(int(f.Fd()))
	if err != nil {
		return nil, err
	}
	if err := syscall.SetNonblock(fd, true); err != nil {
		syscall.Close(fd)
		return nil, err
	}
	name := f.Name()
	f.Close()
	return os.NewFile(uintptr(fd), name), nil
}
