package profile

import (
	"errors"
	"fmt"
	"math"
)

var inf = math.Inf(1)

// Sentinel errors wrapped by every *Error; test for them with errors.Is.
var (
	ErrSyntax     = errors.New("profile: not valid TOML")
	ErrUnknownKey = errors.New("profile: unknown key")
	ErrMissing    = errors.New("profile: required key missing")
	ErrType       = errors.New("profile: wrong type of value")
	ErrValue      = errors.New("profile: impossible value")
)

// Error is a problem in a profile file, at a line and key.
// Its message reads like a compiler's: "wren.toml:12: storage.cap_f: must be more than zero".
type Error struct {
	File string // the file name as given to Load or Parse
	Line int    // 1-based line of the key (or of its table); 0 when the file has no such line
	Key  string // dotted key, with [i] for the i-th [[channel]] (counted from 0); "" for the whole file
	Msg  string // what was expected
	Err  error  // the cause: one of the Err* sentinels, or an error it wraps
}

func (e *Error) Error() string {
	s := e.File
	if e.Line > 0 {
		s += fmt.Sprintf(":%d", e.Line)
	}
	if e.Key != "" {
		s += ": " + e.Key
	}
	return s + ": " + e.Msg
}

func (e *Error) Unwrap() error { return e.Err }

// kindError joins a sentinel with the cause so that errors.Is finds both.
type kindError struct {
	kind  error
	cause error
}

func (e *kindError) Error() string   { return e.kind.Error() + ": " + e.cause.Error() }
func (e *kindError) Unwrap() []error { return []error{e.kind, e.cause} }
