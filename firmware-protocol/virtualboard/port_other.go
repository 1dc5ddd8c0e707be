//go:build !unix

package virtualboard

import (
	"errors"
	"sync/atomic"
	"time"
)

// port is a stub: pseudo-terminals need a unix system.
type port struct {
	path    string
	present atomic.Bool
	done    chan struct{}
}

func openPort() (*port, error) {
	return nil, errors.New("virtualboard: pseudo-terminals need a unix system")
}

func (p *port) close()                        {}
func (p *port) sleep(time.Duration) bool      { return false }
func (p *port) Read([]byte) (int, error)      { return 0, errors.New("virtualboard: no port") }
func (p *port) write(b []byte, wait bool) int { return 0 }
