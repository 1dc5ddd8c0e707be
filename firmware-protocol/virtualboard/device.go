package virtualboard

import (
	"sync/atomic"

	"capcycle/firmware-protocol/wire"
)

// settings are what >save stores in the virtual EEPROM and what boot loads.
type settings struct {
	nch            int
	slowHz, fastHz uint32
	thr, pre, post uint32
	ref            wire.Ref
	refUV          map[wire.Ref]uint32 // calibrated value per source
	div, gain      [wire.MaxChannels]wire.Micro
	offUV          [wire.MaxChannels]int32
}

func (s settings) clone() settings {
	c := s
	c.refUV = make(map[wire.Ref]uint32, len(s.refUV))
	for k, v := range s.refUV {
		c.refUV[k] = v
	}
	return c
}

// maxPre is the longest pre-trigger ring the virtual firmware accepts.
const maxPre = 256

// device is the firmware's behaviour, without I/O: it takes fast samples and
// commands and hands frames to out. Times are device microseconds since boot.
type device struct {
	out    func(f wire.Frame)
	ident  wire.Identity // fixed fields: Firmware, Board, Bits, EBits, ClockHz
	set    settings
	seq    uint32
	run    bool
	ovr    uint32
	drop   *uint32 // the transmit queue's drop counter, owned by the board
	reset  wire.ResetCause
	bursts *atomic.Int64 // shared with the board's Stats

	inBurst bool
	haveRef bool
	ref     int
	slowN   uint32
	slowT   uint32
	sum     [wire.MaxChannels]uint64
	lo, hi  [wire.MaxChannels]uint16
	ring    []wire.Sample // oldest first
	qlo     int
	qhi     int
	qcnt    uint32
	lastX   int

	defaults settings     // the settings of a blank EEPROM
	eeprom   *settings    // what >save stored; nil while blank
	saveErr  *atomic.Bool // test hook: the next >save fails
}

// restart forgets the capture state: a new slow interval, an empty ring, no
// reference.
func (d *device) restart() {
	d.inBurst, d.haveRef, d.slowN, d.qcnt = false, false, 0, 0
	d.ring = d.ring[:0]
}

// boot loads the settings from EEPROM (or the defaults) and sends what the firmware
// sends at power-up or reset.
func (d *device) boot(cause wire.ResetCause) {
	if d.eeprom != nil {
		d.set = d.eeprom.clone()
	} else {
		d.set = d.defaults.clone()
	}
	d.seq, d.ovr, d.run, d.reset = 0, 0, true, cause
	d.restart()
	d.identify(true)
	d.status(0)
}

func (d *device) identify(boot bool) {
	id := d.ident
	id.Proto = wire.Version
	id.Ref = d.set.ref
	id.RefUV = d.set.refUV[d.set.ref]
	id.NCh = uint32(d.set.nch)
	id.MaxHz = maxHz(d.set.nch, int(id.Bits), int(id.EBits))
	id.SlowHz, id.FastHz = d.set.slowHz, d.set.fastHz
	id.Thr, id.Pre, id.Post = d.set.thr, d.set.pre, d.set.post
	id.Boot = boot
	d.out(id)
	for k := range d.set.nch {
		d.out(wire.Channel{Ch: uint32(k), Div: d.set.div[k], Gain: d.set.gain[k], OffUV: d.set.offUV[k]})
	}
}

func (d *device) status(upS uint32) {
	d.out(wire.Status{UptimeS: upS, Overruns: d.ovr, Dropped: *d.drop, Reset: d.reset, Running: d.run})
}

func (d *device) nextSeq() uint32 {
	s := d.seq
	d.seq++
	return s
}

// sample takes one fast sample (counts at ebits for each enabled channel) made at tUS.
func (d *device) sample(tUS uint32, c [wire.MaxChannels]uint16) {
	s := wire.Sample{TimeUS: tUS, NCh: d.set.nch, Counts: c}
	x := int(c[0])
	d.lastX = x
	if d.inBurst {
		s.Seq = d.nextSeq()
		d.out(s)
		d.quiet(x)
		if d.qcnt >= d.set.post {
			d.endBurst(tUS)
		}
		return
	}
	if !d.haveRef {
		d.ref, d.haveRef = x, true
	}
	if thr := int(d.set.thr); thr > 0 && (x-d.ref > thr || d.ref-x > thr) {
		d.bursts.Add(1)
		d.out(wire.BurstBegin{Seq: d.seq, TimeUS: tUS, Pre: uint32(len(d.ring))})
		for _, r := range d.ring {
			r.Seq = d.nextSeq()
			d.out(r)
		}
		d.ring = d.ring[:0]
		d.slowN = 0
		d.inBurst = true
		d.qlo, d.qhi, d.qcnt = x, x, 1
		s.Seq = d.nextSeq()
		d.out(s)
		if d.qcnt >= d.set.post {
			d.endBurst(tUS)
		}
		return
	}
	if d.set.pre > 0 {
		if uint32(len(d.ring)) == d.set.pre {
			copy(d.ring, d.ring[1:])
			d.ring = d.ring[:len(d.ring)-1]
		}
		d.ring = append(d.ring, s)
	}
	if d.slowN == 0 {
		d.slowT = tUS
		for k := range d.set.nch {
			d.sum[k], d.lo[k], d.hi[k] = 0, c[k], c[k]
		}
	}
	d.slowN++
	for k := range d.set.nch {
		d.sum[k] += uint64(c[k])
		d.lo[k] = min(d.lo[k], c[k])
		d.hi[k] = max(d.hi[k], c[k])
	}
	if d.slowN == d.set.fastHz/d.set.slowHz {
		a := wire.Average{Seq: d.nextSeq(), TimeUS: d.slowT, N: d.slowN, NCh: d.set.nch}
		for k := range d.set.nch {
			a.Mean[k] = uint16((d.sum[k] + uint64(d.slowN)/2) / uint64(d.slowN))
			a.Min[k], a.Max[k] = d.lo[k], d.hi[k]
		}
		d.out(a)
		d.ref = int(a.Mean[0])
		d.slowN = 0
	}
}

// quiet advances the burst's quiet window with the channel-0 count x.
func (d *device) quiet(x int) {
	lo, hi := min(d.qlo, x), max(d.qhi, x)
	if hi-lo > int(d.set.thr) {
		d.qlo, d.qhi, d.qcnt = x, x, 1
		return
	}
	d.qlo, d.qhi = lo, hi
	d.qcnt++
}

// endBurst sends E; the burst's last sample becomes the reference.
func (d *device) endBurst(tUS uint32) {
	d.out(wire.BurstEnd{Seq: d.seq, TimeUS: tUS})
	d.inBurst = false
	d.slowN = 0
	d.ring = d.ring[:0]
	d.ref, d.haveRef = d.lastX, true
}

// stopBurst ends a running burst at tUS because of a command.
func (d *device) stopBurst(tUS uint32) {
	if d.inBurst {
		d.endBurst(tUS)
	}
}

// command applies one host command at device time tUS (the time of the last sample)
// and returns whether the sampling clock must restart (settings changed or start).
func (d *device) command(f wire.Frame, tUS uint32) (restartClock bool) {
	ok := func(tag string) { d.out(wire.Ack{Cmd: tag}) }
	refuse := func(tag string, code wire.ErrorCode) {
		d.out(wire.Nak{Cmd: tag, Code: code, Msg: code.String()})
	}
	changed := func(tag string) bool {
		ok(tag)
		d.stopBurst(tUS)
		d.restart()
		d.identify(false)
		return true
	}
	switch c := f.(type) {
	case wire.CmdID:
		ok("id")
		d.identify(false)
	case wire.CmdStatus:
		ok("status")
		d.status(tUS / 1000000)
	case wire.CmdStart:
		ok("start")
		d.stopBurst(tUS)
		d.restart()
		d.run = true
		return true
	case wire.CmdStop:
		ok("stop")
		d.stopBurst(tUS)
		d.restart()
		d.run = false
	case wire.CmdRate:
		mx := maxHz(d.set.nch, int(d.ident.Bits), int(d.ident.EBits))
		if c.FastHz < 1 || c.FastHz > mx || c.SlowHz < 1 || c.SlowHz > c.FastHz || c.FastHz%c.SlowHz != 0 {
			refuse("rate", wire.CodeRange)
			return false
		}
		d.set.slowHz, d.set.fastHz = c.SlowHz, c.FastHz
		return changed("rate")
	case wire.CmdChan:
		if c.N < 1 || c.N > wire.MaxChannels ||
			d.set.fastHz > maxHz(int(c.N), int(d.ident.Bits), int(d.ident.EBits)) {
			refuse("chan", wire.CodeRange)
			return false
		}
		d.set.nch = int(c.N)
		return changed("chan")
	case wire.CmdBurst:
		if c.Post < 1 || c.Pre > maxPre || c.Thr > 1<<16-1 {
			refuse("burst", wire.CodeRange)
			return false
		}
		d.set.thr, d.set.pre, d.set.post = c.Thr, c.Pre, c.Post
		return changed("burst")
	case wire.CmdRef:
		if _, known := d.set.refUV[c.Src]; !known {
			refuse("ref", wire.CodeRange)
			return false
		}
		d.set.ref = c.Src
		if c.RefUV != 0 {
			d.set.refUV[c.Src] = c.RefUV
		}
		return changed("ref")
	case wire.CmdCal:
		if c.Ch >= wire.MaxChannels || c.Div <= 0 || c.Div > 1000000 || c.Gain <= 0 {
			refuse("cal", wire.CodeRange)
			return false
		}
		d.set.div[c.Ch], d.set.gain[c.Ch], d.set.offUV[c.Ch] = c.Div, c.Gain, c.OffUV
		return changed("cal")
	case wire.CmdSave:
		if d.saveErr.Swap(false) {
			refuse("save", wire.CodeEEPROM)
			return false
		}
		e := d.set.clone()
		d.eeprom = &e
		ok("save")
	case wire.Unknown:
		if c.Start == wire.CommandStart {
			refuse(c.Name, wire.CodeUnknown)
		}
	}
	return false
}
