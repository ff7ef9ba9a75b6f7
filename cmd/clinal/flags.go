package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"strconv"
	"strings"

	"github.com/clinal/clinal/matrixio"
)

// parseArgs parses flags that may appear before, between or after the
// positional arguments (clinal pca STORE -k 10 -o out) and returns the
// positional ones. A lone "-" is positional (stdin).
func parseArgs(fs *flag.FlagSet, args []string) (pos []string, err error) {
	fs.SetOutput(io.Discard)
	var rest []string
	for i, a := range args {
		if a == "--" {
			args, rest = args[:i], args[i+1:]
			break
		}
	}
	defer func() { pos = append(pos, rest...) }()
	for {
		if err := fs.Parse(args); err != nil {
			if errors.Is(err, flag.ErrHelp) {
				var b strings.Builder
				fmt.Fprintf(&b, "usage of clinal %s:\n", fs.Name())
				fs.SetOutput(&b)
				fs.PrintDefaults()
				return nil, &helpRequest{text: b.String()}
			}
			return nil, usage("%s: %v", fs.Name(), err)
		}
		args = fs.Args()
		if len(args) == 0 {
			return pos, nil
		}
		pos = append(pos, args[0])
		args = args[1:]
	}
}

// helpRequest is returned for -h/--help: the command prints text and exits 0.
type helpRequest struct{ text string }

func (h *helpRequest) Error() string { return "help requested" }

// usage makes a bad-usage error (exit code 2).
func usage(format string, a ...any) error { return matrixio.BadInput(format, a...) }

// byteSize is a flag.Value for sizes such as 512MiB, 8G, 100000.
type byteSize int64

func (b *byteSize) String() string { return strconv.FormatInt(int64(*b), 10) }

func (b *byteSize) Set(s string) error {
	v, err := parseSize(s)
	if err != nil {
		return err
	}
	*b = byteSize(v)
	return nil
}

// parseSize reads a byte size with an optional unit: B, K/KB/KiB, M/MB/MiB,
// G/GB/GiB, T/TB/TiB (K, M, G and T are binary, 1024-based; KB, MB, GB, TB
// decimal).
func parseSize(s string) (int64, error) {
	t := strings.TrimSpace(s)
	i := len(t)
	for i > 0 && (t[i-1] < '0' || t[i-1] > '9') && t[i-1] != '.' {
		i--
	}
	num, unit := t[:i], strings.ToLower(t[i:])
	v, err := strconv.ParseFloat(num, 64)
	if err != nil || v < 0 {
		return 0, fmt.Errorf("bad size %q (want e.g. 512MiB, 8GiB)", s)
	}
	mult := map[string]float64{"": 1, "b": 1,
		"k": 1 << 10, "kib": 1 << 10, "kb": 1e3,
		"m": 1 << 20, "mib": 1 << 20, "mb": 1e6,
		"g": 1 << 30, "gib": 1 << 30, "gb": 1e9,
		"t": 1 << 40, "tib": 1 << 40, "tb": 1e12}[unit]
	if mult == 0 {
		return 0, fmt.Errorf("bad size unit in %q (want B, KiB, MiB, GiB, TiB)", s)
	}
	return int64(v * mult), nil
}
