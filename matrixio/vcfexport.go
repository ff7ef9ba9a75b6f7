package matrixio

import (
	"bufio"
	"context"
	"fmt"
	"strconv"
	"strings"
	"time"
)

// ExportOptions configure ExportVCF.
type ExportOptions struct {
	// KeepSamplesFile names a file of sample IDs to write, one per line
	// (the first tab-separated field; blank lines and lines starting with
	// '#' are ignored). Samples are written in store order. Empty: all.
	KeepSamplesFile string
	// Chromosomes is a comma-separated list of chromosome names and
	// numeric ranges ("1-22,X"). Empty: all.
	Chromosomes string
	// Threads is the number of chunk decoders and BGZF compressors
	// (default 1).
	Threads int
}

// ExportSummary reports what ExportVCF wrote.
type ExportSummary struct {
	Output  string  `json:"output"`
	Field   string  `json:"field"`
	Samples int     `json:"samples"`
	Markers int     `json:"markers"`
	Seconds float64 `json:"seconds"`
}

// ExportVCF writes the store at path, or the samples and chromosomes
// selected by opt, to a BGZF-compressed VCF 4.2 file: GT (unphased, 0/0
// 0/1 1/1 ./.) for a genotype store, DS for a float store (NaN as '.').
// Records carry the marker identity as stored; QUAL, FILTER and INFO are
// '.'. The output is written atomically.
func ExportVCF(ctx context.Context, path, out string, opt ExportOptions) (*ExportSummary, error) {
	t0 := time.Now()
	if err := CheckOutputPath(out); err != nil {
		return nil, err
	}
	st, err := Open(path)
	if err != nil {
		return nil, err
	}
	defer st.Close()
	if opt.Threads < 1 {
		opt.Threads = 1
	}
	all := st.Samples()
	keep := make([]int, 0, len(all))
	if opt.KeepSamplesFile != "" {
		ids, err := vcfReadIDList(ctx, opt.KeepSamplesFile)
		if err != nil {
			return nil, err
		}
		index := make(map[string]int, len(all))
		for i, s := range all {
			index[s] = i
		}
		want := make([]bool, len(all))
		for _, id := range ids {
			i, ok := index[id.id]
			if !ok {
				return nil, BadInput("%s:%d: sample %q is not in %s", opt.KeepSamplesFile, id.line, truncate(id.id), path)
			}
			want[i] = true
		}
		for i, w := range want {
			if w {
				keep = append(keep, i)
			}
		}
		if len(keep) == 0 {
			return nil, BadInput("%s: no sample IDs listed", opt.KeepSamplesFile)
		}
	} else {
		for i := range all {
			keep = append(keep, i)
		}
	}
	names := make([]string, len(keep))
	for k, i := range keep {
		names[k] = all[i]
	}
	chromOK, err := vcfChromFilter(opt.Chromosomes)
	if err != nil {
		return nil, err
	}
	var chunks []int
	nsel := 0
	for c := 0; c < st.NumChunks(); c++ {
		first, n := st.ChunkSpan(c)
		any := false
		for j := first; j < first+n; j++ {
			if chromOK(st.Marker(j).Chrom) {
				any = true
				nsel++
			}
		}
		if any {
			chunks = append(chunks, c)
		}
	}
	if nsel == 0 {
		return nil, BadInput("%s: no markers on chromosomes %q", path, opt.Chromosomes)
	}
	field := "GT"
	if st.Codec() == CodecFloat32 {
		field = "DS"
	}
	w, err := CreateVCF(out, names, VCFWriterOptions{Source: path, Threads: opt.Threads, Field: field})
	if err != nil {
		return nil, err
	}
	N := st.NumSamples()
	rb := st.RowBytes()
	full := make([]byte, N)
	g := make([]byte, len(keep))
	fullF := make([]float32, N)
	x := make([]float32, len(keep))
	subset := len(keep) != N
	err = st.Stream(ctx, chunks, opt.Threads, func(c *Chunk) error {
		for j := 0; j < c.N; j++ {
			m := st.Marker(c.First + j)
			if !chromOK(m.Chrom) {
				continue
			}
			row := c.Row(j, rb)
			var err error
			if field == "GT" {
				dst := g
				if subset {
					dst = full
				}
				DecodeGenotypes(row, dst)
				if subset {
					for k, i := range keep {
						g[k] = full[i]
					}
				}
				err = w.Write(m, g)
			} else {
				dst := x
				if subset {
					dst = fullF
				}
				DecodeFloats(row, dst)
				if subset {
					for k, i := range keep {
						x[k] = fullF[i]
					}
				}
				err = w.WriteFloats(m, x)
			}
			if err != nil {
				return err
			}
		}
		return ctx.Err()
	})
	if err != nil {
		w.Abort()
		return nil, err
	}
	if err := w.Close(); err != nil {
		return nil, err
	}
	return &ExportSummary{Output: out, Field: field, Samples: len(keep), Markers: nsel, Seconds: time.Since(t0).Seconds()}, nil
}

type vcfListedID struct {
	id   string
	line int
}

// vcfReadIDList reads a file of IDs, one per line (first tab-separated field).
func vcfReadIDList(ctx context.Context, path string) ([]vcfListedID, error) {
	f, err := OpenInput(ctx, path)
	if err != nil {
		return nil, fmt.Errorf("read sample list: %w", err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 64<<10), 1<<20)
	var ids []vcfListedID
	for ln := 1; sc.Scan(); ln++ {
		s := strings.TrimRight(sc.Text(), "\r")
		if t := strings.IndexByte(s, '\t'); t >= 0 {
			s = s[:t]
		}
		s = strings.TrimSpace(s)
		if s == "" || s[0] == '#' {
			continue
		}
		ids = append(ids, vcfListedID{s, ln})
	}
	if err := sc.Err(); err != nil {
		return nil, BadInput("%s: %v", path, err)
	}
	return ids, nil
}

// vcfChromFilter parses a list such as "1-22,X,MT" into a predicate; an
// empty list accepts every chromosome. A range a-b of integers accepts the
// names a..b, with or without a "chr" prefix; names match exactly or up to
// a "chr" prefix.
func vcfChromFilter(list string) (func(string) bool, error) {
	if strings.TrimSpace(list) == "" {
		return func(string) bool { return true }, nil
	}
	set := map[string]bool{}
	for _, item := range strings.Split(list, ",") {
		item = strings.TrimSpace(item)
		if item == "" {
			continue
		}
		if a, b, ok := strings.Cut(item, "-"); ok {
			lo, err1 := strconv.Atoi(strings.TrimPrefix(a, "chr"))
			hi, err2 := strconv.Atoi(strings.TrimPrefix(b, "chr"))
			if err1 != nil || err2 != nil || lo > hi || hi-lo > 10000 {
				return nil, BadInput("--chromosomes: bad range %q (want e.g. 1-22)", item)
			}
			for v := lo; v <= hi; v++ {
				set[strconv.Itoa(v)] = true
			}
			continue
		}
		set[strings.TrimPrefix(item, "chr")] = true
	}
	return func(c string) bool { return set[strings.TrimPrefix(c, "chr")] }, nil
}
