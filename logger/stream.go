package logger

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"capcycle/firmware-protocol/wire"
	"capcycle/logger/capture"
)

// stream turns the bytes of a board's frames into capture rows. It owns the framing, the
// clock unwrapping, the sequence check, the conversion to volts and the time axis; it
// does no I/O of its own (rows go to the capture.Writer), so it is tested and measured
// from bytes alone.
type stream struct {
	w    *capture.Writer
	ncol int // columns written (channels asked for)

	pend []byte // an incomplete frame carried to the next chunk

	id       wire.Identity
	haveID   bool
	ch       [wire.MaxChannels]wire.Channel
	haveCh   [wire.MaxChannels]bool
	divFixed []float64 // per column: divider from the config; 0 means the board's
	scales   []float64 // per column: factor after the divider and the calibration (Config.Scales); 0 means 1
	factor   [wire.MaxChannels]float64
	offV     [wire.MaxChannels]float64

	clock   wire.Clock
	haveSeq bool
	nextSeq uint32

	segment     int  // 1 for the first
	segSamples  int  // rows written in this segment
	anchored    bool // the segment's time anchor is set
	anchorS     float64
	anchorUS    int64
	resetNote   bool // a reset line is due before the next row
	resetCause  string
	boardChange bool   // a board line is due (settings changed)
	lastBoard   string // the identity in the last board line written

	hostS     float64 // host arrival time of the bytes being handled, seconds since start
	lastS     float64 // time of the last row written
	lastHostS float64 // host arrival time of the last row written
	written   bool
	gapOpen   bool

	vals  []float64
	stats capture.Stats
	drift DriftFit
	fire  FireDetector
	nowV  float64
	haveV bool

	hold    bool                // handshake: samples are not recorded
	onID    func(wire.Identity) // called on each ID frame (handshake)
	onReply func(wire.Frame)    // called on OK and ER frames (handshake)
}

func newStream(w *capture.Writer, ncol int, divFixed []float64) *stream {
	s := &stream{w: w, ncol: ncol, divFixed: divFixed, segment: 1, vals: make([]float64, ncol)}
	for k := range s.ch {
		s.ch[k] = wire.Channel{Ch: uint32(k), Div: wire.MicroOf(1), Gain: wire.MicroOf(1)}
	}
	return s
}

// feed handles a chunk of bytes that arrived at host time hostS. It returns the first
// write error; bad frames are counted, never returned.
func (s *stream) feed(data []byte, hostS float64) error {
	s.hostS = hostS
	buf := data
	if len(s.pend) > 0 {
		s.pend = append(s.pend, data...)
		buf = s.pend
	}
	for len(buf) > 0 {
		adv, tok, _ := wire.ScanFrames(buf, false)
		if adv == 0 {
			break
		}
		buf = buf[adv:]
		if tok == nil {
			continue
		}
		if err := s.line(tok); err != nil {
			return err
		}
	}
	// Keep the incomplete rest for the next chunk (ScanFrames returns an over-long
	// line as a token, so the rest stays short).
	if len(s.pend) > 0 {
		n := copy(s.pend, buf)
		s.pend = s.pend[:n]
	} else if len(buf) > 0 {
		s.pend = append(s.pend[:0], buf...)
	}
	return nil
}

func (s *stream) line(tok []byte) error {
	f, err := wire.Parse(tok)
	if err != nil {
		s.stats.BadFrames++
		return nil
	}
	switch f := f.(type) {
	case wire.Sample:
		return s.sample(f.Seq, s.clock.Micros(f.TimeUS), f.Counts[:], f.NCh, false)
	case wire.Average:
		us := s.clock.Micros(f.TimeUS)
		if s.id.FastHz > 0 && f.N > 1 {
			us += int64(math.Round(float64(f.N-1) * 1e6 / (2 * float64(s.id.FastHz))))
		}
		return s.sample(f.Seq, us, f.Mean[:], f.NCh, true)
	case wire.BurstBegin, wire.BurstEnd:
		s.clock.Micros(timeOf(f)) // keep the unwrapping step short
	case wire.Identity:
		s.identity(f)
	case wire.Channel:
		if f.Ch < wire.MaxChannels {
			s.ch[f.Ch], s.haveCh[f.Ch] = f, true
			s.convert()
		}
	case wire.Status:
		if s.resetNote && s.resetCause == "" {
			s.resetCause = string(f.Reset)
		}
	case wire.Ack, wire.Nak:
		if s.onReply != nil {
			s.onReply(f)
		}
	}
	return nil
}

func timeOf(f wire.Frame) uint32 {
	switch f := f.(type) {
	case wire.BurstBegin:
		return f.TimeUS
	case wire.BurstEnd:
		return f.TimeUS
	}
	return 0
}

func (s *stream) identity(id wire.Identity) {
	if s.haveID && id.Boot && s.segSamples > 0 {
		s.newSegment()
		s.resetNote, s.resetCause = true, ""
	} else if id.Boot {
		s.restartClock()
	}
	if s.haveID && !id.Boot && !sameSettings(s.id, id) {
		s.boardChange = true
	}
	s.id, s.haveID = id, true
	s.haveCh = [wire.MaxChannels]bool{} // CH frames follow every ID
	s.convert()
	if s.onID != nil {
		s.onID(id)
	}
}

func sameSettings(a, b wire.Identity) bool {
	a.Boot, b.Boot = false, false
	return IdentityString(a) == IdentityString(b)
}

// restartClock forgets the device clock and the sequence: the board restarted.
func (s *stream) restartClock() {
	s.clock.Reset()
	s.haveSeq = false
	s.anchored = false
}

// newSegment starts a new segment of the time axis (a board reset).
func (s *stream) newSegment() {
	s.restartClock()
	s.segment++
	s.segSamples = 0
	s.drift.NewSegment()
}

// reconnected is called when the port came back: the device clock may have run on for
// any time, so the time axis is anchored again; the sequence check goes on, so samples
// the board made while the link was down count as lost.
func (s *stream) reconnected() {
	s.clock.Reset()
	s.anchored = false
	s.drift.NewSegment()
	s.pend = s.pend[:0]
}

// convert precomputes each channel's volts per count and offset.
func (s *stream) convert() {
	for k := 0; k < wire.MaxChannels; k++ {
		c := s.ch[k]
		div := c.Div.Float64()
		if k < len(s.divFixed) && s.divFixed[k] > 0 {
			div = s.divFixed[k]
		}
		if div <= 0 {
			div = 1
		}
		eb := s.id.EBits
		if eb == 0 {
			eb = s.id.Bits
		}
		ref := float64(s.id.RefUV) / 1e6
		sc := s.scale(k)
		s.factor[k] = ref / float64(uint64(1)<<eb) / div * c.Gain.Float64() * sc
		s.offV[k] = float64(c.OffUV) / 1e6 * sc
	}
}

// scale is the factor on column k after the divider and the calibration (1 for volts).
func (s *stream) scale(k int) float64 {
	if k < len(s.scales) && s.scales[k] > 0 {
		return s.scales[k]
	}
	return 1
}

// divider is the divider ratio used for column k.
func (s *stream) divider(k int) float64 {
	if k < len(s.divFixed) && s.divFixed[k] > 0 {
		return s.divFixed[k]
	}
	if d := s.ch[k].Div.Float64(); d > 0 {
		return d
	}
	return 1
}

// sample turns one sample frame into a row. slow is true for A frames: only they feed
// the drift fit, since a burst's pre-trigger S frames arrive late by design.
func (s *stream) sample(seq uint32, us int64, counts []uint16, nch int, slow bool) error {
	if !s.haveID || s.hold {
		return nil // no conversion yet, or the handshake is still going on
	}
	if s.haveSeq && seq != s.nextSeq {
		d := seq - s.nextSeq // modulo 2^32
		if d < 1<<31 {
			s.stats.Lost += int64(d)
			s.openGap(capture.GapLostSamples, int64(d))
		} else {
			// The counter went back without a boot identity: the board restarted and
			// its identity was lost. A new segment, cause unknown.
			s.newSegment()
			s.resetNote, s.resetCause = true, "unknown"
			us = s.clock.Micros(uint32(us))
		}
	}
	s.haveSeq, s.nextSeq = true, seq+1
	if nch < s.ncol {
		s.stats.BadFrames++ // the board sends fewer channels than asked: not a row
		return nil
	}
	if !s.anchored {
		s.anchored = true
		s.anchorUS = us
		s.anchorS = s.anchor()
	}
	t := s.anchorS + float64(us-s.anchorUS)/1e6
	if slow {
		s.drift.Add(float64(us)/1e6, s.hostS)
	}
	for k := 0; k < s.ncol; k++ {
		s.vals[k] = float64(counts[k])*s.factor[k] + s.offV[k]
	}
	return s.row(t, s.vals)
}

// anchor is the time_s of the first row of a connected stretch. The first stretch starts
// at the host's arrival time. A later one (after an outage or a reset) starts after the
// last row by the time the host clock saw pass between the two rows' arrivals: the gap is
// measured by the host clock, whatever the board's clock did meanwhile, and the board's
// timestamps are used only inside a stretch. A board clock that ran ahead during the last
// stretch therefore cannot swallow the outage.
func (s *stream) anchor() float64 {
	if !s.written {
		return s.hostS
	}
	return s.lastS + max(s.hostS-s.lastHostS, 1e-6)
}

// row writes one row (any input mode), with the reset and board lines due before it.
func (s *stream) row(t float64, vals []float64) error {
	if s.written && t < s.lastS+0.5e-6 {
		s.stats.Overlap++ // older than a row already written (a burst's pre-trigger ring)
		return nil
	}
	if s.resetNote {
		cause := s.resetCause
		if cause == "" {
			cause = "unknown"
		}
		board := IdentityString(s.id)
		if err := s.w.Reset(capture.Reset{AtS: t, Cause: cause, Segment: s.segment}, board); err != nil {
			return err
		}
		s.resetNote, s.boardChange, s.lastBoard = false, false, board
	}
	if s.boardChange {
		if err := s.boardLine(); err != nil {
			return err
		}
		s.boardChange = false
	}
	if err := s.w.Row(t, vals); err != nil {
		if errors.Is(err, capture.ErrTimeOrder) {
			s.stats.Overlap++
			return nil
		}
		return err
	}
	s.gapOpen = false
	s.lastS, s.lastHostS, s.written = t, s.hostS, true
	s.segSamples++
	s.stats.Samples++
	s.nowV, s.haveV = vals[0], true
	s.fire.Add(t, vals[0])
	return nil
}

// boardLine writes the board's identity as a board line, unless the last one written
// says the same.
func (s *stream) boardLine() error {
	b := IdentityString(s.id)
	if b == s.lastBoard {
		return nil
	}
	if err := s.w.Meta(capture.KeyBoard, b); err != nil {
		return err
	}
	s.lastBoard = b
	return nil
}

// openGap notes a gap from the last row to the next one.
func (s *stream) openGap(reason string, lost int64) {
	if !s.written {
		return
	}
	if !s.gapOpen {
		s.stats.Gaps++
		s.gapOpen = true
	}
	s.w.GapUntilNextRow(s.lastS, reason, lost)
}

// IdentityString is an identity frame's fields as key=value words, as a capture's
// "board" line holds them.
func IdentityString(id wire.Identity) string {
	var b strings.Builder
	fmt.Fprintf(&b, "proto=%d fw=%s board=%s bits=%d ebits=%d ref=%s ref_uv=%d nch=%d clk_hz=%d max_hz=%d slow_hz=%d fast_hz=%d thr=%d pre=%d post=%d",
		id.Proto, id.Firmware, id.Board, id.Bits, id.EBits, id.Ref, id.RefUV, id.NCh, id.ClockHz,
		id.MaxHz, id.SlowHz, id.FastHz, id.Thr, id.Pre, id.Post)
	for _, f := range id.Extra {
		fmt.Fprintf(&b, " %s=%s", f.Key, f.Value)
	}
	return b.String()
}
