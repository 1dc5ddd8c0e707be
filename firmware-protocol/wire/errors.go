package wire

import (
	"errors"
	"strconv"
)

// Sentinel errors wrapped by every *FrameError; test with errors.Is.
var (
	// ErrCRC: the frame's CRC did not match its bytes.
	ErrCRC = errors.New("wire: CRC mismatch")
	// ErrMalformed: the bytes are not a frame of this protocol (cut line, bad syntax,
	// missing or bad field, line too long).
	ErrMalformed = errors.New("wire: malformed frame")
)

// FrameError reports one bad frame. It never ends a stream: the Decoder's next call
// goes on with the following frame.
type FrameError struct {
	Offset int64  // stream offset of the frame's first byte (0 from Parse)
	Reason string // what was wrong, for people
	Err    error  // ErrCRC or ErrMalformed
	Line   []byte // the bad frame's bytes (a copy), so nothing is lost
}

func newFrameError(off int64, reason string, err error, line []byte) *FrameError {
	return &FrameError{Offset: off, Reason: reason, Err: err, Line: append([]byte(nil), line...)}
}

func (e *FrameError) Error() string {
	kind := "malformed frame"
	if e.Err == ErrCRC {
		kind = "CRC mismatch"
	}
	return "wire: " + kind + " at byte " + strconv.FormatInt(e.Offset, 10) + ": " + e.Reason
}

// Unwrap returns ErrCRC or ErrMalformed.
func (e *FrameError) Unwrap() error { return e.Err }
