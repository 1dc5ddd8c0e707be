//go:build linux || darwin || freebsd || openbsd || netbsd || dragonfly

package logger

import (
	"bufio"
	"errors"
	"fmt"
	"os"
	"strconv"
	"strings"
	"syscall"
)

// lockPort takes an exclusive advisory lock (flock) on the device at path, through a
// descriptor of its own that the returned file holds; closing it (or the process ending,
// even by kill -9) releases the lock. The serial library's exclusive open (TIOCEXCL)
// does not hold against root; the lock does, since every recorder asks for it. A port
// already locked gives a *LockedError with the holder's process id when the system
// tells it. Systems where the device cannot be locked record without the lock.
func lockPort(path string) (*os.File, error) {
	f, err := os.OpenFile(path, os.O_RDONLY|syscall.O_NOCTTY|syscall.O_NONBLOCK, 0)
	if err != nil {
		return nil, nil // the serial library's own open reports what is wrong
	}
	err = syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB)
	if err == nil {
		return f, nil
	}
	if errors.Is(err, syscall.EWOULDBLOCK) {
		pid := lockHolder(f)
		f.Close()
		return nil, &LockedError{Pid: pid}
	}
	f.Close()
	return nil, nil
}

// lockHolder finds the process that holds a flock on f's file in /proc/locks (Linux);
// 0 when it cannot tell.
func lockHolder(f *os.File) int {
	fi, err := f.Stat()
	if err != nil {
		return 0
	}
	st, ok := fi.Sys().(*syscall.Stat_t)
	if !ok {
		return 0
	}
	dev := uint64(st.Dev)
	// The kernel prints the device as major:minor in hex and the inode in decimal
	// (fs/locks.c, lock_get_status), with the usual Linux split of dev_t.
	major := (dev>>8)&0xfff | (dev>>32)&^0xfff
	minor := dev&0xff | (dev>>12)&^0xff
	id := fmt.Sprintf("%02x:%02x:%d", major, minor, uint64(st.Ino))
	pl, err := os.Open("/proc/locks")
	if err != nil {
		return 0
	}
	defer pl.Close()
	sc := bufio.NewScanner(pl)
	for sc.Scan() {
		// "1: FLOCK  ADVISORY  WRITE 1234 00:05:87 0 EOF"; waiters have "->" after the number.
		w := strings.Fields(sc.Text())
		if len(w) < 6 || w[1] != "FLOCK" || w[5] != id {
			continue
		}
		if pid, err := strconv.Atoi(w[4]); err == nil {
			return pid
		}
	}
	return 0
}
