//go:build !linux

package randsvd

import (
	"errors"
	"os"
)

// openUnnamed is only on Linux (O_TMPFILE); elsewhere newStash makes a
// named temporary file and unlinks it.
func openUnnamed(string) (*os.File, error) { return nil, errors.ErrUnsupported }
