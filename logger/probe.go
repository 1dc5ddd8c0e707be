package logger

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"sync"
	"time"

	"capcycle/firmware-protocol/wire"
)

// DefaultProbeTimeout is how long Probe waits for an identity. Boards that reset when
// the port opens (DTR) spend a second or two in their boot loader first.
const DefaultProbeTimeout = 2500 * time.Millisecond

// Probe opens the port at path, asks for the identity (">id", again every half second)
// and returns the first identity frame that arrives within timeout (0 means
// DefaultProbeTimeout). It closes the port before it returns. A port that answers with
// anything but an identity frame gives an error wrapping ErrHandshake.
func Probe(ctx context.Context, open Opener, path string, mode *Mode, timeout time.Duration) (*wire.Identity, error) {
	if open == nil {
		open = Open
	}
	if timeout <= 0 {
		timeout = DefaultProbeTimeout
	}
	p, err := open(path, mode)
	if err != nil {
		return nil, err
	}
	defer p.Close()
	rd := newChunkReader(p)
	defer rd.stop()
	cmd := wire.Append(nil, wire.CmdID{})
	deadline := time.NewTimer(timeout)
	defer deadline.Stop()
	again := time.NewTicker(500 * time.Millisecond)
	defer again.Stop()
	var pend []byte
	if _, err := p.Write(cmd); err != nil {
		return nil, err
	}
	for {
		select {
		case <-ctx.Done():
			return nil, ctx.Err()
		case <-deadline.C:
			return nil, fmt.Errorf("%w on %s within %v", ErrHandshake, path, timeout)
		case <-again.C:
			if _, err := p.Write(cmd); err != nil {
				return nil, err
			}
		case c := <-rd.chunks:
			if c.err != nil {
				return nil, c.err
			}
			pend = append(pend, c.b...)
			rd.release(c)
			for {
				adv, tok, _ := wire.ScanFrames(pend, false)
				if adv == 0 {
					break
				}
				pend = pend[adv:]
				if tok == nil {
					continue
				}
				if f, err := wire.Parse(tok); err == nil {
					if id, ok := f.(wire.Identity); ok {
						return &id, nil
					}
				}
			}
			if len(pend) > 4*wire.MaxLine {
				pend = pend[len(pend)-wire.MaxLine:]
			}
		}
	}
}

// Answer is one port's reply to a probe.
type Answer struct {
	Port PortInfo
	ID   *wire.Identity // nil if it did not answer
	Err  error          // why not
}

// ProbeAll probes the given ports at once and returns their answers in the same order.
func ProbeAll(ctx context.Context, open Opener, ports []PortInfo, mode *Mode, timeout time.Duration) []Answer {
	out := make([]Answer, len(ports))
	var wg sync.WaitGroup
	for i, p := range ports {
		wg.Add(1)
		go func() {
			defer wg.Done()
			id, err := Probe(ctx, open, p.Path, mode, timeout)
			out[i] = Answer{Port: p, ID: id, Err: err}
		}()
	}
	wg.Wait()
	return out
}

// SelectBoard probes every USB serial port and returns the path of the one board that
// answers. With none it returns an error wrapping ErrNoBoard, with several one wrapping
// ErrManyBoards; both list the ports.
func SelectBoard(ctx context.Context, open Opener, mode *Mode) (string, error) {
	ports, err := Ports()
	if err != nil {
		return "", err
	}
	var usb []PortInfo
	for _, p := range ports {
		if p.USB {
			usb = append(usb, p)
		}
	}
	return pickBoard(ProbeAll(ctx, open, usb, mode, 0))
}

func pickBoard(answers []Answer) (string, error) {
	var found []string
	var list strings.Builder
	for _, a := range answers {
		fmt.Fprintf(&list, "\n  %s", a.Port.Path)
		if a.Port.VIDPID() != "" {
			fmt.Fprintf(&list, " %s", a.Port.VIDPID())
		}
		if a.ID != nil {
			found = append(found, a.Port.Path)
			fmt.Fprintf(&list, " board=%s fw=%s", a.ID.Board, a.ID.Firmware)
		} else if a.Err != nil {
			var pe *PortError
			if errors.As(a.Err, &pe) {
				fmt.Fprintf(&list, " (%s)", pe.Kind)
			} else {
				list.WriteString(" (no answer)")
			}
		}
	}
	switch len(found) {
	case 1:
		return found[0], nil
	case 0:
		if len(answers) == 0 {
			return "", fmt.Errorf("%w (no USB serial ports found)", ErrNoBoard)
		}
		return "", fmt.Errorf("%w; ports:%s", ErrNoBoard, list.String())
	}
	return "", fmt.Errorf("%w; ports:%s", ErrManyBoards, list.String())
}
