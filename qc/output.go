package qc

import (
	"bufio"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"

	"github.com/klauspost/compress/gzip"

	"github.com/clinal/clinal/matrixio"
)

// Output file suffixes, appended to the PREFIX given to Write and Load.
const (
	SuffixReport      = ".qc.json"
	SuffixSampleStats = ".sample-stats.tsv"
	SuffixMarkerStats = ".marker-stats.tsv.gz"
	SuffixKeptSamples = ".kept-samples.txt"
	SuffixKeptMarkers = ".kept-markers.txt"
)

// Table headers. The first columns are the command-line contract; the
// counts after them let Load rebuild the selection without a pass.
var (
	sampleHeader      = []string{"sample_id", "call_rate", "kept", "why", "missing"}
	markerHeader      = []string{"chrom", "pos", "id", "ref", "alt", "call_rate", "alt_freq", "maf", "hwe_p", "kept", "why", "hom_ref", "het", "hom_alt", "missing"}
	markerHeaderFloat = []string{"dosage_sum", "dosage_sumsq"}
)

// Files returns the paths Write creates for prefix.
func Files(prefix string) []string {
	return []string{prefix + SuffixReport, prefix + SuffixSampleStats, prefix + SuffixMarkerStats,
		prefix + SuffixKeptSamples, prefix + SuffixKeptMarkers}
}

func storeInfo(st *matrixio.Store) StoreInfo {
	return StoreInfo{Path: st.Path(), Bytes: st.Size(), Samples: st.NumSamples(), Markers: st.NumMarkers(),
		Codec: string(st.Codec()), Fingerprint: st.Fingerprint(),
		SampleSHA256: sampleDigest(st.Samples()), MarkerSHA256: markerDigest(st)}
}

// sampleDigest is the SHA-256 of the sample IDs, each followed by '\n'.
func sampleDigest(ids []string) string {
	h := sha256.New()
	bw := bufio.NewWriterSize(h, 1<<16)
	for _, id := range ids {
		bw.WriteString(id)
		bw.WriteByte('\n')
	}
	bw.Flush()
	return hex.EncodeToString(h.Sum(nil))
}

// markerDigest is the SHA-256 of the marker table as lines
// "chrom\tpos\tid\tref\talt\n".
func markerDigest(st *matrixio.Store) string {
	h := sha256.New()
	bw := bufio.NewWriterSize(h, 1<<16)
	var b []byte
	for j := range st.NumMarkers() {
		b = matrixio.AppendMarker(b[:0], st.Marker(j))
		b = append(b, '\n')
		bw.Write(b)
	}
	bw.Flush()
	return hex.EncodeToString(h.Sum(nil))
}

func yesNo(k bool) string {
	if k {
		return "yes"
	}
	return "no"
}

// Write writes the QC outputs for prefix (see Files): the report as JSON,
// the per-sample and per-marker statistics (call rates and frequencies
// over the kept samples, HWE p, kept yes/no, why: the first filter that
// removed it, "." when kept) and the kept lists: PREFIX.kept-samples.txt,
// one sample ID per line (usable as --keep-samples), and
// PREFIX.kept-markers.txt, one kept marker per line as chrom, pos, id,
// ref, alt, tab separated. Every file is written under a temporary name and
// renamed into place only when all of them are complete, so a failure
// leaves none of them.
func (s *Selection) Write(prefix string, st *matrixio.Store) error {
	var files []*matrixio.AtomicFile
	fail := func(err error) error {
		for _, f := range files {
			f.Discard()
		}
		return err
	}
	create := func(path string) (*matrixio.AtomicFile, *bufio.Writer, error) {
		f, err := matrixio.CreateAtomic(path)
		if err != nil {
			return nil, nil, err
		}
		files = append(files, f)
		return f, bufio.NewWriterSize(f, 1<<16), nil
	}
	paths := Files(prefix)

	// Report.
	_, bw, err := create(paths[0])
	if err != nil {
		return fail(err)
	}
	enc := json.NewEncoder(bw)
	enc.SetIndent("", "  ")
	if err := enc.Encode(s.Report); err != nil {
		return fail(fmt.Errorf("write %s: %w", paths[0], err))
	}
	if err := bw.Flush(); err != nil {
		return fail(fmt.Errorf("write %s: %w", paths[0], err))
	}

	// Samples and kept samples.
	_, bs, err := create(paths[1])
	if err != nil {
		return fail(err)
	}
	_, bk, err := create(paths[3])
	if err != nil {
		return fail(err)
	}
	bs.WriteString(strings.Join(sampleHeader, "\t") + "\n")
	miss := st.SampleMissing()
	for i, id := range st.Samples() {
		fmt.Fprintf(bs, "%s\t%s\t%s\t%s\t%d\n", id, matrixio.FormatFloat(s.SampleCallRate[i]), yesNo(s.SampleKept[i]), s.SampleWhy[i], miss[i])
		if s.SampleKept[i] {
			bk.WriteString(id)
			bk.WriteByte('\n')
		}
	}
	if err := bs.Flush(); err != nil {
		return fail(fmt.Errorf("write %s: %w", paths[1], err))
	}
	if err := bk.Flush(); err != nil {
		return fail(fmt.Errorf("write %s: %w", paths[3], err))
	}

	// Markers and kept markers.
	_, bm, err := create(paths[2])
	if err != nil {
		return fail(err)
	}
	zw, _ := gzip.NewWriterLevel(bm, gzip.DefaultCompression)
	zb := bufio.NewWriterSize(zw, 1<<16)
	_, bkm, err := create(paths[4])
	if err != nil {
		return fail(err)
	}
	float := st.Codec() == matrixio.CodecFloat32
	hdr := markerHeader
	if float {
		hdr = append(append([]string{}, markerHeader...), markerHeaderFloat...)
	}
	zb.WriteString(strings.Join(hdr, "\t") + "\n")
	nk := s.NumKeptSamples()
	var line []byte
	for j := range st.NumMarkers() {
		m := st.Marker(j)
		c := s.Counts[j]
		ms := Stats(c, nk, float)
		line = matrixio.AppendMarker(line[:0], m)
		for _, v := range []float64{ms.CallRate, ms.AltFreq, ms.MAF, s.HWEP[j]} {
			line = append(line, '\t')
			line = append(line, matrixio.FormatFloat(v)...)
		}
		line = append(line, '\t')
		line = append(line, yesNo(s.MarkerKept[j])...)
		line = append(line, '\t')
		line = append(line, s.MarkerWhy[j].String()...)
		for _, v := range []uint32{c.HomRef, c.Het, c.HomAlt, c.Missing} {
			line = append(line, '\t')
			line = strconv.AppendUint(line, uint64(v), 10)
		}
		if float {
			line = append(line, '\t')
			line = strconv.AppendFloat(line, c.Sum, 'g', -1, 64)
			line = append(line, '\t')
			line = strconv.AppendFloat(line, c.SumSq, 'g', -1, 64)
		}
		line = append(line, '\n')
		zb.Write(line)
		if s.MarkerKept[j] {
			line = matrixio.AppendMarker(line[:0], m)
			line = append(line, '\n')
			bkm.Write(line)
		}
	}
	if err := zb.Flush(); err != nil {
		return fail(fmt.Errorf("write %s: %w", paths[2], err))
	}
	if err := zw.Close(); err != nil {
		return fail(fmt.Errorf("write %s: %w", paths[2], err))
	}
	if err := bm.Flush(); err != nil {
		return fail(fmt.Errorf("write %s: %w", paths[2], err))
	}
	if err := bkm.Flush(); err != nil {
		return fail(fmt.Errorf("write %s: %w", paths[4], err))
	}
	for i, f := range files {
		if err := f.Commit(); err != nil {
			for _, g := range files[i+1:] {
				g.Discard()
			}
			return err
		}
	}
	return nil
}

// Load reads the outputs of a finished QC run (Write) for prefix and
// returns its selection, without reading the store's chunks: the report,
// the sample and marker tables (kept, why, and the marker counts over the
// kept samples). It checks that they belong to st: the numbers of samples
// and markers, the digests of the sample IDs and of the marker table, the
// store's fingerprint, and every row's sample ID or marker identity. A
// mismatch or a malformed file is a BadInput error naming the file and
// line.
func Load(prefix string, st *matrixio.Store) (*Selection, error) {
	paths := Files(prefix)
	rb, err := os.ReadFile(paths[0])
	if err != nil {
		return nil, matrixio.BadInput("--qc %s: %v", prefix, err)
	}
	rep := &Report{}
	if err := json.Unmarshal(rb, rep); err != nil {
		return nil, matrixio.BadInput("%s: not a QC report: %v", paths[0], err)
	}
	if rep.Format != reportFormat {
		return nil, matrixio.BadInput("%s: format %q, want %q", paths[0], rep.Format, reportFormat)
	}
	si := &rep.Store
	N, M := st.NumSamples(), st.NumMarkers()
	switch {
	case si.Samples != N || si.Markers != M:
		return nil, matrixio.BadInput("%s: QC ran on a store of %d samples x %d markers (%s), not this one of %d x %d (%s)", paths[0], si.Samples, si.Markers, si.Path, N, M, st.Path())
	case si.Codec != string(st.Codec()):
		return nil, matrixio.BadInput("%s: QC ran on a %s store, %s is %s", paths[0], si.Codec, st.Path(), st.Codec())
	case si.SampleSHA256 != sampleDigest(st.Samples()):
		return nil, matrixio.BadInput("%s: the sample IDs differ from those of %s (QC ran on %s)", paths[0], st.Path(), si.Path)
	case si.MarkerSHA256 != markerDigest(st):
		return nil, matrixio.BadInput("%s: the marker table differs from that of %s (QC ran on %s)", paths[0], st.Path(), si.Path)
	case si.Fingerprint != st.Fingerprint():
		return nil, matrixio.BadInput("%s: same samples and markers but different genotype data than %s (QC ran on %s); rerun clinal qc", paths[0], st.Path(), si.Path)
	}
	sel := &Selection{
		SampleKept: make([]bool, N), MarkerKept: make([]bool, M),
		SampleWhy: make([]Reason, N), MarkerWhy: make([]Reason, M),
		SampleCallRate: make([]float64, N), HWEP: make([]float64, M), Report: rep,
	}
	if err := loadSamples(paths[1], st, sel); err != nil {
		return nil, err
	}
	if err := loadMarkers(paths[2], st, sel, rep.CountsRecomputed); err != nil {
		return nil, err
	}
	if !rep.CountsRecomputed {
		sel.Counts = st.Counts()
	}
	return sel, nil
}

// tsvReader reads a tab-separated table with a known header.
type tsvReader struct {
	path string
	sc   *bufio.Scanner
	line int
}

func newTSV(path string, r io.Reader, want []string) (*tsvReader, error) {
	t := &tsvReader{path: path, sc: bufio.NewScanner(r)}
	t.sc.Buffer(make([]byte, 0, 1<<16), 5*4106+1024)
	f, err := t.next()
	if err != nil {
		return nil, err
	}
	if f == nil {
		return nil, matrixio.BadInput("%s: empty file", path)
	}
	if len(f) != len(want) || strings.Join(f, "\t") != strings.Join(want, "\t") {
		return nil, matrixio.BadInput("%s:1: header %q, want %q", path, strings.Join(f, " "), strings.Join(want, " "))
	}
	return t, nil
}

// next returns the fields of the next line, or nil at the end.
func (t *tsvReader) next() ([]string, error) {
	if !t.sc.Scan() {
		if err := t.sc.Err(); err != nil {
			return nil, matrixio.BadInput("%s:%d: %v", t.path, t.line+1, err)
		}
		return nil, nil
	}
	t.line++
	return strings.Split(t.sc.Text(), "\t"), nil
}

func (t *tsvReader) errorf(format string, a ...any) error {
	return matrixio.BadInput("%s:%d: %s", t.path, t.line, fmt.Sprintf(format, a...))
}

func parseReason(s string, allowed []Reason) (Reason, bool) {
	if s == "." {
		return Kept, true
	}
	for _, r := range allowed {
		if r.String() == s {
			return r, true
		}
	}
	return 0, false
}

func parseKept(s string) (bool, bool) {
	switch s {
	case "yes":
		return true, true
	case "no":
		return false, true
	}
	return false, false
}

func parseFloatNA(s string) (float64, error) {
	if s == "NA" {
		return math.NaN(), nil
	}
	return strconv.ParseFloat(s, 64)
}

func loadSamples(path string, st *matrixio.Store, sel *Selection) error {
	f, err := os.Open(path)
	if err != nil {
		return matrixio.BadInput("%s: %v", path, err)
	}
	defer f.Close()
	t, err := newTSV(path, f, sampleHeader)
	if err != nil {
		return err
	}
	ids := st.Samples()
	for i := 0; ; i++ {
		fl, err := t.next()
		if err != nil {
			return err
		}
		if fl == nil {
			if i != len(ids) {
				return matrixio.BadInput("%s: %d samples, the store has %d", path, i, len(ids))
			}
			return nil
		}
		if i >= len(ids) {
			return t.errorf("more rows than the store's %d samples", len(ids))
		}
		if len(fl) != len(sampleHeader) {
			return t.errorf("%d fields, want %d", len(fl), len(sampleHeader))
		}
		if fl[0] != ids[i] {
			return t.errorf("sample %q, the store's sample %d is %q", fl[0], i+1, ids[i])
		}
		cr, err := parseFloatNA(fl[1])
		if err != nil {
			return t.errorf("bad call_rate %q", fl[1])
		}
		k, ok := parseKept(fl[2])
		if !ok {
			return t.errorf("kept %q, want yes or no", fl[2])
		}
		w, ok := parseReason(fl[3], sampleReasons)
		if !ok || k != (w == Kept) {
			return t.errorf("why %q does not agree with kept %q", fl[3], fl[2])
		}
		sel.SampleCallRate[i], sel.SampleKept[i], sel.SampleWhy[i] = cr, k, w
	}
}

func loadMarkers(path string, st *matrixio.Store, sel *Selection, withCounts bool) error {
	f, err := os.Open(path)
	if err != nil {
		return matrixio.BadInput("%s: %v", path, err)
	}
	defer f.Close()
	zr, err := gzip.NewReader(bufio.NewReaderSize(f, 1<<16))
	if err != nil {
		return matrixio.BadInput("%s: not gzip: %v", path, err)
	}
	float := st.Codec() == matrixio.CodecFloat32
	hdr := markerHeader
	if float {
		hdr = append(append([]string{}, markerHeader...), markerHeaderFloat...)
	}
	t, err := newTSV(path, zr, hdr)
	if err != nil {
		return err
	}
	nm := st.NumMarkers()
	if withCounts {
		sel.Counts = make([]matrixio.Counts, nm)
	}
	nk := uint64(countTrue(sel.SampleKept))
	var ident []byte
	for j := 0; ; j++ {
		fl, err := t.next()
		if err != nil {
			if errors.Is(err, gzip.ErrChecksum) {
				return matrixio.BadInput("%s: %v", path, err)
			}
			return err
		}
		if fl == nil {
			if j != nm {
				return matrixio.BadInput("%s: %d markers, the store has %d", path, j, nm)
			}
			return nil
		}
		if j >= nm {
			return t.errorf("more rows than the store's %d markers", nm)
		}
		if len(fl) != len(hdr) {
			return t.errorf("%d fields, want %d", len(fl), len(hdr))
		}
		ident = matrixio.AppendMarker(ident[:0], st.Marker(j))
		if got := strings.Join(fl[:5], "\t"); got != string(ident) {
			return t.errorf("marker %q, the store's marker %d is %q", got, j+1, ident)
		}
		p, err := parseFloatNA(fl[8])
		if err != nil {
			return t.errorf("bad hwe_p %q", fl[8])
		}
		k, ok := parseKept(fl[9])
		if !ok {
			return t.errorf("kept %q, want yes or no", fl[9])
		}
		w, ok := parseReason(fl[10], markerReasons)
		if !ok || k != (w == Kept) {
			return t.errorf("why %q does not agree with kept %q", fl[10], fl[9])
		}
		sel.HWEP[j], sel.MarkerKept[j], sel.MarkerWhy[j] = p, k, w
		if !withCounts {
			continue
		}
		var n [4]uint64
		for q := range n {
			v, err := strconv.ParseUint(fl[11+q], 10, 32)
			if err != nil {
				return t.errorf("bad %s %q", hdr[11+q], fl[11+q])
			}
			n[q] = v
		}
		if n[0]+n[1]+n[2]+n[3] != nk {
			return t.errorf("counts sum to %d, not the %d kept samples", n[0]+n[1]+n[2]+n[3], nk)
		}
		c := matrixio.Counts{HomRef: uint32(n[0]), Het: uint32(n[1]), HomAlt: uint32(n[2]), Missing: uint32(n[3])}
		if float {
			if c.Sum, err = strconv.ParseFloat(fl[15], 64); err != nil {
				return t.errorf("bad dosage_sum %q", fl[15])
			}
			if c.SumSq, err = strconv.ParseFloat(fl[16], 64); err != nil {
				return t.errorf("bad dosage_sumsq %q", fl[16])
			}
		}
		sel.Counts[j] = c
	}
}
