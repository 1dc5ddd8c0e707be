package logger

import (
	"context"
	"errors"
	"fmt"
	"sync/atomic"
	"time"
)

// ByteCounter counts bytes: as an io.Writer it counts what is written to it (a virtual
// board's tap of what it sent), and CountingOpen counts what a port reads into it.
type ByteCounter struct{ n atomic.Int64 }

// Write counts p and never fails.
func (c *ByteCounter) Write(p []byte) (int, error) {
	c.n.Add(int64(len(p)))
	return len(p), nil
}

// N is the bytes counted so far; safe from any goroutine.
func (c *ByteCounter) N() int64 { return c.n.Load() }

// CountingOpen opens ports as open does (Open when nil) and counts the bytes read from
// them into c.
func CountingOpen(open Opener, c *ByteCounter) Opener {
	if open == nil {
		open = Open
	}
	return func(path string, mode *Mode) (Port, error) {
		p, err := open(path, mode)
		if err != nil {
			return nil, err
		}
		return &countingPort{Port: p, c: c}, nil
	}
}

type countingPort struct {
	Port
	c *ByteCounter
}

func (p *countingPort) Read(b []byte) (int, error) {
	n, err := p.Port.Read(b)
	p.c.n.Add(int64(n))
	return n, err
}

// ErrStoppedEarly is returned by RecordWhile when the recording ended before the board.
var ErrStoppedEarly = errors.New("logger: the recorder stopped before the board")

// RecordWhile records with cfg while run drives a board in software (a virtual or an
// emulated one); once run returns, it waits until drained reports that the host has read
// everything the board sent, gives the recorder a moment (settle) to write it, then
// stops the recording and returns its summary. A recorder that stops first is an error
// (ErrStoppedEarly, or its own), and so is one from run. ctx ends everything.
func RecordWhile(ctx context.Context, cfg *Config, run func(context.Context) error, drained func() bool, settle time.Duration) (*Summary, error) {
	recCtx, stopRec := context.WithCancel(ctx)
	defer stopRec()
	boardCtx, stopBoard := context.WithCancel(ctx)
	defer stopBoard()
	type recResult struct {
		s   *Summary
		err error
	}
	recDone := make(chan recResult, 1)
	go func() {
		s, err := Record(recCtx, cfg)
		recDone <- recResult{s, err}
	}()
	runDone := make(chan error, 1)
	go func() { runDone <- run(boardCtx) }()
	select {
	case r := <-recDone:
		stopBoard()
		<-runDone
		if r.err != nil {
			return nil, fmt.Errorf("recording: %w", r.err)
		}
		return nil, fmt.Errorf("%w (%s)", ErrStoppedEarly, r.s.Stop)
	case err := <-runDone:
		if err != nil {
			stopRec()
			<-recDone
			return nil, fmt.Errorf("board: %w", err)
		}
	}
	// Let the host read what is still in the pseudo-terminal, then give the recorder a
	// moment to write it. Only ctx bounds the wait: a reader that never catches up is
	// stopped by the caller.
	for !drained() && ctx.Err() == nil {
		time.Sleep(5 * time.Millisecond)
	}
	time.Sleep(settle)
	stopRec()
	r := <-recDone
	if r.err != nil {
		return nil, fmt.Errorf("recording: %w", r.err)
	}
	return r.s, nil
}
