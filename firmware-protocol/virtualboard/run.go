package virtualboard

import (
	"context"
	"errors"
	"math"
	"time"

	"capcycle/firmware-protocol/wire"
)

// batch is how many events Run makes between looks at commands when Speed is 0.
const batch = 256

// tick is how long Run sleeps between rounds when it paces against the wall clock.
const tick = 2 * time.Millisecond

// clock is the device's sampling and status timing, in device microseconds.
type clock struct {
	bootW    float64 // world time of the boot
	startUS  uint64  // device time of sample 0 of the current capture
	j        uint64  // index of the next sample
	statusUS uint64  // device time of the next ST frame
}

func (c *clock) sampleUS(fastHz uint32) uint64 { return c.startUS + c.j*1000000/uint64(fastHz) }

// Run boots the board and runs it until ctx ends (it returns ctx.Err()), Close is
// called (ErrClosed) or the Source ends (it returns nil once the transmit queue is
// empty). Run may be called once.
func (b *Board) Run(ctx context.Context) error {
	b.mu.Lock()
	if b.running || b.closed {
		b.mu.Unlock()
		return errors.New("virtualboard: Run called twice, or after Close")
	}
	b.running, b.runCtx = true, ctx
	b.mu.Unlock()

	var (
		w       float64 // world time, s
		powered bool
		gen     uint64
		ck      clock
		volts   [wire.MaxChannels]float64
		counts  [wire.MaxChannels]uint16
	)
	clk := b.cfg.Clock
	origin := clk.Now() // the wall time at which world time 0 was due
	b.link = newLink(&b.cfg)
	closedPort := make(chan struct{})
	close(closedPort)
	every := uint64(math.Round(b.cfg.StatusEveryS * 1e6))
	nowUS := func() uint64 { return uint64(math.Max(0, math.Round((w-ck.bootW)*1e6))) }
	// After a settings change sample 0 comes one fast period after the command.
	restartClock := func() {
		ck.startUS, ck.j = nowUS()+1000000/uint64(b.dev.set.fastHz), 0
	}
	for {
		if err := ctx.Err(); err != nil {
			return err
		}
		select {
		case <-b.closedCh:
			return ErrClosed
		default:
		}
		if sp := b.cfg.Speed; sp > 0 {
			// Pace by world time: everything due up to w has been made. Having
			// fallen behind the wall clock by more than maxLag (the machine was busy,
			// the host slow to read), the board lets world time slip rather than
			// make the backlog in a rush.
			target := clk.Now().Sub(origin).Seconds() * sp
			if lim := w + maxLag.Seconds()*sp; target > lim {
				origin = origin.Add(time.Duration((target - lim) / sp * float64(time.Second)))
				b.slip.Store(math.Float64bits(math.Float64frombits(b.slip.Load()) + target - lim))
				target = lim
			}
			w = math.Max(w, target)
		}
		// Events from the test hooks: plug state, resets, garbage.
		b.mu.Lock()
		plugged := b.port != nil
		b.curDone = closedPort
		if plugged {
			b.curDone = b.port.done
		}
		cause := b.pendingBoot
		b.pendingBoot = ""
		garbage := b.garbage
		b.garbage = nil
		b.mu.Unlock()
		gen = b.gen.Load()
		b.runGen = gen
		if !plugged {
			powered = false
		}
		if plugged && cause != "" {
			powered = true
			ck = clock{bootW: w, statusUS: every}
			b.drop = 0
			b.curW = w
			if b.link != nil {
				b.link.reset(w)
			}
			b.boots.Add(1)
			b.dev.boot(cause)
		}
		for _, g := range garbage {
			b.queue(txItem{gen: gen, b: g})
		}
		// Commands, applied at the current device time.
	drain:
		for {
			select {
			case c := <-b.cmds:
				if c.gen != gen || !powered {
					continue
				}
				b.curW = w
				if b.command(c, uint32(nowUS())) {
					restartClock()
				}
			default:
				break drain
			}
		}
		// Samples and status frames up to the target world time.
		n := 0
		idle := b.cfg.Speed == 0 && !b.dev.run // stopped: time waits for a command
		for powered && !idle && (b.cfg.Speed > 0 || n < batch) {
			set := &b.dev.set
			next := ck.statusUS
			isSample := false
			if b.dev.run {
				if s := ck.sampleUS(set.fastHz); s <= next {
					next, isSample = s, true
				}
			}
			// The event's own instant: a sample is taken at its time, never at the
			// end of the round that makes it.
			wn := ck.bootW + float64(next)/1e6
			if b.cfg.Speed > 0 && wn > w {
				break
			}
			w = math.Max(w, wn)
			b.curW = wn
			n++
			if !isSample {
				b.dev.status(uint32(next / 1000000))
				ck.statusUS += every
				continue
			}
			v := volts[:set.nch]
			clear(v)
			if !b.cfg.Source.Sample(wn, v) {
				return b.finish(ctx)
			}
			vref := b.trueRef(set.ref)
			for k := range set.nch {
				counts[k] = b.adc.sample(v[k]*b.trueDiv[k], vref)
			}
			b.dev.sample(uint32(next), counts)
			ck.j++
		}
		if b.cfg.Speed > 0 || !powered || idle {
			clk.Sleep(tick)
		}
	}
}

// command handles one received command or bad frame on the Run goroutine.
func (b *Board) command(c cmdItem, tUS uint32) bool {
	if c.fe != nil {
		code := wire.CodeSyntax
		if errors.Is(c.fe, wire.ErrCRC) {
			code = wire.CodeCRC
		}
		b.dev.out(wire.Nak{Cmd: tagOf(c.fe.Line), Code: code, Msg: code.String()})
		return false
	}
	return b.dev.command(c.f, tUS)
}

// tagOf returns the command tag at the start of a bad line, or "?".
func tagOf(line []byte) string {
	if len(line) < 2 || line[0] != wire.CommandStart {
		return "?"
	}
	n := 0
	for n < 8 && 1+n < len(line) && line[1+n] >= 'a' && line[1+n] <= 'z' {
		n++
	}
	if n == 0 || 1+n < len(line) && line[1+n] != ' ' && line[1+n] != '\r' && line[1+n] != '\n' {
		return "?"
	}
	return string(line[1 : 1+n])
}

// finish waits until the writer has written (or lost) everything queued. If the
// board is unplugged meanwhile, what is queued is lost.
func (b *Board) finish(ctx context.Context) error {
	for b.pending.Load() > 0 {
		b.mu.Lock()
		plugged := b.port != nil
		b.mu.Unlock()
		if !plugged {
			return nil
		}
		select {
		case <-ctx.Done():
			return ctx.Err()
		case <-b.closedCh:
			return ErrClosed
		case <-time.After(tick):
		}
	}
	return nil
}
