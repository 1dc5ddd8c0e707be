// Package loggertest is a fake serial port for tests of the logger and its callers: the
// test plays the board, feeding the bytes the port will read and looking at what the
// host wrote. A Port is safe for concurrent use; Close unblocks a pending Read.
//
//	p := loggertest.NewPort()
//	p.OnWrite = func(cmd []byte) { p.Feed(reply(cmd)) } // answer commands
//	p.Feed([]byte("!ID ...\n"))
//	... logger reads from p ...
//	p.Unplug() // the next Read fails as an unplugged device does
package loggertest

import (
	"errors"
	"io"
	"sync"
)

// ErrUnplugged is what Read returns after Unplug, once the fed bytes are read.
var ErrUnplugged = errors.New("loggertest: device unplugged")

// ErrClosed is what Read and Write return after Close.
var ErrClosed = errors.New("loggertest: port closed")

// Port is a scripted port. The zero value is not ready; use NewPort.
type Port struct {
	// OnWrite, if set, is called (without the Port's lock held) with each Write's bytes;
	// it may call Feed to answer.
	OnWrite func(p []byte)

	mu       sync.Mutex
	cond     *sync.Cond
	in       []byte // fed, not yet read
	out      []byte // written by the host
	unplug   bool
	closed   bool
	closes   int
	readErr  error
	maxChunk int
}

// NewPort returns an open, empty port.
func NewPort() *Port {
	p := &Port{}
	p.cond = sync.NewCond(&p.mu)
	return p
}

// Feed queues bytes for the host to read.
func (p *Port) Feed(b []byte) {
	p.mu.Lock()
	p.in = append(p.in, b...)
	p.mu.Unlock()
	p.cond.Broadcast()
}

// SetMaxRead makes each Read return at most n bytes (n <= 0: no limit), to exercise
// readers with short reads.
func (p *Port) SetMaxRead(n int) {
	p.mu.Lock()
	p.maxChunk = n
	p.mu.Unlock()
}

// Unplug makes Read fail with ErrUnplugged once the fed bytes are read, as a device
// that went away.
func (p *Port) Unplug() {
	p.mu.Lock()
	p.unplug = true
	p.mu.Unlock()
	p.cond.Broadcast()
}

// FailReads makes Read fail with err once the fed bytes are read.
func (p *Port) FailReads(err error) {
	p.mu.Lock()
	p.readErr = err
	p.mu.Unlock()
	p.cond.Broadcast()
}

// Read blocks until there are fed bytes, the port is unplugged or closed.
func (p *Port) Read(b []byte) (int, error) {
	if len(b) == 0 {
		return 0, nil
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	for len(p.in) == 0 && !p.closed && !p.unplug && p.readErr == nil {
		p.cond.Wait()
	}
	switch {
	case p.closed:
		return 0, ErrClosed
	case len(p.in) > 0:
		n := len(b)
		if p.maxChunk > 0 && n > p.maxChunk {
			n = p.maxChunk
		}
		n = copy(b[:n], p.in)
		p.in = p.in[n:]
		return n, nil
	case p.readErr != nil:
		return 0, p.readErr
	default:
		return 0, ErrUnplugged
	}
}

// Write records b as written by the host and calls OnWrite.
func (p *Port) Write(b []byte) (int, error) {
	p.mu.Lock()
	if p.closed {
		p.mu.Unlock()
		return 0, ErrClosed
	}
	p.out = append(p.out, b...)
	h := p.OnWrite
	p.mu.Unlock()
	if h != nil {
		h(append([]byte(nil), b...))
	}
	return len(b), nil
}

// Close closes the port and wakes a pending Read. A second Close does nothing.
func (p *Port) Close() error {
	p.mu.Lock()
	if !p.closed {
		p.closed = true
		p.closes++
	}
	p.mu.Unlock()
	p.cond.Broadcast()
	return nil
}

// Written returns a copy of everything the host wrote.
func (p *Port) Written() []byte {
	p.mu.Lock()
	defer p.mu.Unlock()
	return append([]byte(nil), p.out...)
}

// Closed reports whether Close was called.
func (p *Port) Closed() bool {
	p.mu.Lock()
	defer p.mu.Unlock()
	return p.closed
}

// Pending is the number of fed bytes not yet read.
func (p *Port) Pending() int {
	p.mu.Lock()
	defer p.mu.Unlock()
	return len(p.in)
}

var _ io.ReadWriteCloser = (*Port)(nil)
