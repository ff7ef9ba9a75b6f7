package randsvd

import (
	"os"

	"golang.org/x/sys/unix"
)

// openUnnamed opens a file in dir that has no name at all (O_TMPFILE), so
// not even a kill between creating and unlinking can leave it behind.
// Filesystems without O_TMPFILE return an error and newStash falls back.
func openUnnamed(dir string) (*os.File, error) {
	if dir == "" {
		dir = os.TempDir()
	}
	fd, err := unix.Open(dir, unix.O_TMPFILE|unix.O_RDWR|unix.O_CLOEXEC, 0o600)
	if err != nil {
		return nil, err
	}
	return os.NewFile(uintptr(fd), dir+"/(loadings stash)"), nil
}
