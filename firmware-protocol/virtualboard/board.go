package virtualboard

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"sync"
	"sync/atomic"
	"time"

	"capcycle/firmware-protocol/wire"
)

// pollInterval is how often a port with no host looks again for one.
const pollInterval = 5 * time.Millisecond

// Config describes the virtual board. The zero value of every field but Source
// means its default.
type Config struct {
	// Source gives the true voltages at the channel inputs. Required.
	Source Source

	// Firmware and Board are the ID frame's fw and board texts (wire.ValidText).
	// Defaults "0.1.0-virtual" and "virtual".
	Firmware, Board string

	// Channels enabled at boot, 1..4. Default 1.
	Channels int
	// Bits is the converter's resolution. Default 10.
	Bits int
	// EBits is the resolution after oversampling, Bits..min(16, Bits+6); each fast
	// sample is 4^(EBits-Bits) conversions. Default 12.
	EBits int

	// Ref is the reference at boot. Default wire.RefAVcc.
	Ref wire.Ref
	// Nominal reference volts the firmware believes until calibrated: AVcc (default
	// 5.0), the band-gap (default 1.1, the ATmega328P datasheet's nominal) and AREF
	// (default 2.5, an arbitrary choice).
	AVccV, BandgapV, ExtRefV float64
	// RefError is the true reference's relative error: true = nominal*(1+RefError).
	// Default 0.
	RefError float64
	// Div is each channel's nominal divider ratio (ADC-pin volts over input volts,
	// (0, 1]), as the CH frames report it. Missing entries default to 1.
	Div []float64
	// DivTolerance is the dividers' relative tolerance: each true ratio is nominal
	// times 1+u, u drawn uniformly from [-DivTolerance, DivTolerance]. Default 0.
	DivTolerance float64
	// NoiseLSB is the rms Gaussian noise at the converter input, in LSB of Bits. Some
	// noise (about 0.5 to 1 LSB) is what lets oversampling add real bits. Default 0.
	NoiseLSB float64
	// Seed seeds the noise, the divider errors and the bit flips. Default 0, itself a seed.
	Seed uint64

	// Capture settings at boot (PROTOCOL.md, "The adaptive capture"). Defaults:
	// SlowHz 10, FastHz 500 (or the fastest multiple of SlowHz that Channels and EBits
	// allow, if lower), Thr 8 (negative: 0, no bursts), Pre 32 (negative: 0), Post 32.
	SlowHz, FastHz, Thr, Pre, Post int
	// StatusEveryS is the ST period in device seconds. Default 10.
	StatusEveryS float64

	// Speed is how fast world time runs against the wall clock: 1 real time, 100 a
	// hundred times faster. While no host has the port open, frames are lost as on a
	// real link; with Baud set, frames the link cannot carry are dropped (the ST drop
	// count). The board paces itself by world time: it never drops a frame because
	// the host or the machine is slow; it waits, and when it falls behind the wall
	// clock by more than maxLag it lets world time slip (Stats.SlipS) rather than
	// rush to catch up.
	// 0 (the default) runs as fast as the host reads: nothing is lost, and the board
	// waits while no host has the port open.
	Speed float64
	// Baud is the serial link's bits per second (8N1: 10 bits a byte) at Speed > 0:
	// the link carries Baud/10 bytes a wall second, so Baud/(10*Speed) a world
	// second, and a frame made while TxQueue frames wait for the line is dropped.
	// Budget says up to which Speed nothing is. Default 0: a link of unlimited speed.
	Baud int
	// TxQueue is how many frames the transmit queue holds. Default 64.
	TxQueue int
	// Clock is the wall clock Speed > 0 paces against. Default the system clock; a
	// test gives one that stalls or jumps.
	Clock Clock
	// BitErrorRate is the chance that a byte on the wire has one bit flipped. Default 0.
	BitErrorRate float64

	// Link, if set, is a symbolic link the board keeps pointing at its current
	// pseudo-terminal, so that the path survives Unplug and Plug (as udev's
	// by-id links do for a USB board). Path returns it.
	Link string
	// Tap, if set, receives a copy of every byte written to the pseudo-terminal, from
	// the board's writer goroutine.
	Tap io.Writer
}

// Stats counts what the board did, over all boots.
type Stats struct {
	Frames    int64 // frames written to the pseudo-terminal (garbage excluded)
	Samples   int64 // S and A frames made (sequence numbers used)
	Dropped   int64 // frames not sent because the emulated link's transmit queue was full (Config.Baud)
	Discarded int64 // frames lost because no host had the port open, or from before a reset
	Corrupted int64 // frames sent with flipped bits
	Bursts    int64
	Boots     int64
	Commands  int64 // commands received, bad ones included
	// SlipS is the world time, in seconds, that the board let slip at Speed > 0
	// because it had fallen behind the wall clock (a busy machine, a slow host).
	SlipS float64
}

// Clock is a wall clock: what Speed > 0 paces against.
type Clock interface {
	Now() time.Time
	Sleep(d time.Duration)
}

type systemClock struct{}

func (systemClock) Now() time.Time        { return time.Now() }
func (systemClock) Sleep(d time.Duration) { time.Sleep(d) }

// maxLag is how far, in wall time, the board may fall behind its pace before it lets
// world time slip instead of catching up.
const maxLag = 100 * time.Millisecond

// Board is a virtual capcycle ADC board on a pseudo-terminal.
type Board struct {
	cfg      Config
	dev      device
	adc      adc
	trueDiv  [wire.MaxChannels]float64
	faultRng *rand.Rand

	mu          sync.Mutex
	port        *port // nil while unplugged
	pendingBoot wire.ResetCause
	garbage     [][]byte
	corrupt     int
	running     bool
	closed      bool
	runCtx      context.Context
	closedCh    chan struct{} // closed by Close, to end Run

	gen    atomic.Uint64 // power generation: frames and commands of an older one are lost
	txq    chan txItem
	cmds   chan cmdItem
	drop   uint32 // the ST drop counter, since boot
	runGen uint64 // the generation Run is producing for (Run goroutine only)
	// Run goroutine only: the world time of the event being made, the emulated
	// link (nil: unlimited), and the current port's done channel.
	curW    float64
	link    *link
	curDone <-chan struct{}
	slip    atomic.Uint64 // math.Float64bits of Stats.SlipS

	frames, samples, dropped, discarded, corrupted, commands, boots, bursts atomic.Int64
	pending                                                                 atomic.Int64 // items queued and not yet written or lost
	saveErr                                                                 atomic.Bool
}

type txItem struct {
	gen   uint64
	b     []byte
	frame bool
}

type cmdItem struct {
	gen uint64
	f   wire.Frame
	fe  *wire.FrameError
}

// Open checks cfg, creates the pseudo-terminal and returns the board, powered and
// plugged in; it boots when Run starts. A nil cfg is an error (Source is required).
func Open(cfg *Config) (*Board, error) {
	if cfg == nil || cfg.Source == nil {
		return nil, errors.New("virtualboard: Config.Source is required")
	}
	b := &Board{cfg: *cfg, closedCh: make(chan struct{})}
	if err := b.defaults(); err != nil {
		return nil, err
	}
	c := &b.cfg
	rng := newRand(c.Seed)
	b.faultRng = rand.New(rand.NewPCG(c.Seed, 0x6661756c74))
	b.adc = adc{bits: c.Bits, ebits: c.EBits, noiseLSB: c.NoiseLSB, rng: rng}
	for k := range wire.MaxChannels {
		b.trueDiv[k] = c.Div[k] * (1 + c.DivTolerance*(2*rng.Float64()-1))
	}
	b.txq = make(chan txItem, c.TxQueue)
	b.cmds = make(chan cmdItem, 64)
	b.dev.out = b.send
	b.dev.bursts = &b.bursts
	b.dev.saveErr = &b.saveErr
	b.dev.drop = &b.drop
	b.dev.ident = wire.Identity{Firmware: c.Firmware, Board: c.Board, Bits: uint32(c.Bits),
		EBits: uint32(c.EBits), ClockHz: 16000000}
	b.dev.defaults = b.bootSettings()
	if mx := maxHz(c.Channels, c.Bits, c.EBits); uint32(c.FastHz) > mx {
		return nil, fmt.Errorf("virtualboard: FastHz %d above the %d Hz that %d channels at %d bits allow",
			c.FastHz, mx, c.Channels, c.EBits)
	}
	if err := b.Plug(); err != nil {
		return nil, err
	}
	return b, nil
}

func (b *Board) defaults() error {
	c := &b.cfg
	def := func(v *int, d int) {
		if *v == 0 {
			*v = d
		}
	}
	deff := func(v *float64, d float64) {
		if *v == 0 {
			*v = d
		}
	}
	if c.Firmware == "" {
		c.Firmware = "0.1.0-virtual"
	}
	if c.Board == "" {
		c.Board = "virtual"
	}
	if !wire.ValidText(c.Firmware) || !wire.ValidText(c.Board) {
		return fmt.Errorf("virtualboard: Firmware %q and Board %q must be wire text", c.Firmware, c.Board)
	}
	def(&c.Channels, 1)
	def(&c.Bits, 10)
	def(&c.EBits, 12)
	def(&c.SlowHz, 10)
	def(&c.Thr, 8)
	def(&c.Pre, 32)
	def(&c.Post, 32)
	def(&c.TxQueue, 64)
	if c.Clock == nil {
		c.Clock = systemClock{}
	}
	c.Thr, c.Pre = max(c.Thr, 0), max(c.Pre, 0)
	if c.FastHz == 0 && c.Channels >= 1 && c.Channels <= wire.MaxChannels && c.EBits >= c.Bits && c.SlowHz > 0 {
		// 500 Hz, or the fastest multiple of SlowHz the channels and bits allow.
		mx := int(maxHz(c.Channels, c.Bits, c.EBits))
		c.FastHz = max(min(500, mx-mx%c.SlowHz), c.SlowHz)
	}
	deff(&c.AVccV, 5.0)
	deff(&c.BandgapV, 1.1)
	deff(&c.ExtRefV, 2.5)
	deff(&c.StatusEveryS, 10)
	if c.Ref == "" {
		c.Ref = wire.RefAVcc
	}
	switch {
	case c.Channels < 1 || c.Channels > wire.MaxChannels:
		return fmt.Errorf("virtualboard: Channels %d outside 1..%d", c.Channels, wire.MaxChannels)
	case c.Bits < 1 || c.EBits < c.Bits || c.EBits > 16 || c.EBits > c.Bits+6:
		return fmt.Errorf("virtualboard: Bits %d and EBits %d: need Bits <= EBits <= min(16, Bits+6)", c.Bits, c.EBits)
	case c.SlowHz < 1 || c.FastHz < c.SlowHz || c.FastHz%c.SlowHz != 0:
		return fmt.Errorf("virtualboard: FastHz %d must be a multiple of SlowHz %d", c.FastHz, c.SlowHz)
	case c.Pre > maxPre || c.Post < 1 || c.Thr > 65535:
		return fmt.Errorf("virtualboard: Thr %d, Pre %d (<= %d), Post %d (>= 1) out of range", c.Thr, c.Pre, maxPre, c.Post)
	case c.Ref != wire.RefAVcc && c.Ref != wire.RefInternal && c.Ref != wire.RefExternal:
		return fmt.Errorf("virtualboard: unknown reference %q", c.Ref)
	case c.Speed < 0 || c.Baud < 0 || c.BitErrorRate < 0 || c.BitErrorRate > 1 || c.NoiseLSB < 0 || c.DivTolerance < 0 || c.DivTolerance >= 1:
		return errors.New("virtualboard: Speed, Baud, NoiseLSB, BitErrorRate and DivTolerance must not be negative")
	}
	div := make([]float64, wire.MaxChannels)
	for k := range div {
		div[k] = 1
		if k < len(c.Div) {
			div[k] = c.Div[k]
		}
		if div[k] <= 0 || div[k] > 1 {
			return fmt.Errorf("virtualboard: Div[%d] = %g outside (0, 1]", k, div[k])
		}
	}
	c.Div = div
	return nil
}

func (b *Board) bootSettings() settings {
	c := &b.cfg
	s := settings{nch: c.Channels, slowHz: uint32(c.SlowHz), fastHz: uint32(c.FastHz),
		thr: uint32(c.Thr), pre: uint32(c.Pre), post: uint32(c.Post), ref: c.Ref,
		refUV: map[wire.Ref]uint32{
			wire.RefAVcc:     uint32(math.Round(c.AVccV * 1e6)),
			wire.RefInternal: uint32(math.Round(c.BandgapV * 1e6)),
			wire.RefExternal: uint32(math.Round(c.ExtRefV * 1e6)),
		}}
	for k := range wire.MaxChannels {
		s.div[k] = wire.MicroOf(c.Div[k])
		s.gain[k] = 1000000
	}
	return s
}

// trueRef is the reference's real voltage.
func (b *Board) trueRef(r wire.Ref) float64 {
	v := b.cfg.AVccV
	switch r {
	case wire.RefInternal:
		v = b.cfg.BandgapV
	case wire.RefExternal:
		v = b.cfg.ExtRefV
	}
	return v * (1 + b.cfg.RefError)
}

// Path returns the path a host opens: Config.Link when set, otherwise the current
// pseudo-terminal's device ("" while unplugged; a new one after each Plug).
func (b *Board) Path() string {
	if b.cfg.Link != "" {
		return b.cfg.Link
	}
	b.mu.Lock()
	defer b.mu.Unlock()
	if b.port == nil {
		return ""
	}
	return b.port.path
}

// Stats returns the board's counts so far.
func (b *Board) Stats() Stats {
	return Stats{Frames: b.frames.Load(), Samples: b.samples.Load(), Dropped: b.dropped.Load(),
		Discarded: b.discarded.Load(), Corrupted: b.corrupted.Load(), Bursts: b.bursts.Load(),
		Boots: b.boots.Load(), Commands: b.commands.Load(), SlipS: math.Float64frombits(b.slip.Load())}
}

// Unplug pulls the USB cable: the pseudo-terminal closes (a host's open port fails
// and the path disappears, Link included) and the board loses power. Plug brings it
// back.
func (b *Board) Unplug() {
	b.mu.Lock()
	defer b.mu.Unlock()
	if b.port == nil {
		return
	}
	b.port.close()
	b.port = nil
	if b.cfg.Link != "" {
		os.Remove(b.cfg.Link)
	}
}

// Plug plugs the cable back in: a new pseudo-terminal pair (a new device path; Link,
// if set, is pointed at it) and a power-on boot (reset=por, seq from 0).
func (b *Board) Plug() error {
	b.mu.Lock()
	defer b.mu.Unlock()
	if b.closed {
		return errors.New("virtualboard: board is closed")
	}
	if b.port != nil {
		return nil
	}
	p, err := openPort()
	if err != nil {
		return err
	}
	if l := b.cfg.Link; l != "" {
		os.Remove(l)
		if err := os.Symlink(p.path, l); err != nil {
			p.close()
			return fmt.Errorf("virtualboard: link: %w", err)
		}
	}
	b.port = p
	b.pendingBoot = wire.ResetPowerOn
	b.gen.Add(1)
	go b.readLoop(p)
	go b.writeLoop(p)
	return nil
}

// Reset resets the board as its reset pin does (cause "" means wire.ResetPin; a
// host's DTR pulse does this on a real board): the transmit queue is lost, and the
// board boots again with a new ID frame, seq from 0 and the device clock from 0.
// The port stays open.
func (b *Board) Reset(cause wire.ResetCause) {
	if cause == "" {
		cause = wire.ResetPin
	}
	b.mu.Lock()
	defer b.mu.Unlock()
	b.pendingBoot = cause
	b.gen.Add(1)
}

// InjectGarbage puts raw bytes on the wire between two frames, as line noise or a
// boot loader would.
func (b *Board) InjectGarbage(p []byte) {
	b.mu.Lock()
	defer b.mu.Unlock()
	b.garbage = append(b.garbage, append([]byte(nil), p...))
}

// Corrupt flips one randomly chosen bit (seeded) in each of the next n frames.
func (b *Board) Corrupt(n int) {
	b.mu.Lock()
	defer b.mu.Unlock()
	b.corrupt += n
}

// FailNextSave makes the next >save answer ER code=5 (EEPROM failure).
func (b *Board) FailNextSave() { b.saveErr.Store(true) }

// Close unplugs the board for good and ends Run (which returns ErrClosed). A second
// Close does nothing.
func (b *Board) Close() error {
	b.Unplug()
	b.mu.Lock()
	defer b.mu.Unlock()
	if !b.closed {
		b.closed = true
		close(b.closedCh)
	}
	return nil
}

// ErrClosed is what Run returns when the board was closed.
var ErrClosed = errors.New("virtualboard: board closed")

// send encodes a frame the device made and queues it for the wire. It runs on the
// Run goroutine.
func (b *Board) send(f wire.Frame) {
	switch f.(type) {
	case wire.Sample, wire.Average:
		b.samples.Add(1)
	}
	buf := wire.Append(nil, f)
	b.mu.Lock()
	flip := b.corrupt > 0
	if flip {
		b.corrupt--
	}
	b.mu.Unlock()
	if flip {
		i := b.faultRng.IntN(len(buf))
		buf[i] ^= 1 << b.faultRng.IntN(8)
	}
	if p := b.cfg.BitErrorRate; p > 0 {
		for i := range buf {
			if b.faultRng.Float64() < p {
				buf[i] ^= 1 << b.faultRng.IntN(8)
				flip = true
			}
		}
	}
	if b.link != nil && !b.link.accept(b.curW, len(buf)) {
		b.drop++
		b.dropped.Add(1)
		return
	}
	if flip {
		b.corrupted.Add(1)
	}
	b.queue(txItem{gen: b.runGen, b: buf, frame: true})
}

// queue hands an item to the writer and waits for room (or the end of Run). At
// Speed > 0 it also gives up when the port closes (the item is lost, as on a pulled
// cable); what the emulated link cannot carry was dropped before, in world time.
func (b *Board) queue(it txItem) {
	b.pending.Add(1)
	done := b.curDone
	if b.cfg.Speed == 0 {
		done = nil
	}
	select {
	case b.txq <- it:
	case <-b.runCtx.Done():
		b.pending.Add(-1)
	case <-b.closedCh:
		b.pending.Add(-1)
	case <-done:
		b.pending.Add(-1)
		if it.frame {
			b.discarded.Add(1)
		}
	}
}

// readLoop passes the host's commands to Run until the port closes.
func (b *Board) readLoop(p *port) {
	d := wire.NewDecoder(p)
	d.AllowNoCRC = true
	for {
		f, err := d.Next()
		it := cmdItem{gen: b.gen.Load(), f: f}
		if err != nil && !errors.As(err, &it.fe) {
			return
		}
		if err == nil && !wire.IsCommand(f) {
			continue // device frames from the host: not for us
		}
		b.commands.Add(1)
		select {
		case b.cmds <- it:
		case <-p.done:
			return
		}
	}
}

// writeLoop puts queued frames on the wire until the port closes.
func (b *Board) writeLoop(p *port) {
	for {
		var it txItem
		select {
		case <-p.done:
			return
		case it = <-b.txq:
		}
		b.writeItem(p, it)
		b.pending.Add(-1)
	}
}

// writeItem writes one queued item, or counts it lost: from an older power
// generation, no host (at Speed > 0), or the port closed under it.
func (b *Board) writeItem(p *port, it txItem) {
	wait := b.cfg.Speed == 0
	if it.gen != b.gen.Load() {
		b.lost(it)
		return
	}
	for wait && !p.present.Load() {
		if !p.sleep(pollInterval) {
			b.lost(it)
			return
		}
	}
	n := p.write(it.b, wait)
	if t := b.cfg.Tap; t != nil && n > 0 {
		t.Write(it.b[:n])
	}
	if n < len(it.b) {
		b.lost(it)
	} else if it.frame {
		b.frames.Add(1)
	}
}

func (b *Board) lost(it txItem) {
	if it.frame {
		b.discarded.Add(1)
	}
}
