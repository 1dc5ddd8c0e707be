package logger

import (
	"errors"
	"fmt"
	"time"

	"capcycle/firmware-protocol/wire"
	"capcycle/logger/capture"
)

// handshake asks for the identity, sends the settings the config asks for, and (first
// time) creates the capture file from the board's identity. Samples that arrive before
// it ends are not recorded.
func (ss *session) handshake(rd *chunkReader, first bool) error {
	if ss.s == nil {
		ss.s = newStream(nil, 0, ss.cfg.Dividers)
		ss.s.scales = ss.cfg.Scales
	}
	s := ss.s
	s.hold = true
	defer func() { s.hold = false; s.onID, s.onReply = nil, nil }()

	var ids int
	var reply wire.Frame
	s.onID = func(wire.Identity) { ids++ }
	s.onReply = func(f wire.Frame) { reply = f }
	haveAllCh := func() bool {
		for k := 0; k < int(s.id.NCh) && k < wire.MaxChannels; k++ {
			if !s.haveCh[k] {
				return false
			}
		}
		return true
	}
	// Ask for the identity, again each second until it comes.
	deadline := ss.waitUntil(first)
	for ids == 0 {
		if err := ss.send(wire.CmdID{}); err != nil {
			return err
		}
		until := ss.cfg.Now().Add(time.Second)
		if until.After(deadline) {
			until = deadline
		}
		if err := ss.await(rd, until, func() bool { return ids > 0 }); err != nil && !errors.Is(err, errWait) {
			return err
		}
		if ids == 0 && !ss.cfg.Now().Before(deadline) {
			return fmt.Errorf("%w on %s within %v (is it running capcycle firmware? for other firmware use text input)",
				ErrHandshake, ss.path, ss.cfg.Handshake)
		}
	}
	if err := ss.await(rd, ss.waitUntil(first), haveAllCh); err != nil && !errors.Is(err, errWait) {
		return err
	}
	// Settings.
	for _, cmd := range ss.commands(s.id) {
		reply = nil
		n := ids
		if err := ss.send(cmd); err != nil {
			return err
		}
		err := ss.await(rd, ss.waitUntil(first), func() bool {
			if _, refused := reply.(wire.Nak); refused {
				return true
			}
			return reply != nil && ids > n && haveAllCh()
		})
		if nak, ok := reply.(wire.Nak); ok {
			return fmt.Errorf("logger: the board refused >%s: %s (code %d)", nak.Cmd, nak.Msg, nak.Code)
		}
		if err != nil {
			return fmt.Errorf("logger: no reply to >%s from %s: %w", cmd.Tag(), ss.path, err)
		}
	}
	nch := int(s.id.NCh)
	want := ss.cfg.Channels
	if want == 0 {
		want = nch
	}
	if nch < want {
		return fmt.Errorf("logger: the board sends %d channels, %d asked", nch, want)
	}
	s.boardChange = false // the settings in force go into the header or the line below
	if first {
		s.ncol = want
		s.vals = make([]float64, want)
		if err := ss.openFile(ss.header(IdentityString(s.id), ss.channels(want))); err != nil {
			return err
		}
		s.w = ss.w
		ss.resume()
		return nil
	}
	if s.written && !s.resetNote {
		// The settings in force after the link came back, when they differ from the last
		// board line (a reset line due before the next row carries them itself).
		return s.boardLine()
	}
	return nil
}

// waitUntil is the deadline of one wait of the handshake: Handshake from now, and at the
// start no later than the start's limit.
func (ss *session) waitUntil(first bool) time.Time {
	d := ss.cfg.Now().Add(ss.cfg.Handshake)
	if first && !ss.startBy.IsZero() && ss.startBy.Before(d) {
		d = ss.startBy
	}
	return d
}

// channels describes the recorded columns from the board's identity and CH frames.
func (ss *session) channels(n int) []capture.Channel {
	s := ss.s
	cols := ss.cfg.columns(n)
	out := make([]capture.Channel, n)
	for k := range out {
		c := s.ch[k]
		out[k] = capture.Channel{Column: cols[k], ADC: k, Bits: int(s.id.EBits),
			RefV: float64(s.id.RefUV) / 1e6, Divider: s.divider(k), Scale: s.scale(k),
			Gain: c.Gain.Float64(), OffsetV: float64(c.OffUV) / 1e6 * s.scale(k), CalFrom: "board"}
	}
	return out
}

// commands are the settings to send: only what differs from the board's identity. A board
// may refuse a channel count at its present rate (more channels take longer per sample) or
// a rate at its present channel count, so a lower fast rate goes before the channel count
// and a higher one after it: each command is then valid when it arrives.
func (ss *session) commands(id wire.Identity) []wire.Frame {
	c := &ss.cfg
	var out []wire.Frame
	var chanCmd, rateCmd wire.Frame
	if c.Channels > 0 && uint32(c.Channels) != id.NCh {
		chanCmd = wire.CmdChan{N: uint32(c.Channels)}
	}
	lower := false
	if c.SlowHz > 0 || c.FastHz > 0 {
		r := wire.CmdRate{SlowHz: id.SlowHz, FastHz: id.FastHz}
		if c.SlowHz > 0 {
			r.SlowHz = c.SlowHz
		}
		if c.FastHz > 0 {
			r.FastHz = c.FastHz
		}
		if r.SlowHz != id.SlowHz || r.FastHz != id.FastHz {
			rateCmd = r
			lower = r.FastHz < id.FastHz
		}
	}
	first, second := chanCmd, rateCmd
	if lower {
		first, second = rateCmd, chanCmd
	}
	for _, f := range []wire.Frame{first, second} {
		if f != nil {
			out = append(out, f)
		}
	}
	if b := c.Burst; b != nil && (b.Thr != id.Thr || b.Pre != id.Pre || b.Post != id.Post) {
		post := b.Post
		if post == 0 {
			post = id.Post
		}
		out = append(out, wire.CmdBurst{Thr: b.Thr, Pre: b.Pre, Post: post})
	}
	if c.Ref != "" && wire.Ref(c.Ref) != id.Ref {
		out = append(out, wire.CmdRef{Src: wire.Ref(c.Ref)})
	}
	return out
}

func (ss *session) send(f wire.Frame) error {
	if _, err := ss.port.Write(wire.Append(nil, f)); err != nil {
		return &linkError{err}
	}
	return nil
}

var errWait = errors.New("logger: timed out waiting for the board")

// await feeds the stream from rd until cond holds, the deadline passes (errWait), the
// port fails, or the context ends.
func (ss *session) await(rd *chunkReader, deadline time.Time, cond func() bool) error {
	for !cond() {
		d := deadline.Sub(ss.cfg.Now())
		if d <= 0 {
			return errWait
		}
		t := time.NewTimer(d)
		select {
		case c := <-rd.chunks:
			t.Stop()
			if c.err != nil {
				return &linkError{c.err}
			}
			err := ss.s.feed(c.b, ss.hostS(ss.cfg.Now()))
			rd.release(c)
			if err != nil {
				return err
			}
		case <-t.C:
		case <-ss.ctx.Done():
			t.Stop()
			return ss.ctx.Err()
		}
	}
	return nil
}
