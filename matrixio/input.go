package matrixio

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
)

// OpenInput opens a file named on the command line for reading, with the
// checks every input needs so that a wrong argument gets a clear one-line
// error rather than a confusing read failure or a hang:
//
//   - a directory is refused with a BadInput error;
//   - a missing or unreadable file returns the open error naming the path
//     (it wraps os.ErrNotExist or os.ErrPermission, which IsBadInput
//     accepts);
//   - a named pipe (made by mkfifo, or the /dev/fd/N of a shell's process
//     substitution) is read as a stream, like standard input. Opening a pipe
//     waits for its writer, as any reader of a pipe does; the wait ends when
//     ctx is cancelled (SIGINT or SIGTERM in clinal), so it never outlasts
//     the command. The goroutine blocked in open(2) is then left behind
//     until a writer appears or the process exits.
//
// Regular files and devices are opened directly.
func OpenInput(ctx context.Context, path string) (*os.File, error) {
	fi, err := os.Stat(path)
	if err != nil {
		return nil, fmt.Errorf("open input: %w", err)
	}
	if fi.IsDir() {
		return nil, BadInput("%s: is a directory, not a file", path)
	}
	if fi.Mode()&os.ModeNamedPipe == 0 {
		f, err := os.Open(path)
		if err != nil {
			return nil, fmt.Errorf("open input: %w", err)
		}
		return f, nil
	}
	type opened struct {
		f   *os.File
		err error
	}
	ch := make(chan opened, 1)
	go func() {
		f, err := os.Open(path)
		ch <- opened{f, err}
	}()
	select {
	case o := <-ch:
		if o.err != nil {
			return nil, fmt.Errorf("open input: %w", o.err)
		}
		return o.f, nil
	case <-ctx.Done():
		go func() {
			if o := <-ch; o.f != nil {
				o.f.Close()
			}
		}()
		return nil, fmt.Errorf("%s: waiting for a writer on the named pipe: %w", path, ctx.Err())
	}
}

// CheckOutputPath refuses, before any work is done, an output path that
// cannot be written: an existing directory, or a name whose directory does
// not exist. Errors are BadInput (exit code 2).
func CheckOutputPath(path string) error {
	if fi, err := os.Stat(path); err == nil && fi.IsDir() {
		return BadInput("output %s: is a directory", path)
	}
	return CheckOutputPrefix(path)
}

// CheckOutputPrefix refuses, before any work is done, an output prefix
// (PREFIX.covariates.tsv, ...) or path whose directory does not exist or
// is not a directory. Errors are BadInput (exit code 2).
func CheckOutputPrefix(path string) error {
	if path == "" {
		return BadInput("no output path given")
	}
	dir := filepath.Dir(path)
	fi, err := os.Stat(dir)
	switch {
	case errors.Is(err, os.ErrNotExist):
		return BadInput("output %s: directory %s does not exist", path, dir)
	case err != nil:
		return BadInput("output %s: %v", path, err)
	case !fi.IsDir():
		return BadInput("output %s: %s is not a directory", path, dir)
	}
	return nil
}

// fileKind names the type of a non-regular file for messages.
func fileKind(m os.FileMode) string {
	switch {
	case m.IsDir():
		return "directory"
	case m&os.ModeNamedPipe != 0:
		return "named pipe"
	case m&os.ModeSocket != 0:
		return "socket"
	case m&os.ModeDevice != 0:
		return "device"
	}
	return "special file"
}
