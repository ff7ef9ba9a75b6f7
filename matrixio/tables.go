package matrixio

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"

	"github.com/klauspost/compress/flate"
)

// FormatFloat renders a value with 17 significant digits at most (enough to
// round-trip a float64) and NA for NaN, so printed numbers are exactly the
// computed ones.
func FormatFloat(v float64) string {
	if math.IsNaN(v) {
		return "NA"
	}
	return strconv.FormatFloat(v, 'g', -1, 64)
}

// CovariateOptions shape the covariate table for association software.
type CovariateOptions struct {
	// TwoIDColumns writes the sample ID twice (family and individual ID
	// columns), as some association programs expect.
	TwoIDColumns bool
	// IDHeaders are the header names of the ID column(s); default
	// "sample_id" (or "family_id", "sample_id" with TwoIDColumns).
	IDHeaders []string
	// Prefix names the PC columns: Prefix1..PrefixK (default "PC").
	Prefix string
	// Flags, when set, adds a last column with this header and one value
	// per row (e.g. "projected" for outliers placed by projection).
	FlagHeader string
	Flags      []string
}

// WriteCovariates writes the sample scores atomically to path: header
// `sample_id PC1 ... PCk`, tab separated, one row per sample in the order
// given. scores(i, j) returns sample i's score on PC j+1.
func WriteCovariates(path string, ids []string, k int, scores func(i, j int) float64, opt CovariateOptions) error {
	if opt.Prefix == "" {
		opt.Prefix = "PC"
	}
	hdr := opt.IDHeaders
	if len(hdr) == 0 {
		hdr = []string{"sample_id"}
		if opt.TwoIDColumns {
			hdr = []string{"family_id", "sample_id"}
		}
	}
	want := 1
	if opt.TwoIDColumns {
		want = 2
	}
	if len(hdr) != want {
		return BadInput("covariates: %d ID header names for %d ID columns", len(hdr), want)
	}
	if opt.FlagHeader != "" && len(opt.Flags) != len(ids) {
		return fmt.Errorf("covariates: %d flags for %d samples", len(opt.Flags), len(ids))
	}
	return WriteFileAtomic(path, func(w io.Writer) error {
		bw := bufio.NewWriter(w)
		for i, h := range hdr {
			if i > 0 {
				bw.WriteByte('\t')
			}
			bw.WriteString(h)
		}
		for j := 0; j < k; j++ {
			fmt.Fprintf(bw, "\t%s%d", opt.Prefix, j+1)
		}
		if opt.FlagHeader != "" {
			bw.WriteString("\t" + opt.FlagHeader)
		}
		bw.WriteByte('\n')
		for i, id := range ids {
			bw.WriteString(id)
			if opt.TwoIDColumns {
				bw.WriteString("\t" + id)
			}
			for j := 0; j < k; j++ {
				bw.WriteByte('\t')
				bw.WriteString(FormatFloat(scores(i, j)))
			}
			if opt.FlagHeader != "" {
				bw.WriteString("\t" + opt.Flags[i])
			}
			bw.WriteByte('\n')
		}
		return bw.Flush()
	})
}

// SpectrumRow is one line of spectrum.tsv.
type SpectrumRow struct {
	Eigenvalue, VarianceFraction, CumulativeFraction, Residual float64
	Converged                                                  bool
	TWStatistic, TWP                                           float64 // NaN when not computed
}

// SpectrumHeader is the header of spectrum.tsv (design contract).
const SpectrumHeader = "pc\teigenvalue\tvariance_fraction\tcumulative_fraction\tresidual\tconverged\ttw_statistic\ttw_p"

// WriteSpectrum writes spectrum.tsv atomically.
func WriteSpectrum(path string, rows []SpectrumRow) error {
	return WriteFileAtomic(path, func(w io.Writer) error {
		bw := bufio.NewWriter(w)
		bw.WriteString(SpectrumHeader + "\n")
		for i, r := range rows {
			conv := "no"
			if r.Converged {
				conv = "yes"
			}
			fmt.Fprintf(bw, "%d\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n", i+1, FormatFloat(r.Eigenvalue),
				FormatFloat(r.VarianceFraction), FormatFloat(r.CumulativeFraction), FormatFloat(r.Residual),
				conv, FormatFloat(r.TWStatistic), FormatFloat(r.TWP))
		}
		return bw.Flush()
	})
}

// LoadingsWriter streams loadings.tsv.gz: marker identity, the allele
// counted, its frequency, the scale (standard deviation divided out), then
// one column per PC.
type LoadingsWriter struct {
	a   *AtomicFile
	fw  *bufio.Writer // the compressed stream
	gz  *bgzfWriter
	num []byte        // a row, formatted (reused)
	bw  *bufio.Writer // the text
}

// loadingsDeflaters bounds the loadings' compressing goroutines: the
// rows are formatted on a goroutine or a few (the caller's, see
// AppendLoadingsRow), and a few deflaters keep up with them (each holds
// about 1 MiB of deflate state, within the memory plan's reserve for the
// runtime).
const loadingsDeflaters = 4

// loadingsLevel is the loadings' deflate level: Huffman coding alone. The
// text is mostly the digits of shortest float64 forms, where LZ matches
// find little: on the 5,000 x 50,000 benchmark cohort's loadings (14.2 MB
// of text, block by block) Huffman coding alone took 18 ms and kept 47% of
// the bytes, klauspost/compress level 1 84 ms for 42%, level 2 75 ms for
// 42%, level 3 105 ms for 42%. In a whole clinal pca run the loadings and
// plots phase went from 0.18 to 0.14 s (5 alternating runs each), for a
// file 12% larger (6.7 against 6.0 MB).
const loadingsLevel = flate.HuffmanOnly

// LoadingsHeaderStart is the fixed start of the loadings header.
const LoadingsHeaderStart = "chrom\tpos\tid\tref\talt\tallele\tfreq\tscale"

// CreateLoadings starts a loadings file for k PCs, compressed on one
// goroutine (CreateLoadingsThreads).
func CreateLoadings(path string, k int) (*LoadingsWriter, error) {
	return CreateLoadingsThreads(path, k, 1)
}

// CreateLoadingsThreads starts a loadings file for k PCs whose blocks are
// compressed on up to threads goroutines (at most loadingsDeflaters). The
// file is BGZF (see bgzf.go): any gzip reader reads it, and blocks
// deflate in parallel while the caller formats the next rows (a plain
// gzip stream is one serial deflate, which was most of the loadings'
// time).
func CreateLoadingsThreads(path string, k, threads int) (*LoadingsWriter, error) {
	a, err := CreateAtomic(path)
	if err != nil {
		return nil, err
	}
	fw := bufio.NewWriterSize(a, 1<<16)
	gz := newBGZFWriter(fw, loadingsLevel, min(threads, loadingsDeflaters))
	lw := &LoadingsWriter{a: a, fw: fw, gz: gz, bw: bufio.NewWriterSize(gz, 1<<16)}
	lw.bw.WriteString(LoadingsHeaderStart)
	for j := 0; j < k; j++ {
		fmt.Fprintf(lw.bw, "\tPC%d", j+1)
	}
	lw.bw.WriteByte('\n')
	return lw, nil
}

// Write adds one marker: the counted allele is ALT, freq its frequency
// over the kept samples, scale the divisor of the standardization.
func (lw *LoadingsWriter) Write(m Marker, freq, scale float64, v []float64) error {
	lw.num = AppendLoadingsRow(lw.num[:0], m, freq, scale, v)
	_, err := lw.bw.Write(lw.num)
	return err
}

// AppendMarker appends a marker's identity as the tables and the VCF
// writer print it: chrom, pos, id, ref and alt, tab separated.
func AppendMarker(dst []byte, m Marker) []byte {
	dst = append(dst, m.Chrom...)
	dst = append(dst, '\t')
	dst = strconv.AppendInt(dst, m.Pos, 10)
	dst = append(dst, '\t')
	dst = append(dst, m.ID...)
	dst = append(dst, '\t')
	dst = append(dst, m.Ref...)
	dst = append(dst, '\t')
	return append(dst, m.Alt...)
}

// AppendLoadingsRow appends to dst the line Write writes for m (newline
// included). Formatting, most of the work of a loadings file (the
// shortest forms of twelve float64 values a marker), can so be spread
// over goroutines, the lines then written in order with WriteRows.
func AppendLoadingsRow(dst []byte, m Marker, freq, scale float64, v []float64) []byte {
	dst = AppendMarker(dst, m)
	dst = append(dst, '\t')
	dst = append(dst, m.Alt...)
	dst = append(dst, '\t')
	dst = appendFloat(dst, freq)
	dst = append(dst, '\t')
	dst = appendFloat(dst, scale)
	for _, x := range v {
		dst = append(dst, '\t')
		dst = appendFloat(dst, x)
	}
	return append(dst, '\n')
}

// WriteRows writes lines made by AppendLoadingsRow.
func (lw *LoadingsWriter) WriteRows(p []byte) error {
	_, err := lw.bw.Write(p)
	return err
}

// appendFloat appends FormatFloat(v).
func appendFloat(b []byte, v float64) []byte {
	if math.IsNaN(v) {
		return append(b, "NA"...)
	}
	return strconv.AppendFloat(b, v, 'g', -1, 64)
}

// Close finishes and commits the file.
func (lw *LoadingsWriter) Close() error {
	if err := lw.bw.Flush(); err != nil {
		lw.gz.abort()
		lw.a.Discard()
		return err
	}
	if err := lw.gz.Close(); err != nil {
		lw.a.Discard()
		return err
	}
	if err := lw.fw.Flush(); err != nil {
		lw.a.Discard()
		return err
	}
	return lw.a.Commit()
}

// Abort waits for the compressing goroutines, drops their output and
// removes the partial file.
func (lw *LoadingsWriter) Abort() {
	lw.gz.abort()
	lw.a.Discard()
}

// WriteJSON writes v as indented JSON atomically.
func WriteJSON(path string, v any) error {
	return WriteFileAtomic(path, func(w io.Writer) error {
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		return enc.Encode(v)
	})
}
