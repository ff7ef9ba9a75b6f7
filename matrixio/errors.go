package matrixio

import (
	"errors"
	"fmt"
	"os"
)

// BadInputError marks an error caused by the input data or the arguments
// rather than by the machine: the command exits with code 2 for it. Its
// message names the file and the line, record or chunk at fault.
type BadInputError struct{ Err error }

func (e *BadInputError) Error() string { return e.Err.Error() }
func (e *BadInputError) Unwrap() error { return e.Err }

// BadInput formats a BadInputError (use %w to wrap a cause).
func BadInput(format string, a ...any) error {
	return &BadInputError{Err: fmt.Errorf(format, a...)}
}

// IsBadInput reports whether err was caused by bad input: a BadInputError,
// a corrupt, incomplete or foreign store, or a missing input file.
func IsBadInput(err error) bool {
	var b *BadInputError
	return errors.As(err, &b) || errors.Is(err, ErrCorrupt) || errors.Is(err, ErrChecksum) ||
		errors.Is(err, ErrIncomplete) || errors.Is(err, ErrNotStore) ||
		errors.Is(err, os.ErrNotExist) || errors.Is(err, os.ErrPermission)
}
