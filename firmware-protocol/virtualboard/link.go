package virtualboard

import (
	"errors"
	"math"

	"capcycle/firmware-protocol/wire"
)

// bitsPerByte is what one byte costs on an asynchronous serial line set to 8 data
// bits, no parity and 1 stop bit (8N1): a start bit, 8 data bits, a stop bit. Common
// practice, no source.
const bitsPerByte = 10

// LinkBudget is what a board's capture settings ask of its serial link, and the
// fastest Speed at which the link carries it.
type LinkBudget struct {
	// PeakBytesPerS bounds the bytes one device second of capture can make: S frames
	// at the fast rate all the time (a burst that never ends), A frames at the slow
	// rate besides, a B and an E frame per post+1 fast samples and an ST frame each
	// StatusEveryS, every frame at its longest (seq and t_us of ten digits, every
	// count at full scale).
	PeakBytesPerS float64
	// LinkBytesPerS is what the link carries in a wall second: Baud / 10 (8N1).
	LinkBytesPerS float64
	// MaxSpeed is LinkBytesPerS / PeakBytesPerS: at this Speed or below the link
	// carries every frame, whatever the signal does; above it the board drops what the
	// link cannot carry (Stats.Dropped, and ST's drop).
	MaxSpeed float64
}

// Budget is the link budget of cfg's boot settings (defaults applied) on a link of
// cfg.Baud bits per second. Baud must be set.
func Budget(cfg *Config) (LinkBudget, error) {
	if cfg == nil || cfg.Baud <= 0 {
		return LinkBudget{}, errors.New("virtualboard: Budget needs Config.Baud")
	}
	b := &Board{cfg: *cfg}
	if b.cfg.Source == nil {
		b.cfg.Source = SourceFunc(func(float64, []float64) bool { return false })
	}
	if err := b.defaults(); err != nil {
		return LinkBudget{}, err
	}
	c := &b.cfg
	peak := peakBytesPerS(c.Channels, c.EBits, c.SlowHz, c.FastHz, c.Post, c.StatusEveryS)
	link := float64(c.Baud) / bitsPerByte
	return LinkBudget{PeakBytesPerS: peak, LinkBytesPerS: link, MaxSpeed: link / peak}, nil
}

// peakBytesPerS is LinkBudget.PeakBytesPerS for these settings.
func peakBytesPerS(nch, ebits, slowHz, fastHz, post int, statusEveryS float64) float64 {
	const big = math.MaxUint32
	full := uint16(1<<ebits - 1)
	s := wire.Sample{Seq: big, TimeUS: big, NCh: nch}
	a := wire.Average{Seq: big, TimeUS: big, N: uint32(fastHz / slowHz), NCh: nch}
	for k := range nch {
		s.Counts[k] = full
		a.Mean[k], a.Min[k], a.Max[k] = full, full, full
	}
	lenOf := func(f wire.Frame) float64 { return float64(len(wire.Append(nil, f))) }
	be := lenOf(wire.BurstBegin{Seq: big, TimeUS: big, Pre: maxPre}) + lenOf(wire.BurstEnd{Seq: big, TimeUS: big})
	st := lenOf(wire.Status{UptimeS: big, Overruns: big, Dropped: big, Reset: wire.ResetPowerOn, Running: true})
	return float64(fastHz)*lenOf(s) + float64(slowHz)*lenOf(a) +
		float64(fastHz)/float64(post+1)*be + st/statusEveryS
}

// link is the serial line at Config.Baud in world time, for Speed > 0: a byte takes
// 10/Baud wall seconds, so 10*Speed/Baud world seconds; the transmit queue holds
// TxQueue frames that the line has not finished sending. Whether a frame fits is
// decided in world time only, so what the board drops does not depend on how busy
// the machine is, nor on how fast the host reads.
type link struct {
	secPerByte float64   // world seconds per byte
	done       []float64 // world time at which each queued frame is sent, oldest first
	cap        int
	last       float64 // world time at which the line is free
}

func newLink(cfg *Config) *link {
	if cfg.Speed <= 0 || cfg.Baud <= 0 {
		return nil
	}
	return &link{secPerByte: bitsPerByte * cfg.Speed / float64(cfg.Baud), cap: cfg.TxQueue}
}

// accept reports whether a frame of n bytes made at world time t fits in the
// transmit queue, and if so books the line for it.
func (l *link) accept(t float64, n int) bool {
	i := 0
	for i < len(l.done) && l.done[i] <= t {
		i++
	}
	l.done = l.done[i:]
	if len(l.done) >= l.cap {
		return false
	}
	l.last = math.Max(l.last, t) + float64(n)*l.secPerByte
	l.done = append(l.done, l.last)
	return true
}

// reset empties the queue (a boot).
func (l *link) reset(t float64) {
	l.done = l.done[:0]
	l.last = t
}
