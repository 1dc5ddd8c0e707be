package logger

import (
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"capcycle/firmware-protocol/wire"
	"capcycle/logger/capture"
)

// Input says what the port carries.
type Input int

// Inputs.
const (
	InputFrames Input = iota // the capcycle wire protocol (handshake, frames with CRCs)
	InputText                // lines of numbers from other firmware, no handshake
)

// Config is one recording. The zero value of each field means its default; Out is
// required. cmd/capcycle fills it from the profile and the flags.
type Config struct {
	Port  string // port path; "" picks the one board that answers a probe (InputFrames)
	Mode  *Mode  // port settings; nil means the defaults of Mode
	Open  Opener // opens ports; default Open (the real serial stack)
	Input Input  // default InputFrames

	Out    string // capture file path; required
	Force  bool   // replace an existing Out
	Append bool   // continue an existing Out (capture.Append)

	Profile string   // profile name, for the header; "" leaves it out
	Notes   []string // free "note" lines for the header

	// Board settings (InputFrames). Zero keeps what the board has.
	Channels int      // channels to record, 1..4; 0 records every channel the board sends
	Columns  []string // column names after vcap_v; default ch1_v, ch2_v, ...
	SlowHz   uint32
	FastHz   uint32
	Burst    *Burst    // nil keeps the board's burst settings
	Ref      string    // "avcc", "int" or "ext"; "" keeps
	Dividers []float64 // per channel divider ratio (ADC volts / node volts); 0 uses the board's
	// Scales is a per channel factor on the volts at the input, after the divider and the
	// board's calibration, for a column in another unit: 1/(shunt·gain) turns a current
	// sense amplifier's volts into amperes. It goes into the header's channel line
	// (scale=S), and the calibration offset is scaled with it. 0 or missing means 1.
	// Frame input only.
	Scales []float64
	// Decimals is the number of decimals of the values in the file; default 5 (10 µV, or
	// 10 µA in an amperes column). A finer current channel needs more.
	Decimals int

	Text TextInput // conversion of InputText lines

	Duration time.Duration // stop after this long; 0: no limit
	Until    time.Time     // stop at this time; zero: no limit

	Status   io.Writer     // live status; nil: none
	Terminal bool          // Status is a terminal: a status line redrawn in place, <= 4 a second
	LogEvery time.Duration // a plain status line this often when not a terminal; default 1 min

	Now       func() time.Time // the host clock; default time.Now
	RetryMin  time.Duration    // first wait before reopening a lost port; default 250 ms
	RetryMax  time.Duration    // longest wait between reopen attempts; default 5 s
	Silence   time.Duration    // no bytes for this long means the link is lost; default 15 s
	Handshake time.Duration    // how long to wait for the identity and replies; default 5 s (a boot loader after the DTR reset takes 1-2 s)
	// StartWait bounds how long the start keeps asking for the board's identity (a noisy
	// link, a board still booting, other firmware). 0: until the recording's stop time or
	// a cancel, as a reconnect mid-run does. The status line shows the attempts meanwhile.
	StartWait time.Duration
	// FlushEvery is how often rows go from memory to the file; default 250 ms, so that a
	// crash or a kill -9 loses well under a second of rows.
	FlushEvery time.Duration
}

// Burst is the adaptive-capture setting sent with ">burst".
type Burst struct {
	Thr, Pre, Post uint32
}

// TextInput converts lines of numbers to volts:
// v = n / 2^Bits * VrefV / Divider * Scale (with Bits 0, n is already in volts).
type TextInput struct {
	Bits    int     // resolution of the counts; 0: the numbers are volts
	VrefV   float64 // ADC reference, volts; required when Bits > 0
	Divider float64 // divider ratio, ADC volts / node volts, (0, 1]; 0 means 1
	Scale   float64 // a further factor; 0 means 1
	Columns int     // numbers per line to record; 0: as many as the first good line has
}

// Summary is what a recording did.
type Summary struct {
	Out        string
	Stats      capture.Stats
	Clock      capture.Clock // the board clock's drift; Points 0 when it is not determined
	ClockNote  string        // why the drift is not determined (DriftFit.Drift), when the board's clock was fitted
	Segments   int
	Reconnects int
	Cycles     int
	Elapsed    time.Duration
	Stop       string // why it stopped: "duration", "until", "cancelled", or "error"
}

// ErrNoBoard is returned when no port was given and no board answered a probe.
var ErrNoBoard = errors.New("logger: no board answered; give the port")

// ErrManyBoards is returned when no port was given and more than one board answered.
var ErrManyBoards = errors.New("logger: more than one board answered; give the port")

// ErrHandshake is wrapped by the error of a board that did not send its identity.
var ErrHandshake = errors.New("logger: no identity frame from the board")

// ErrOutput is wrapped by the errors about the capture path, found before the board is
// asked for anything (a missing folder, an existing file without Force or Append, a file
// Append cannot continue) or, for the columns of an appended file, right after the
// handshake. They are the user's to fix, and nothing was written.
var ErrOutput = errors.New("logger: unusable capture path")

func (c *Config) defaults() Config {
	r := *c
	if r.Open == nil {
		r.Open = Open
	}
	if r.Now == nil {
		r.Now = time.Now
	}
	if r.RetryMin <= 0 {
		r.RetryMin = 250 * time.Millisecond
	}
	if r.RetryMax <= 0 {
		r.RetryMax = 5 * time.Second
	}
	if r.Silence <= 0 {
		r.Silence = 15 * time.Second
	}
	if r.Handshake <= 0 {
		r.Handshake = 5 * time.Second
	}
	if r.LogEvery <= 0 {
		r.LogEvery = time.Minute
	}
	if r.FlushEvery <= 0 {
		r.FlushEvery = DefaultFlushEvery
	}
	return r
}

func (c *Config) check() error {
	switch {
	case c.Out == "":
		return errors.New("logger: no output file")
	case c.Force && c.Append:
		return errors.New("logger: force and append exclude each other")
	case c.Channels > wire.MaxChannels:
		return fmt.Errorf("logger: %d channels asked; the board has at most %d", c.Channels, wire.MaxChannels)
	}
	for k, d := range c.Dividers {
		if d < 0 || d > 1 {
			return fmt.Errorf("logger: channel %d divider %g is not a ratio in (0, 1] (ADC volts over node volts)", k, d)
		}
	}
	if c.Decimals < 0 || c.Decimals > 12 {
		return fmt.Errorf("logger: %d decimals: want 0 (default 5) to 12", c.Decimals)
	}
	for k, f := range c.Scales {
		if math.IsNaN(f) || math.IsInf(f, 0) || f < 0 {
			return fmt.Errorf("logger: channel %d scale %g is not a positive factor", k, f)
		}
	}
	if c.Input == InputText {
		if slices.ContainsFunc(c.Scales, func(f float64) bool { return f != 0 && f != 1 }) {
			return errors.New("logger: per channel scales are for frame input; text input has one scale for every column")
		}
		t := c.Text
		if t.Bits < 0 || t.Bits > 32 || t.Bits > 0 && t.VrefV <= 0 || t.Divider < 0 || t.Divider > 1 {
			return fmt.Errorf("logger: text input needs bits in 0..32, a positive vref with bits, and a divider in (0, 1] (got bits %d vref %g divider %g)", t.Bits, t.VrefV, t.Divider)
		}
	}
	return nil
}

// columns is the header's column names for n channels.
func (c *Config) columns(n int) []string {
	cols := []string{capture.ColVcap}
	for k := 1; k < n; k++ {
		if k-1 < len(c.Columns) && c.Columns[k-1] != "" {
			cols = append(cols, c.Columns[k-1])
		} else {
			cols = append(cols, fmt.Sprintf("ch%d_v", k))
		}
	}
	return cols
}

// session is one running recording.
type session struct {
	cfg      Config
	ctx      context.Context
	start    time.Time // host time at time_s 0 of this session's axis (Append: the file's)
	begun    time.Time // when this session began
	w        *capture.Writer
	s        *stream
	status   *statusLine
	sum      Summary
	deadline time.Time
	port     Port
	path     string
	text     *textParser

	resumeS float64 // Append: rows must come after this time
	resumed bool

	// The link's state for the status line.
	link     LinkState
	since    time.Time // when the state began (LinkQuiet: the last byte)
	tries    int       // reopen or handshake attempts in this state
	lastData time.Time // when bytes last came
	startBy  time.Time // the first handshake gives up at this time; zero: never
}

// DefaultFlushEvery is how often rows are written from memory to the file. The promise
// is that a crash loses at most a second of rows; a quarter of that leaves room for a
// late tick on a busy machine.
const DefaultFlushEvery = 250 * time.Millisecond

// tickEvery is the recording loop's tick: flushes, the status line, stop and silence
// checks.
const tickEvery = 100 * time.Millisecond

// resume makes the stream continue after the appended file's last row.
func (ss *session) resume() {
	if ss.resumed && ss.s != nil {
		// The appended stretch starts at the host time of its first row: resumeS is now
		// on the file's axis, and the host clock measures the gap from there.
		ss.s.lastS, ss.s.lastHostS, ss.s.written = ss.resumeS, ss.resumeS, true
	}
}

// Record runs one recording until ctx is cancelled, Duration passes or Until comes, and
// closes the file cleanly. A lost port is reopened with back-off and the recording goes
// on in the same file; a failed write (disk full) stops it with the error, keeping what
// was written.
func Record(ctx context.Context, cfg *Config) (*Summary, error) {
	if err := cfg.check(); err != nil {
		return nil, err
	}
	if err := cfg.checkOut(); err != nil {
		return nil, err
	}
	ss := &session{cfg: cfg.defaults(), ctx: ctx}
	ss.begun = ss.cfg.Now()
	ss.deadline = stopTime(&ss.cfg, ss.begun)
	ss.status = newStatusLine(ss.cfg.Status, ss.cfg.Terminal, ss.cfg.LogEvery)
	ss.sum.Out = cfg.Out
	err := ss.run()
	return &ss.sum, err
}

func stopTime(c *Config, now time.Time) time.Time {
	var d time.Time
	if c.Duration > 0 {
		d = now.Add(c.Duration)
	}
	if !c.Until.IsZero() && (d.IsZero() || c.Until.Before(d)) {
		d = c.Until
	}
	return d
}

func (ss *session) run() error {
	path := ss.cfg.Port
	if path == "" {
		if ss.cfg.Input == InputText {
			return errors.New("logger: text input needs a port path")
		}
		p, err := SelectBoard(ss.ctx, ss.cfg.Open, ss.cfg.Mode)
		if err != nil {
			return err
		}
		path = p
	}
	ss.path = path
	port, err := ss.cfg.Open(path, ss.cfg.Mode)
	if err != nil {
		return err
	}
	ss.port = port
	rd := newChunkReader(port)
	if ss.cfg.Input == InputText {
		err = ss.openText()
	} else {
		rd, err = ss.firstHandshake(rd)
	}
	if err != nil {
		if rd != nil {
			rd.stop()
		}
		ss.port.Close()
		if ss.w != nil {
			ss.w.Close(nil)
		}
		return err
	}
	ss.setLink(LinkFlowing, ss.cfg.Now())
	err = ss.loop(rd)
	return ss.finish(err)
}

// checkOut looks at the capture path before the port is opened, so that a mistake in it
// is found before the board is asked for anything: the folder must exist, an existing
// file needs Force or Append, and a file to append to must be a capture. The errors wrap
// ErrOutput (and fs.ErrExist for an existing file).
func (c *Config) checkOut() error {
	out := c.Out
	dir := filepath.Dir(out)
	if st, err := os.Stat(dir); err != nil {
		return fmt.Errorf("%w: cannot write %s: folder %s does not exist (nothing was written)", ErrOutput, out, dir)
	} else if !st.IsDir() {
		return fmt.Errorf("%w: cannot write %s: %s is not a folder (nothing was written)", ErrOutput, out, dir)
	}
	st, err := os.Stat(out)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		return nil
	case err != nil:
		return fmt.Errorf("%w: %s: %w", ErrOutput, out, err)
	case st.IsDir():
		return fmt.Errorf("%w: %s is a folder; give a file name", ErrOutput, out)
	case c.Append:
		if _, err := capture.Inspect(out); err != nil {
			return fmt.Errorf("%w: cannot append to %s: it is not a capture file this recorder can continue (%w); nothing was changed", ErrOutput, out, err)
		}
	case !c.Force:
		return fmt.Errorf("%w: %s: %w", ErrOutput, out, fs.ErrExist)
	}
	return nil
}

// linkError is a port that failed (a read or a write) while talking to the board.
type linkError struct{ err error }

func (e *linkError) Error() string { return e.err.Error() }
func (e *linkError) Unwrap() error { return e.err }

// firstHandshake runs the first handshake, and keeps trying as the recording does after a loss
// mid-run: a silent or noisy link is asked again, a port that fails is reopened with
// back-off, until the board answers, the recording's stop time or StartWait comes, or
// the context ends. The status line shows the attempts. A board that refuses a setting
// ends the recording at once. It returns the reader of the port in use.
func (ss *session) firstHandshake(rd *chunkReader) (*chunkReader, error) {
	begun := ss.cfg.Now()
	ss.setLink(LinkStarting, begun)
	ss.startBy = ss.deadline
	if ss.cfg.StartWait > 0 {
		if by := begun.Add(ss.cfg.StartWait); ss.startBy.IsZero() || by.Before(ss.startBy) {
			ss.startBy = by
		}
	}
	giveUp := func(cause error) error {
		if rd != nil {
			rd.stop()
		}
		return fmt.Errorf("%w on %s after %v of asking (%v); no capture was written (is it running capcycle firmware? for other firmware use text input)",
			ErrHandshake, ss.path, ss.cfg.Now().Sub(begun).Round(time.Second), cause)
	}
	wait := ss.cfg.RetryMin
	for {
		ss.tries++
		ss.status.update(ss.snapshot(ss.cfg.Now()), ss.cfg.Now())
		var err error
		if rd != nil {
			err = ss.handshake(rd, true)
			if err == nil {
				ss.setLink(LinkFlowing, ss.cfg.Now())
				ss.startBy = time.Time{}
				return rd, nil
			}
		}
		var le *linkError
		switch {
		case ss.ctx.Err() != nil:
			return nil, giveUp(errors.New("stopped"))
		case rd != nil && errors.As(err, &le):
			rd.stop()
			ss.port.Close()
			rd = nil
			ss.status.note("lost %s while asking for the board's identity (%v); reopening it", ss.path, le.err)
		case rd != nil && !errors.Is(err, ErrHandshake) && !errors.Is(err, errWait):
			return rd, err // refused settings, a capture that cannot be created
		case rd != nil && ss.tries == 1:
			ss.status.note("no answer from %s yet; still asking (Ctrl-C stops)", ss.path)
		}
		if !ss.startBy.IsZero() && !ss.cfg.Now().Before(ss.startBy) {
			return nil, giveUp(errors.New("time is up"))
		}
		if rd != nil {
			continue
		}
		// Reopen the port with back-off.
		if !ss.sleep(wait) {
			return nil, giveUp(errors.New("stopped"))
		}
		wait = min(wait*2, ss.cfg.RetryMax)
		port, err := ss.cfg.Open(ss.path, ss.cfg.Mode)
		if err != nil {
			continue
		}
		ss.port = port
		rd = newChunkReader(port)
	}
}

// sleep waits for d, redrawing the status line meanwhile; false if the context ended.
func (ss *session) sleep(d time.Duration) bool {
	timer := time.NewTimer(d)
	defer timer.Stop()
	tick := time.NewTicker(tickEvery)
	defer tick.Stop()
	for {
		select {
		case <-ss.ctx.Done():
			return false
		case <-timer.C:
			return true
		case <-tick.C:
			now := ss.cfg.Now()
			ss.status.update(ss.snapshot(now), now)
		}
	}
}

// setLink moves the link to state st, begun at since.
func (ss *session) setLink(st LinkState, since time.Time) {
	ss.link, ss.since, ss.tries = st, since, 0
	if st == LinkFlowing {
		ss.lastData = since
	}
}

// hostS is the host time now in seconds on the capture's axis.
func (ss *session) hostS(now time.Time) float64 { return now.Sub(ss.start).Seconds() }

func (ss *session) header(board string, chans []capture.Channel) *capture.Header {
	src := "serial port=" + ss.path
	if ss.cfg.Input == InputText {
		src = "text port=" + ss.path
	}
	if ss.cfg.Mode != nil && ss.cfg.Mode.BaudRate > 0 {
		src += fmt.Sprintf(" baud=%d", ss.cfg.Mode.BaudRate)
	} else {
		src += fmt.Sprintf(" baud=%d", defaultBaud)
	}
	h := &capture.Header{Start: ss.begun, Source: src, Board: board, Profile: ss.cfg.Profile,
		Notes: ss.cfg.Notes, Channels: chans}
	return h
}

// openFile creates or appends the capture; it sets ss.start, the time axis origin.
func (ss *session) openFile(h *capture.Header) error {
	if ss.cfg.Append {
		if _, err := os.Stat(ss.cfg.Out); err == nil {
			ex, err := capture.Inspect(ss.cfg.Out)
			if err != nil {
				return err
			}
			if want := ss.cfg.columns(len(h.Channels)); strings.Join(ex.Columns[1:], ",") != strings.Join(want, ",") {
				return fmt.Errorf("%w: %s has columns %s; this recording writes %s (nothing was changed)",
					ErrOutput, ss.cfg.Out, strings.Join(ex.Columns, ","), strings.Join(want, ","))
			}
			w, ex, err := capture.Append(ss.cfg.Out, ss.begun, ss.captureOptions())
			if err != nil {
				return err
			}
			ss.w, ss.start = w, ex.Start
			ss.resumeS, ss.resumed = ex.AtS, true
			ss.status.note("recording %s, appending to %s (cut %d torn bytes; Ctrl-C stops)", ss.path, ss.cfg.Out, ex.TornBytes)
			if h.Board != "" {
				w.Meta(capture.KeyBoard, h.Board)
				ss.s.lastBoard = h.Board
			}
			return nil
		}
	}
	w, err := capture.Create(ss.cfg.Out, h, ss.captureOptions())
	if err != nil {
		return err
	}
	ss.w, ss.start = w, ss.begun
	if ss.s != nil {
		ss.s.lastBoard = h.Board
	}
	ss.status.note("recording %s to %s (Ctrl-C stops and closes it)", ss.path, ss.cfg.Out)
	return nil
}

func (ss *session) captureOptions() *capture.Options {
	return &capture.Options{Force: ss.cfg.Force, ValueDecimals: ss.cfg.Decimals, FlushEvery: ss.cfg.FlushEvery}
}

func (ss *session) finish(loopErr error) error {
	now := ss.cfg.Now()
	ss.sum.Elapsed = now.Sub(ss.begun)
	var st capture.Stats
	if ss.s != nil {
		st = ss.s.stats
		ss.sum.Segments = ss.s.segment
		ss.sum.Cycles = ss.s.fire.Cycles()
		if ss.cfg.Input == InputFrames && ss.s.drift.Points() > 0 {
			if ppm, ok, why := ss.s.drift.Drift(); ok {
				ss.sum.Clock = capture.Clock{DriftPPM: ppm, FitS: ss.s.drift.SpanS(), Points: ss.s.drift.Points()}
			} else {
				ss.sum.ClockNote = why
			}
		}
		if ss.s.written && ss.s.lastS > ss.hostS(now) {
			now = ss.start.Add(time.Duration(ss.s.lastS * 1e9)) // the end is not before the last row
		}
	}
	ss.sum.Stats = st
	var clk *capture.Clock
	if ss.sum.Clock.Points > 0 {
		clk = &ss.sum.Clock
	}
	cerr := ss.w.Close(&capture.Trailer{End: now, EndS: ss.hostS(now), Stats: &st, Clock: clk})
	ss.status.done(ss.snapshot(now))
	if loopErr != nil {
		ss.sum.Stop = "error"
		return loopErr
	}
	if cerr != nil {
		ss.sum.Stop = "error"
		return cerr
	}
	return nil
}

// loop reads until a stop; it reconnects a lost port.
func (ss *session) loop(rd *chunkReader) error {
	tick := time.NewTicker(tickEvery)
	defer tick.Stop()
	for {
		select {
		case <-ss.ctx.Done():
			ss.sum.Stop = "cancelled"
			rd.stop()
			ss.port.Close()
			return nil
		case c := <-rd.chunks:
			now := ss.cfg.Now()
			if c.err != nil {
				rd.stop()
				ss.port.Close()
				var err error
				if rd, err = ss.reconnect(c.err, now); err != nil || rd == nil {
					return err
				}
				continue
			}
			if ss.link != LinkFlowing {
				ss.setLink(LinkFlowing, now)
				ss.status.update(ss.snapshot(now), now)
			}
			ss.lastData = now
			err := ss.consume(c.b, now)
			rd.release(c)
			if err != nil {
				rd.stop()
				ss.port.Close()
				return err
			}
			if err := ss.w.Tick(now); err != nil {
				rd.stop()
				ss.port.Close()
				return err
			}
		case <-tick.C:
			now := ss.cfg.Now()
			if err := ss.w.Tick(now); err != nil {
				rd.stop()
				ss.port.Close()
				return err
			}
			ss.status.update(ss.snapshot(now), now)
			if ss.stopDue(now) {
				rd.stop()
				ss.port.Close()
				return nil
			}
			quiet := now.Sub(ss.lastData)
			if quiet > ss.cfg.Silence {
				rd.stop()
				ss.port.Close()
				var err error
				if rd, err = ss.reconnect(fmt.Errorf("logger: %s sent nothing for %v", ss.path, ss.cfg.Silence), ss.lastData); err != nil || rd == nil {
					return err
				}
			} else if quiet >= QuietAfter && ss.link == LinkFlowing {
				ss.link, ss.since = LinkQuiet, ss.lastData
				ss.status.note("nothing from %s for %v; still listening (the port is reopened after %v of silence)",
					ss.path, quiet.Round(time.Second), ss.cfg.Silence)
				ss.status.update(ss.snapshot(now), now)
			}
		}
	}
}

func (ss *session) stopDue(now time.Time) bool {
	if !ss.deadline.IsZero() && !now.Before(ss.deadline) {
		if ss.cfg.Duration > 0 && now.Sub(ss.begun) >= ss.cfg.Duration {
			ss.sum.Stop = "duration"
		} else {
			ss.sum.Stop = "until"
		}
		return true
	}
	return false
}

func (ss *session) consume(b []byte, now time.Time) error {
	if ss.text != nil {
		return ss.text.feed(b, ss.hostS(now))
	}
	return ss.s.feed(b, ss.hostS(now))
}

// reconnect notes the gap and reopens the port with back-off until it answers, a stop
// comes (it returns nil, nil) or a write fails. lostAt is when the link was last known
// good (the last byte, for a silent port).
func (ss *session) reconnect(cause error, lostAt time.Time) (*chunkReader, error) {
	ss.setLink(LinkLost, lostAt)
	reason := capture.GapReadError
	var pe *PortError
	if errors.As(cause, &pe) && pe.Kind == PortGone {
		reason = capture.GapUnplugged
	}
	ss.s.openGap(reason, 0)
	ss.status.note("lost %s (%v); retrying", ss.path, cause)
	if err := ss.w.Flush(); err != nil {
		return nil, err
	}
	wait := ss.cfg.RetryMin
	for {
		ss.tries++
		ss.status.update(ss.snapshot(ss.cfg.Now()), ss.cfg.Now())
		if !ss.sleep(wait) {
			ss.sum.Stop = "cancelled"
			return nil, nil
		}
		now := ss.cfg.Now()
		if ss.stopDue(now) {
			return nil, nil
		}
		if err := ss.w.Tick(now); err != nil {
			return nil, err
		}
		wait = min(wait*2, ss.cfg.RetryMax)
		port, err := ss.cfg.Open(ss.path, ss.cfg.Mode)
		if err != nil {
			continue
		}
		ss.port = port
		rd := newChunkReader(port)
		if ss.text == nil {
			ss.s.reconnected()
			if err := ss.handshake(rd, false); err != nil {
				rd.stop()
				port.Close()
				var we *capture.WriteError
				if errors.As(err, &we) {
					return nil, err
				}
				continue
			}
		}
		ss.sum.Reconnects++
		ss.setLink(LinkFlowing, ss.cfg.Now())
		ss.status.note("%s is back; recording goes on in the same file", ss.path)
		return rd, nil
	}
}

func (ss *session) snapshot(now time.Time) Snapshot {
	sn := Snapshot{Elapsed: now.Sub(ss.begun), Port: ss.path}
	if ss.w != nil {
		sn.FileBytes = ss.w.Size()
	}
	if ss.s != nil {
		st := ss.s.stats
		sn.Samples, sn.Lost, sn.BadFrames = st.Samples, st.Lost, st.BadFrames
		sn.VoltsNow, sn.HaveVolts = ss.s.nowV, ss.s.haveV
		sn.Firing = ss.s.fire.Firing()
		sn.Cycles = ss.s.fire.Cycles()
		sn.LastPeriodS, sn.HavePeriod = ss.s.fire.LastPeriod()
	}
	sn.Reconnects = ss.sum.Reconnects
	sn.Link, sn.Tries = ss.link, ss.tries
	if ss.link != LinkFlowing {
		sn.For = max(now.Sub(ss.since), 0)
	}
	return sn
}
