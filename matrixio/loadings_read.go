package matrixio

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"

	"github.com/klauspost/compress/gzip"
)

// PCAModel is a finished PCA read back from its output files so that new
// samples can be placed on its axes (see randsvd.Project).
//
// Convention (the one clinal pca writes): marker j of the model has the
// standardization z = (g - 2 Freq[j]) / Scale[j], where g counts copies of
// the allele Counted[j] (missing calls give z = 0), and loadings v_jk with
// sum_j v_jk^2 = 1 for every PC k. A sample with standardized vector z has
// score_k = (z . v_k) / sqrt(MarkersUsed * Eigenvalues[k]); for a sample of
// the fit this is its eigenvector entry, as written in covariates.tsv.
type PCAModel struct {
	Prefix      string    // the PREFIX the files were read from
	K           int       // number of PCs
	Markers     []Marker  // model markers, in file order
	Counted     []string  // allele counted by the standardization (Ref or Alt of the marker)
	Freq        []float64 // frequency of the counted allele over the fit's samples
	Scale       []float64 // divisor of the standardization, > 0
	Loadings    []float64 // len(Markers) x K, row-major: v_jk
	Eigenvalues []float64 // K eigenvalues of K = Z^T Z / M, descending
	Trace       float64   // trace of K over the fit (sum of all eigenvalues)
	MarkersUsed int       // M of the fit (the M in 1/M)
	SamplesUsed int       // N of the fit
	Scaling     string    // standardization name recorded in report.json ("" if absent)
}

// Loading returns the K loadings of model marker j (a view, not a copy).
func (m *PCAModel) Loading(j int) []float64 { return m.Loadings[j*m.K : (j+1)*m.K] }

// Model file names under a PREFIX, as written by clinal pca.
const (
	ModelLoadingsSuffix = ".loadings.tsv.gz"
	ModelSpectrumSuffix = ".spectrum.tsv"
	ModelReportSuffix   = ".report.json"
)

// maxModelLine bounds one line of the model's text files.
const maxModelLine = 1 << 20

// maxReportBytes bounds report.json.
const maxReportBytes = 64 << 20

// modelReport holds the fields of report.json that projection needs.
type modelReport struct {
	Eigenvalues []float64 `json:"eigenvalues"`
	MarkersUsed *int      `json:"markers_used"`
	SamplesUsed *int      `json:"samples_used"`
	K           *int      `json:"k"`
	Trace       *float64  `json:"trace"`
	Scaling     string    `json:"scaling"`
}

// ReadPCAModel reads PREFIX.loadings.tsv.gz, PREFIX.spectrum.tsv and
// PREFIX.report.json and checks that they agree: the same number of PCs,
// the same eigenvalues, as many loading rows as markers used, well-formed
// numbers everywhere and unit-norm loading columns (a truncated or edited
// file fails that test). Errors are BadInput and name the file and line.
// Memory is one row of K floats per model marker plus the marker table.
func ReadPCAModel(prefix string) (*PCAModel, error) {
	m := &PCAModel{Prefix: prefix, Trace: math.NaN()}
	if err := m.readReport(prefix + ModelReportSuffix); err != nil {
		return nil, err
	}
	if err := m.readSpectrum(prefix + ModelSpectrumSuffix); err != nil {
		return nil, err
	}
	if err := m.readLoadings(prefix + ModelLoadingsSuffix); err != nil {
		return nil, err
	}
	return m, nil
}

func openModelFile(path string) (*os.File, error) {
	f, err := os.Open(path)
	if err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return nil, BadInput("model file %s does not exist (is the --model PREFIX that of a finished clinal pca run?)", path)
		}
		return nil, BadInput("model file %s: %v", path, err)
	}
	return f, nil
}

func (m *PCAModel) readReport(path string) error {
	f, err := openModelFile(path)
	if err != nil {
		return err
	}
	defer f.Close()
	b, err := io.ReadAll(io.LimitReader(f, maxReportBytes+1))
	if err != nil {
		return BadInput("%s: %v", path, err)
	}
	if len(b) > maxReportBytes {
		return BadInput("%s: larger than %d bytes", path, maxReportBytes)
	}
	var r modelReport
	if err := json.Unmarshal(b, &r); err != nil {
		return BadInput("%s: not a valid report: %v", path, err)
	}
	switch {
	case len(r.Eigenvalues) == 0:
		return BadInput("%s: no \"eigenvalues\"", path)
	case r.MarkersUsed == nil:
		return BadInput("%s: no \"markers_used\"", path)
	case r.SamplesUsed == nil:
		return BadInput("%s: no \"samples_used\"", path)
	case *r.MarkersUsed < 1 || *r.MarkersUsed > MaxMarkers:
		return BadInput("%s: markers_used %d out of range", path, *r.MarkersUsed)
	case *r.SamplesUsed < 2 || *r.SamplesUsed > MaxSamples:
		return BadInput("%s: samples_used %d out of range", path, *r.SamplesUsed)
	case r.K != nil && *r.K != len(r.Eigenvalues):
		return BadInput("%s: k %d but %d eigenvalues", path, *r.K, len(r.Eigenvalues))
	}
	for i, v := range r.Eigenvalues {
		if !(v > 0) || math.IsInf(v, 0) {
			return BadInput("%s: eigenvalue %d is %v, want a positive finite number", path, i+1, v)
		}
	}
	m.K = len(r.Eigenvalues)
	m.Eigenvalues = r.Eigenvalues
	m.MarkersUsed = *r.MarkersUsed
	m.SamplesUsed = *r.SamplesUsed
	m.Scaling = r.Scaling
	if r.Trace != nil {
		if !(*r.Trace > 0) || math.IsInf(*r.Trace, 0) {
			return BadInput("%s: trace %v, want a positive finite number", path, *r.Trace)
		}
		m.Trace = *r.Trace
	}
	return nil
}

// modelLineReader yields lines without their newline, with a line number and
// a length bound.
type modelLineReader struct {
	path string
	br   *bufio.Reader
	line int
}

func (lr *modelLineReader) next() ([]byte, error) {
	b, err := lr.br.ReadSlice('\n')
	if errors.Is(err, bufio.ErrBufferFull) {
		return nil, BadInput("%s:%d: line longer than %d bytes", lr.path, lr.line+1, maxModelLine)
	}
	if err != nil && !(errors.Is(err, io.EOF) && len(b) > 0) {
		if errors.Is(err, io.EOF) {
			return nil, io.EOF
		}
		return nil, BadInput("%s:%d: %v", lr.path, lr.line+1, err)
	}
	lr.line++
	b = bytes.TrimSuffix(b, []byte{'\n'})
	b = bytes.TrimSuffix(b, []byte{'\r'})
	return b, nil
}

func (m *PCAModel) readSpectrum(path string) error {
	f, err := openModelFile(path)
	if err != nil {
		return err
	}
	defer f.Close()
	lr := &modelLineReader{path: path, br: bufio.NewReaderSize(f, maxModelLine)}
	hdr, err := lr.next()
	if err != nil {
		return BadInput("%s:1: empty file, want the header %q", path, SpectrumHeader)
	}
	if string(hdr) != SpectrumHeader {
		return BadInput("%s:1: header %q, want %q", path, truncate(string(hdr)), SpectrumHeader)
	}
	ncol := strings.Count(SpectrumHeader, "\t") + 1
	rows := 0
	for {
		b, err := lr.next()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return err
		}
		fs := strings.Split(string(b), "\t")
		if len(fs) != ncol {
			return BadInput("%s:%d: %d fields, want %d", path, lr.line, len(fs), ncol)
		}
		rows++
		if rows > m.K {
			return BadInput("%s:%d: more PCs than the %d eigenvalues of %s", path, lr.line, m.K, m.Prefix+ModelReportSuffix)
		}
		if pc, err := strconv.Atoi(fs[0]); err != nil || pc != rows {
			return BadInput("%s:%d: pc %q, want %d", path, lr.line, truncate(fs[0]), rows)
		}
		ev, err := strconv.ParseFloat(fs[1], 64)
		if err != nil {
			return BadInput("%s:%d: eigenvalue %q is not a number", path, lr.line, truncate(fs[1]))
		}
		if want := m.Eigenvalues[rows-1]; math.Abs(ev-want) > 1e-12*math.Abs(want) {
			return BadInput("%s:%d: eigenvalue %v differs from %v in %s (files of different runs?)",
				path, lr.line, ev, want, m.Prefix+ModelReportSuffix)
		}
		if math.IsNaN(m.Trace) && rows == 1 {
			vf, err := strconv.ParseFloat(fs[2], 64)
			if err != nil || !(vf > 0) || vf > 1 {
				return BadInput("%s:%d: variance_fraction %q, want a number in (0, 1]", path, lr.line, truncate(fs[2]))
			}
			m.Trace = ev / vf
		}
	}
	if rows != m.K {
		return BadInput("%s: %d PCs, but %s has %d eigenvalues", path, rows, m.Prefix+ModelReportSuffix, m.K)
	}
	return nil
}

func (m *PCAModel) readLoadings(path string) error {
	f, err := openModelFile(path)
	if err != nil {
		return err
	}
	defer f.Close()
	zr, err := gzip.NewReader(bufio.NewReaderSize(f, 1<<16))
	if err != nil {
		return BadInput("%s: not a gzip file: %v", path, err)
	}
	defer zr.Close()
	lr := &modelLineReader{path: path, br: bufio.NewReaderSize(zr, maxModelLine)}
	hdr, err := lr.next()
	if err != nil {
		if errors.Is(err, io.EOF) {
			return BadInput("%s:1: empty file, want a header starting %q", path, LoadingsHeaderStart)
		}
		return err
	}
	var want strings.Builder
	want.WriteString(LoadingsHeaderStart)
	for k := 1; k <= m.K; k++ {
		fmt.Fprintf(&want, "\tPC%d", k)
	}
	if string(hdr) != want.String() {
		return BadInput("%s:1: header %q, want %q (%d PCs as in %s)", path, truncate(string(hdr)), truncate(want.String()),
			m.K, m.Prefix+ModelReportSuffix)
	}
	nfix := strings.Count(LoadingsHeaderStart, "\t") + 1
	ncol := nfix + m.K
	capHint := min(m.MarkersUsed, 1<<20)
	m.Markers = make([]Marker, 0, capHint)
	m.Counted = make([]string, 0, capHint)
	m.Freq = make([]float64, 0, capHint)
	m.Scale = make([]float64, 0, capHint)
	m.Loadings = make([]float64, 0, capHint*m.K)
	norm := make([]float64, m.K)
	fs := make([]string, 0, ncol)
	for {
		b, err := lr.next()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return err
		}
		if len(m.Markers) == m.MarkersUsed {
			return BadInput("%s:%d: more marker rows than the %d markers_used of %s", path, lr.line, m.MarkersUsed, m.Prefix+ModelReportSuffix)
		}
		fs = modelSplitTabs(fs[:0], string(b))
		if len(fs) != ncol {
			return BadInput("%s:%d: %d fields, want %d", path, lr.line, len(fs), ncol)
		}
		pos, err := strconv.ParseInt(fs[1], 10, 64)
		if err != nil || pos < 0 {
			return BadInput("%s:%d: position %q is not a non-negative integer", path, lr.line, truncate(fs[1]))
		}
		mk := Marker{Chrom: fs[0], Pos: pos, ID: fs[2], Ref: fs[3], Alt: fs[4]}
		for _, c := range []struct{ kind, v string }{{"chrom", mk.Chrom}, {"id", mk.ID}, {"ref", mk.Ref}, {"alt", mk.Alt}, {"allele", fs[5]}} {
			if c.v == "" {
				return BadInput("%s:%d: empty %s", path, lr.line, c.kind)
			}
		}
		if fs[5] != mk.Ref && fs[5] != mk.Alt {
			return BadInput("%s:%d: counted allele %q is neither REF %q nor ALT %q", path, lr.line,
				truncate(fs[5]), truncate(mk.Ref), truncate(mk.Alt))
		}
		freq, err := modelParseFinite(fs[6])
		if err != nil {
			return BadInput("%s:%d: freq: %v", path, lr.line, err)
		}
		scale, err := modelParseFinite(fs[7])
		if err != nil || !(scale > 0) {
			return BadInput("%s:%d: scale %q, want a positive number", path, lr.line, truncate(fs[7]))
		}
		for k := 0; k < m.K; k++ {
			v, err := modelParseFinite(fs[nfix+k])
			if err != nil {
				return BadInput("%s:%d: PC%d: %v", path, lr.line, k+1, err)
			}
			m.Loadings = append(m.Loadings, v)
			norm[k] += v * v
		}
		m.Markers = append(m.Markers, mk)
		m.Counted = append(m.Counted, fs[5])
		m.Freq = append(m.Freq, freq)
		m.Scale = append(m.Scale, scale)
	}
	if len(m.Markers) != m.MarkersUsed {
		return BadInput("%s: %d marker rows, but %s says %d markers were used (truncated file, or files of different runs?)",
			path, len(m.Markers), m.Prefix+ModelReportSuffix, m.MarkersUsed)
	}
	// The loadings of each PC have unit norm over the markers (v = Z u /
	// sqrt(M lambda) and u' K u = lambda for a Ritz pair), so a file that
	// was cut or mixed up shows here.
	for k, s := range norm {
		if math.Abs(s-1) > 1e-6 {
			return BadInput("%s: loadings of PC%d have squared norm %v, not 1 (edited file, or files of different runs?)", path, k+1, s)
		}
	}
	return nil
}

// modelSplitTabs appends the tab-separated fields of s to dst.
func modelSplitTabs(dst []string, s string) []string {
	for {
		i := strings.IndexByte(s, '\t')
		if i < 0 {
			return append(dst, s)
		}
		dst = append(dst, s[:i])
		s = s[i+1:]
	}
}

func modelParseFinite(s string) (float64, error) {
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("%q is not a finite number", truncate(s))
	}
	return v, nil
}
