package qc

import (
	"bufio"
	"context"
	"fmt"
	"io"
	"sort"
	"strconv"
	"strings"

	"github.com/klauspost/compress/gzip"

	"github.com/clinal/clinal/matrixio"
)

// maxLineBytes bounds one line of a list or BED file.
const maxLineBytes = 1 << 20

// openText opens a text file, plain or gzip-compressed (detected from its
// first bytes), with matrixio.OpenInput: a directory is refused and a named
// pipe (process substitution) is read as a stream, its wait for a writer
// ending with ctx.
func openText(ctx context.Context, path string) (io.ReadCloser, error) {
	f, err := matrixio.OpenInput(ctx, path)
	if err != nil {
		return nil, err
	}
	br := bufio.NewReaderSize(f, 1<<16)
	magic, _ := br.Peek(2)
	if len(magic) == 2 && magic[0] == 0x1f && magic[1] == 0x8b {
		zr, err := gzip.NewReader(br)
		if err != nil {
			f.Close()
			return nil, matrixio.BadInput("%s: bad gzip header: %v", path, err)
		}
		return struct {
			io.Reader
			io.Closer
		}{zr, f}, nil
	}
	return struct {
		io.Reader
		io.Closer
	}{br, f}, nil
}

// eachLine calls fn with every line of path (1-based line numbers, line
// without its end). Errors from fn are returned as they are.
func eachLine(ctx context.Context, path string, fn func(line int, text string) error) error {
	rc, err := openText(ctx, path)
	if err != nil {
		return err
	}
	defer rc.Close()
	sc := bufio.NewScanner(rc)
	sc.Buffer(make([]byte, 0, 1<<16), maxLineBytes)
	n := 0
	for sc.Scan() {
		n++
		if err := fn(n, strings.TrimRight(sc.Text(), "\r")); err != nil {
			return err
		}
	}
	if err := sc.Err(); err != nil {
		if err == bufio.ErrTooLong {
			return matrixio.BadInput("%s:%d: line longer than %d bytes", path, n+1, maxLineBytes)
		}
		return matrixio.BadInput("%s: after line %d: %v", path, n, err)
	}
	return nil
}

// SampleList is a parsed keep or drop list.
type SampleList struct {
	Path    string `json:"path"`
	Lines   int    `json:"lines"`   // lines read
	IDs     int    `json:"ids"`     // distinct IDs named
	Matched int    `json:"matched"` // IDs found in the store
	Unknown int    `json:"unknown"` // IDs not in the store
	// FirstUnknown is the first unknown ID with its line, for messages.
	FirstUnknown string `json:"first_unknown,omitempty"`
}

// readSampleList reads a file of sample IDs, one per line: the first field
// (tab or space separated) of each line is the ID; blank lines and lines
// starting with '#' are skipped, so the PREFIX.kept-samples.txt written by
// clinal qc, or the first column of a table, can be given as is. It marks
// in hit the store samples named. IDs not in the store are counted (a
// warning); a list that names no store sample at all is an error.
func readSampleList(ctx context.Context, path, flagName string, index map[string]int, hit []bool) (*SampleList, error) {
	sl := &SampleList{Path: path}
	seen := map[string]bool{}
	err := eachLine(ctx, path, func(line int, text string) error {
		sl.Lines = line
		f := strings.Fields(text)
		if len(f) == 0 || strings.HasPrefix(f[0], "#") {
			return nil
		}
		id := f[0]
		if seen[id] {
			return nil
		}
		seen[id] = true
		sl.IDs++
		if i, ok := index[id]; ok {
			hit[i] = true
			sl.Matched++
		} else {
			sl.Unknown++
			if sl.FirstUnknown == "" {
				sl.FirstUnknown = fmt.Sprintf("%q (line %d)", id, line)
			}
		}
		return nil
	})
	if err != nil {
		if matrixio.IsBadInput(err) {
			return nil, fmt.Errorf("--%s: %w", flagName, err)
		}
		return nil, matrixio.BadInput("--%s %s: %v", flagName, path, err)
	}
	if sl.IDs == 0 {
		return nil, matrixio.BadInput("--%s %s: no sample IDs in the file", flagName, path)
	}
	if sl.Matched == 0 {
		return nil, matrixio.BadInput("--%s %s: none of its %d IDs is a sample of the store (first: %s)", flagName, path, sl.IDs, sl.FirstUnknown)
	}
	return sl, nil
}

// Regions is a set of genomic intervals read from a BED file, by normalized
// chromosome name, sorted and merged.
type Regions struct {
	Path      string `json:"path"`
	Intervals int    `json:"intervals"` // intervals read
	byChrom   map[string][][2]int64
}

// ReadBED reads regions from a BED file (UCSC convention: tab or space
// separated chrom, start, end, further columns ignored; start is 0-based
// and end exclusive, so an interval covers 1-based positions start+1..end).
// Blank lines, '#' comments and "track"/"browser" lines are skipped; plain
// or gzip-compressed. Chromosome names are matched after NormalizeChrom. A
// bad line is a BadInput error naming the file and line.
func ReadBED(path string) (*Regions, error) { return readBED(context.Background(), path) }

// readBED is ReadBED whose wait for the writer of a named pipe ends with ctx.
func readBED(ctx context.Context, path string) (*Regions, error) {
	r := &Regions{Path: path, byChrom: map[string][][2]int64{}}
	err := eachLine(ctx, path, func(line int, text string) error {
		t := strings.TrimSpace(text)
		if t == "" || t[0] == '#' || strings.HasPrefix(t, "track") || strings.HasPrefix(t, "browser") {
			return nil
		}
		f := strings.Fields(t)
		if len(f) < 3 {
			return matrixio.BadInput("%s:%d: want chrom, start and end, found %d field(s)", path, line, len(f))
		}
		start, err1 := strconv.ParseInt(f[1], 10, 64)
		end, err2 := strconv.ParseInt(f[2], 10, 64)
		switch {
		case err1 != nil || start < 0:
			return matrixio.BadInput("%s:%d: bad start %q (want an integer >= 0)", path, line, f[1])
		case err2 != nil || end < 0:
			return matrixio.BadInput("%s:%d: bad end %q (want an integer >= 0)", path, line, f[2])
		case end < start:
			return matrixio.BadInput("%s:%d: end %d before start %d", path, line, end, start)
		}
		c := NormalizeChrom(f[0])
		r.byChrom[c] = append(r.byChrom[c], [2]int64{start, end})
		r.Intervals++
		return nil
	})
	if err != nil {
		if matrixio.IsBadInput(err) {
			return nil, fmt.Errorf("--exclude-regions: %w", err)
		}
		return nil, matrixio.BadInput("--exclude-regions %s: %v", path, err)
	}
	for c, iv := range r.byChrom {
		sort.Slice(iv, func(a, b int) bool { return iv[a][0] < iv[b][0] })
		out := iv[:0]
		for _, x := range iv {
			if x[0] == x[1] {
				continue // empty interval
			}
			if n := len(out); n > 0 && x[0] <= out[n-1][1] {
				out[n-1][1] = max(out[n-1][1], x[1])
				continue
			}
			out = append(out, x)
		}
		r.byChrom[c] = out
	}
	return r, nil
}

// Contains reports whether the 1-based position pos on chromosome chrom
// lies in a region.
func (r *Regions) Contains(chrom string, pos int64) bool {
	iv := r.byChrom[NormalizeChrom(chrom)]
	z := pos - 1 // 0-based
	k := sort.Search(len(iv), func(i int) bool { return iv[i][1] > z })
	return k < len(iv) && iv[k][0] <= z
}
