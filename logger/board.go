package logger

import (
	"context"
	"errors"
	"fmt"
	"math"
	"time"

	"capcycle/firmware-protocol/wire"
)

// Board is an open connection to a board for one-off work (calibration): identity,
// commands with their replies, and averaged readings. Recording uses Record instead.
type Board struct {
	ID       wire.Identity
	Channels [wire.MaxChannels]wire.Channel // the CH frames in force

	port    Port
	rd      *chunkReader
	pend    []byte
	timeout time.Duration
}

// Connect opens the port and waits for the board's identity and channel frames
// (asking with ">id"); timeout 0 means DefaultProbeTimeout.
func Connect(ctx context.Context, open Opener, path string, mode *Mode, timeout time.Duration) (*Board, error) {
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
	b := &Board{port: p, rd: newChunkReader(p), timeout: timeout}
	if err := b.identify(ctx); err != nil {
		b.Close()
		return nil, err
	}
	return b, nil
}

// Close closes the port.
func (b *Board) Close() error {
	err := b.port.Close()
	b.rd.stop()
	return err
}

// next returns the next frame that parses, waiting until deadline.
func (b *Board) next(ctx context.Context, deadline time.Time) (wire.Frame, error) {
	for {
		for len(b.pend) > 0 {
			adv, tok, _ := wire.ScanFrames(b.pend, false)
			if adv == 0 {
				break
			}
			b.pend = b.pend[adv:]
			if tok != nil {
				if f, err := wire.Parse(tok); err == nil {
					return f, nil
				}
			}
		}
		t := time.NewTimer(time.Until(deadline))
		select {
		case <-ctx.Done():
			t.Stop()
			return nil, ctx.Err()
		case <-t.C:
			return nil, errWait
		case c := <-b.rd.chunks:
			t.Stop()
			if c.err != nil {
				return nil, c.err
			}
			b.pend = append(b.pend, c.b...)
			b.rd.release(c)
		}
	}
}

func (b *Board) send(f wire.Frame) error {
	_, err := b.port.Write(wire.Append(nil, f))
	return err
}

// identify asks for the identity and reads it with its CH frames.
func (b *Board) identify(ctx context.Context) error {
	if err := b.send(wire.CmdID{}); err != nil {
		return err
	}
	deadline := time.Now().Add(b.timeout)
	asked := time.Now()
	for {
		f, err := b.next(ctx, min2(deadline, asked.Add(500*time.Millisecond)))
		if errors.Is(err, errWait) && time.Now().Before(deadline) {
			asked = time.Now()
			if err := b.send(wire.CmdID{}); err != nil {
				return err
			}
			continue
		}
		if err != nil {
			if errors.Is(err, errWait) {
				return fmt.Errorf("%w within %v", ErrHandshake, b.timeout)
			}
			return err
		}
		if id, ok := f.(wire.Identity); ok {
			b.ID = id
			return b.readChannels(ctx, deadline)
		}
	}
}

func min2(a, b time.Time) time.Time {
	if a.Before(b) {
		return a
	}
	return b
}

func (b *Board) readChannels(ctx context.Context, deadline time.Time) error {
	for got := 0; got < int(b.ID.NCh); {
		f, err := b.next(ctx, deadline)
		if err != nil {
			return fmt.Errorf("logger: reading the channel frames: %w", err)
		}
		if c, ok := f.(wire.Channel); ok && c.Ch < wire.MaxChannels {
			b.Channels[c.Ch] = c
			got++
		}
	}
	return nil
}

// Command sends a command and waits for its reply; an ER reply is returned as an error.
// Commands that change settings are followed by ID and CH frames, which update b.
func (b *Board) Command(ctx context.Context, f wire.Frame) error {
	if err := b.send(f); err != nil {
		return err
	}
	deadline := time.Now().Add(b.timeout)
	for {
		r, err := b.next(ctx, deadline)
		if err != nil {
			return fmt.Errorf("logger: no reply to >%s: %w", f.Tag(), err)
		}
		switch r := r.(type) {
		case wire.Nak:
			if r.Cmd == f.Tag() || r.Cmd == "?" {
				return fmt.Errorf("logger: the board refused >%s: %s (code %d)", f.Tag(), r.Msg, r.Code)
			}
		case wire.Ack:
			if r.Cmd != f.Tag() {
				continue
			}
			switch f.(type) {
			case wire.CmdCal, wire.CmdRate, wire.CmdChan, wire.CmdBurst, wire.CmdRef:
				for {
					g, err := b.next(ctx, deadline)
					if err != nil {
						return fmt.Errorf("logger: no identity after >%s: %w", f.Tag(), err)
					}
					if id, ok := g.(wire.Identity); ok {
						b.ID = id
						return b.readChannels(ctx, deadline)
					}
				}
			}
			return nil
		}
	}
}

// Reading is the average of n samples of one channel.
type Reading struct {
	Counts float64 // mean count at ebits resolution
	RawV   float64 // the mean in volts at the input with the divider but without the calibration
	SDV    float64 // standard deviation of the samples, volts (raw)
	N      int
}

// Average reads sample frames until it has n of channel ch (A frames count as their
// mean, S frames as themselves) and averages them. It waits at most timeout for each.
func (b *Board) Average(ctx context.Context, ch, n int, timeout time.Duration) (Reading, error) {
	if ch < 0 || ch >= int(b.ID.NCh) {
		return Reading{}, fmt.Errorf("logger: channel %d: the board has %d", ch, b.ID.NCh)
	}
	var sum, sum2 float64
	got := 0
	for got < n {
		f, err := b.next(ctx, time.Now().Add(timeout))
		if err != nil {
			return Reading{}, fmt.Errorf("logger: reading samples (%d of %d): %w", got, n, err)
		}
		var c float64
		switch f := f.(type) {
		case wire.Average:
			if f.NCh <= ch {
				continue
			}
			c = float64(f.Mean[ch])
		case wire.Sample:
			if f.NCh <= ch {
				continue
			}
			c = float64(f.Counts[ch])
		default:
			continue
		}
		sum += c
		sum2 += c * c
		got++
	}
	mean := sum / float64(n)
	sd := 0.0
	if n > 1 {
		sd = math.Sqrt(math.Max(0, (sum2-sum*mean)/float64(n-1)))
	}
	vpc := b.voltsPerCount(ch)
	return Reading{Counts: mean, RawV: mean * vpc, SDV: sd * vpc, N: n}, nil
}

func (b *Board) voltsPerCount(ch int) float64 {
	div := b.Channels[ch].Div.Float64()
	if div <= 0 {
		div = 1
	}
	return float64(b.ID.RefUV) / 1e6 / math.Ldexp(1, int(b.ID.EBits)) / div
}

// CalPoint is one calibration reading: the board's raw volts (divider applied, no
// calibration) against the true volts a multimeter shows.
type CalPoint struct {
	RawV, TrueV float64
}

// FitCalibration returns the gain and offset that map raw volts to true ones,
// true = gain*raw + offset. One point gives the gain alone (offset 0); two give both
// (the line through them). More than two are fitted by least squares.
func FitCalibration(pts []CalPoint) (gain, offsetV float64, err error) {
	switch len(pts) {
	case 0:
		return 0, 0, errors.New("logger: no calibration points")
	case 1:
		if pts[0].RawV <= 0 || pts[0].TrueV <= 0 {
			return 0, 0, fmt.Errorf("logger: calibration point %g V read as %g V: both must be positive", pts[0].TrueV, pts[0].RawV)
		}
		return pts[0].TrueV / pts[0].RawV, 0, nil
	}
	var mx, my float64
	for _, p := range pts {
		mx += p.RawV
		my += p.TrueV
	}
	mx /= float64(len(pts))
	my /= float64(len(pts))
	var sxx, sxy float64
	for _, p := range pts {
		sxx += (p.RawV - mx) * (p.RawV - mx)
		sxy += (p.RawV - mx) * (p.TrueV - my)
	}
	if sxx < 1e-6 {
		return 0, 0, errors.New("logger: the calibration points are too close together; use two voltages far apart")
	}
	gain = sxy / sxx
	if gain <= 0 {
		return 0, 0, fmt.Errorf("logger: calibration gain %g is not positive; check the wiring", gain)
	}
	return gain, my - gain*mx, nil
}
