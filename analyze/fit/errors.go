package fit

import (
	"errors"
	"fmt"
)

// Sentinel errors. Compare with errors.Is.
var (
	// ErrNotConverged: the solver stopped before meeting a convergence test. The Result
	// returned with it holds the best point found.
	ErrNotConverged = errors.New("fit: not converged")
	// ErrInput: the problem or the data are malformed (sizes, NaN, too few points).
	ErrInput = errors.New("fit: bad input")
	// ErrNotIdentifiable: the data do not determine the requested quantity (for example,
	// no exponential approach in the data).
	ErrNotIdentifiable = errors.New("fit: not identifiable")
)

// StatusError reports an unsuccessful termination.
type StatusError struct {
	Status Status
}

func (e *StatusError) Error() string {
	return "fit: not converged: " + e.Status.String()
}

// Unwrap returns ErrNotConverged.
func (e *StatusError) Unwrap() error { return ErrNotConverged }

func inputErrorf(format string, args ...any) error {
	return fmt.Errorf("%w: "+format, append([]any{ErrInput}, args...)...)
}

// errorf returns an error wrapping sentinel, with the message "fit: " + format.
func errorf(sentinel error, format string, args ...any) error {
	return &wrapped{msg: "fit: " + fmt.Sprintf(format, args...), err: sentinel}
}

type wrapped struct {
	msg string
	err error
}

func (w *wrapped) Error() string { return w.msg }
func (w *wrapped) Unwrap() error { return w.err }
