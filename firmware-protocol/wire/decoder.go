package wire

import (
	"errors"
	"io"
)

// Stats counts what a Decoder has seen. Every call of Next that returns a frame or a
// *FrameError adds one to exactly one of Good, Unknown, BadCRC and Malformed.
type Stats struct {
	Good      int64 // frames of known tags decoded
	Unknown   int64 // frames with valid CRC and syntax but an unknown tag (returned as Unknown)
	BadCRC    int64 // frames whose CRC did not match
	Malformed int64 // cut, too long or bad syntax
	Lost      int64 // sample frames missing from the seq numbers (dropped on the device or lost in transit)
	Skipped   int64 // bytes outside any frame
}

// Decoder reads frames from a stream. Set AllowNoCRC before the first Next.
//
// Next returns one frame at a time. A bad frame comes back as a *FrameError; the stream
// is not broken by it and the next call goes on with the following frame. Read errors
// of the underlying reader (io.EOF at its end) are returned as they are, after every
// complete frame before them; a partial frame stays buffered, so a reader that times
// out and later delivers the rest loses nothing.
type Decoder struct {
	// AllowNoCRC accepts commands without the " *crc" suffix, as a person types them.
	// Device frames always need their CRC. Default false.
	AllowNoCRC bool

	r          io.Reader
	buf        []byte
	start, end int
	off        int64 // stream offset of buf[start]
	stats      Stats
	seq        seqTracker
}

// bufSize holds several maximal frames, so a frame never has to wait for room.
const bufSize = 4096

// maxEmptyReads is how many (0, nil) reads in a row Next tolerates before giving up
// with io.ErrNoProgress, as bufio does.
const maxEmptyReads = 100

// NewDecoder returns a Decoder reading from r.
func NewDecoder(r io.Reader) *Decoder {
	return &Decoder{r: r, buf: make([]byte, bufSize)}
}

// Reset makes d read from r, for example a port opened again after the board was
// unplugged. Bytes buffered from the old reader are dropped (counted as Skipped) and
// offsets start again at 0; the statistics and the seq tracking carry on, so samples
// the board sent while it was away count as Lost.
func (d *Decoder) Reset(r io.Reader) {
	d.stats.Skipped += int64(d.end - d.start)
	d.r, d.start, d.end, d.off = r, 0, 0, 0
}

// Stats returns the counts so far.
func (d *Decoder) Stats() Stats { return d.stats }

// Offset returns the stream offset of the next byte Next will look at.
func (d *Decoder) Offset() int64 { return d.off }

// Next returns the next frame, a *FrameError for a bad one, or the reader's error.
func (d *Decoder) Next() (Frame, error) {
	empty := 0
	atEOF := false
	var readErr error
	for {
		skip, n, ok := split(d.buf[d.start:d.end], atEOF)
		d.start += skip
		d.off += int64(skip)
		d.stats.Skipped += int64(skip)
		if ok {
			return d.frame(n)
		}
		if readErr != nil {
			return nil, readErr
		}
		if d.start > 0 {
			d.end = copy(d.buf, d.buf[d.start:d.end])
			d.start = 0
		}
		m, err := d.r.Read(d.buf[d.end:])
		d.end += m
		switch {
		case err == io.EOF:
			atEOF, readErr = true, err
		case err != nil:
			readErr = err
		case m == 0:
			if empty++; empty >= maxEmptyReads {
				return nil, io.ErrNoProgress
			}
		default:
			empty = 0
		}
	}
}

// frame parses the n-byte token at d.start and does the bookkeeping.
func (d *Decoder) frame(n int) (Frame, error) {
	line := d.buf[d.start : d.start+n]
	off := d.off
	d.start += n
	d.off += int64(n)
	f, reason, err := parse(line, d.AllowNoCRC)
	if err != nil {
		if errors.Is(err, ErrCRC) {
			d.stats.BadCRC++
		} else {
			d.stats.Malformed++
		}
		return nil, newFrameError(off, reason, err, line)
	}
	switch f := f.(type) {
	case Sample:
		d.stats.Lost += d.seq.sample(f.Seq)
	case Average:
		d.stats.Lost += d.seq.sample(f.Seq)
	case BurstBegin:
		d.stats.Lost += d.seq.marker(f.Seq)
	case BurstEnd:
		d.stats.Lost += d.seq.marker(f.Seq)
	case Identity:
		if f.Boot {
			d.seq = seqTracker{}
		}
	case Unknown:
		d.stats.Unknown++
		return f, nil
	}
	d.stats.Good++
	return f, nil
}

// seqTracker counts gaps in the sample sequence numbers. A step back (or a jump of
// 2^31 or more) is taken as a restart of the counter, not as loss.
type seqTracker struct {
	next uint32 // seq expected for the next sample frame
	have bool
}

// sample records a sample frame's seq and returns how many went missing before it.
func (s *seqTracker) sample(seq uint32) int64 {
	lost := s.marker(seq)
	s.next = seq + 1
	return lost
}

// marker records a B or E frame's seq (the seq of the next sample frame).
func (s *seqTracker) marker(seq uint32) int64 {
	var lost int64
	if s.have {
		if gap := seq - s.next; gap < 1<<31 {
			lost = int64(gap)
		}
	}
	s.next, s.have = seq, true
	return lost
}
