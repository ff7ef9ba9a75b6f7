package matrixio

// Fuzz targets for every reader of untrusted bytes in this package, and the
// regression and resource-bound tests they led to. Run them with
// testdata/fuzz/run.sh (go test -fuzz, one target at a time); a plain
// go test runs the seed corpora under testdata/fuzz/FuzzXxx and the f.Add
// seeds below.
//
// The contract checked (issue 9, design.md "Bad input"; common practice
// for parsers of untrusted input, no source): a reader never panics or
// hangs; every error is BadInput (exit code 2), one line, naming the file;
// a failed import leaves nothing in the output directory; memory is bounded
// by what the input declares and can really hold; what is accepted is
// consistent (the store written by an import opens, verifies and holds
// valid identifiers).

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"context"
	"encoding/binary"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/klauspost/compress/zstd"
)

// fzTimeout bounds one input: far above the milliseconds a fuzz input
// takes, so reaching it means a hang.
const fzTimeout = 30 * time.Second

// fzVCF is a small valid VCF exercising the parser's paths: phased and
// unphased calls, missing and partially missing calls, a haploid call, a
// multi-allelic record, ALT '.', a missing ID, extra FORMAT fields and a
// DS field.
const fzVCF = "##fileformat=VCFv4.2\n##contig=<ID=1>\n" +
	"##FORMAT=<ID=GT,Number=1,Type=String,Description=\"Genotype\">\n" +
	"##FORMAT=<ID=DS,Number=A,Type=Float,Description=\"Dosage\">\n" +
	"#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tisle1-0001\tisle1-0002\tisle2-0001\n" +
	"1\t100\trs1\tA\tG\t.\tPASS\t.\tGT\t0/0\t0|1\t1/1\n" +
	"1\t200\t.\tC\tT\t50\t.\tDP=3\tGT:DS\t./.:.\t0/1:0.9\t./1:1.2\n" +
	"1\t300\trs3\tG\tA,C\t.\t.\t.\tGT:DS\t0/2:0.1,1\t1/2:1,1\t0:0,0\n" +
	"2\t50\trs4\tT\t.\t.\t.\t.\tGT\t0/0\t.\t0\n" +
	"2\t60\trs5\tA\tT\t.\t.\t.\tDS\t0.25\t1.5\t2\n"

// fzDense is a samples-as-rows dense matrix; fzDenseMR has markers as rows.
const (
	fzDense   = "sample\t1:100:A:G\t1:200\tm3\nisle1-0001\t0\t1.5\tNA\nisle1-0002\t2\t.\t0.25\nisle2-0001\t1\t0\t2\n"
	fzDenseMR = "marker\tisle1-0001\tisle1-0002\n1:100:A:G\t0\t2\nm2\tNA\t1\nm3\t1\t1\n"
)

func fzGzip(b []byte) []byte {
	var buf bytes.Buffer
	w := gzip.NewWriter(&buf)
	w.Write(b)
	w.Close()
	return buf.Bytes()
}

func fzBGZF(b []byte) []byte {
	var buf bytes.Buffer
	w := newBGZFWriter(&buf, 6, 1)
	w.Write(b)
	w.Close()
	return buf.Bytes()
}

// fzCheckErr checks the error contract: BadInput, one line, naming one of
// the files.
func fzCheckErr(t *testing.T, err error, names ...string) {
	t.Helper()
	if errors.Is(err, context.DeadlineExceeded) {
		t.Fatalf("hang: no result within %v", fzTimeout)
	}
	msg := err.Error()
	if !IsBadInput(err) {
		t.Fatalf("error is not BadInput (exit code 1 instead of 2): %v", err)
	}
	if strings.ContainsAny(msg, "\n\r") {
		t.Fatalf("error is not one line: %q", msg)
	}
	for _, n := range names {
		if strings.Contains(msg, n) {
			return
		}
	}
	t.Fatalf("error %q names none of %q", msg, names)
}

// fzEntries lists a directory's entries.
func fzEntries(t *testing.T, dir string) []string {
	t.Helper()
	es, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, e := range es {
		names = append(names, e.Name())
	}
	return names
}

// fzStoreContent reads everything of an open store through its public
// API and returns a digest of the decoded content (markers, counts and
// chunk payloads) for comparisons. Every error must be BadInput.
func fzStoreContent(t *testing.T, st *Store) string {
	t.Helper()
	var b strings.Builder
	fmt.Fprintf(&b, "%d %d %s %d|", st.NumSamples(), st.NumMarkers(), st.Codec(), st.ChunkMarkers())
	b.WriteString(strings.Join(st.Samples(), ","))
	for j, m := range st.Markers() {
		fmt.Fprintf(&b, "|%v %v", m, st.Counts()[j])
	}
	if len(st.SampleMissing()) != st.NumSamples() {
		t.Fatalf("%d per-sample missing counts for %d samples", len(st.SampleMissing()), st.NumSamples())
	}
	st.Fingerprint()
	st.ChunkBufferBytes()
	seen := 0
	for _, sh := range st.Shards(3) {
		seen += sh.EndMarker - sh.FirstMarker
	}
	if seen != st.NumMarkers() {
		t.Fatalf("shards cover %d of %d markers", seen, st.NumMarkers())
	}
	rb := st.RowBytes()
	codes := make([]byte, st.NumSamples())
	vals := make([]float32, st.NumSamples())
	var c Chunk
	for i := 0; i < st.NumChunks(); i++ {
		if err := st.ReadChunk(i, &c); err != nil {
			fzCheckErr(t, err, st.Path())
			return ""
		}
		for j := 0; j < c.N; j++ {
			if st.Codec() == CodecGeno2 {
				DecodeGenotypes(c.Row(j, rb), codes)
				b.Write(codes)
			} else {
				DecodeFloats(c.Row(j, rb), vals)
				fmt.Fprint(&b, vals)
			}
		}
	}
	return b.String()
}

// fzImportVCF runs one VCF import of data and returns the content digest
// of the store, or the error message with the input's name replaced.
func fzImportVCF(t *testing.T, data []byte, name string, opt ImportOptions) string {
	t.Helper()
	dir := t.TempDir()
	in := filepath.Join(dir, name)
	if err := os.WriteFile(in, data, 0o644); err != nil {
		t.Fatal(err)
	}
	outDir := filepath.Join(dir, "out")
	os.Mkdir(outDir, 0o755)
	out := filepath.Join(outDir, "s.clinal")
	ctx, cancel := context.WithTimeout(context.Background(), fzTimeout)
	defer cancel()
	sum, err := ImportVCF(ctx, []string{in}, out, opt)
	if err != nil {
		fzCheckErr(t, err, in)
		if left := fzEntries(t, outDir); len(left) != 0 {
			t.Fatalf("failed import left %v", left)
		}
		return "error: " + strings.ReplaceAll(err.Error(), in, "IN")
	}
	if left := fzEntries(t, outDir); len(left) != 1 {
		t.Fatalf("import left %v, want only s.clinal", left)
	}
	st, err := Open(out)
	if err != nil {
		t.Fatalf("store written by import does not open: %v", err)
	}
	defer st.Close()
	if err := st.Verify(ctx, 2); err != nil {
		t.Fatalf("store written by import does not verify: %v", err)
	}
	if st.NumMarkers() != sum.Markers || st.NumSamples() != sum.Samples {
		t.Fatalf("summary says %d x %d, store holds %d x %d", sum.Samples, sum.Markers, st.NumSamples(), st.NumMarkers())
	}
	// Issue 9, item 4: identifiers that would corrupt a TSV never get in.
	for _, s := range st.Samples() {
		if err := ValidateID("sample ID", s); err != nil {
			t.Fatalf("import accepted a bad sample ID: %v", err)
		}
	}
	for _, m := range st.Markers() {
		if err := vcfCheckMarker(m); err != nil {
			t.Fatalf("import accepted a bad marker: %v", err)
		}
	}
	return fzStoreContent(t, st)
}

// FuzzImportVCF feeds bytes to ImportVCF as a file. mode picks the
// wrapping (0 as is, which lets the seeds carry gzip and BGZF files whose
// compressed bytes get mutated; 1 gzip; 2 BGZF), bit 2 tiny parse groups
// (lines straddle groups), bit 3 the DS field, bit 4 splitting of
// multi-allelic records, bit 5 haploid calls as missing. A wrapped input
// must give exactly what the plain text gives with default groups
// (same store content, or the same error but for the file name).
func FuzzImportVCF(f *testing.F) {
	f.Add([]byte(fzVCF), byte(0))
	f.Add([]byte(fzVCF), byte(1|4))
	f.Add([]byte(fzVCF), byte(2|8|16))
	f.Add(fzGzip([]byte(fzVCF)), byte(0))
	f.Add(fzBGZF([]byte(fzVCF)), byte(0|32))
	f.Fuzz(func(t *testing.T, data []byte, mode byte) {
		opt := ImportOptions{Threads: 2}
		if mode&8 != 0 {
			opt.Field = "DS"
		}
		opt.SplitMultiallelic = mode&16 != 0
		if mode&32 != 0 {
			opt.Haploid = "missing"
		}
		wrap := mode & 3
		if wrap == 0 || wrap == 3 {
			if mode&4 != 0 {
				opt.groupBytes = 7 + len(data)%61
			}
			fzImportVCF(t, data, "in.vcf", opt)
			return
		}
		want := fzImportVCF(t, data, "in.vcf", opt)
		if vcfDetect(bufio.NewReader(bytes.NewReader(data))) != vcfPlain {
			return // the plain run read data as compressed: nothing to compare
		}
		if mode&4 != 0 {
			opt.groupBytes = 7 + len(data)%61
		}
		enc := fzGzip(data)
		if wrap == 2 {
			enc = fzBGZF(data)
		}
		if got := fzImportVCF(t, enc, "in.vcf.gz", opt); got != want {
			t.Fatalf("compressed input (mode %d) gives\n%.300s\nplain text gives\n%.300s", mode, got, want)
		}
	})
}

// FuzzImportDense feeds bytes to ImportDense. mode bit 0: markers as
// rows; bit 1: gzip; bit 2: 2-bit codes; bit 3: a 16-byte transpose
// buffer (one marker per spool read).
func FuzzImportDense(f *testing.F) {
	f.Add([]byte(fzDense), byte(0))
	f.Add([]byte(fzDense), byte(2|8))
	f.Add([]byte(fzDenseMR), byte(1))
	f.Add([]byte("m\tisle1-0001\tisle1-0002\nm1\t0\t2\nm2\t1\tNA\n"), byte(1|4))
	f.Fuzz(func(t *testing.T, data []byte, mode byte) {
		dir := t.TempDir()
		in := filepath.Join(dir, "m.tsv")
		if mode&2 != 0 {
			data = fzGzip(data)
		}
		if err := os.WriteFile(in, data, 0o644); err != nil {
			t.Fatal(err)
		}
		outDir := filepath.Join(dir, "out")
		os.Mkdir(outDir, 0o755)
		out := filepath.Join(outDir, "s.clinal")
		opt := DenseOptions{MarkersAsRows: mode&1 != 0, Codes: mode&4 != 0, Threads: 1, TempDir: outDir}
		if mode&8 != 0 {
			opt.MemoryBytes = 16
		}
		ctx, cancel := context.WithTimeout(context.Background(), fzTimeout)
		defer cancel()
		sum, err := ImportDense(ctx, []string{in}, out, opt)
		if err != nil {
			fzCheckErr(t, err, in)
			if left := fzEntries(t, outDir); len(left) != 0 {
				t.Fatalf("failed import left %v", left)
			}
			return
		}
		if left := fzEntries(t, outDir); len(left) != 1 {
			t.Fatalf("import left %v, want only s.clinal (spool removed)", left)
		}
		st, err := Open(out)
		if err != nil {
			t.Fatalf("store written by import does not open: %v", err)
		}
		defer st.Close()
		if err := st.Verify(ctx, 1); err != nil {
			t.Fatalf("store does not verify: %v", err)
		}
		if st.NumSamples() != sum.Samples || st.NumMarkers() != sum.Markers {
			t.Fatalf("summary %d x %d, store %d x %d", sum.Samples, sum.Markers, st.NumSamples(), st.NumMarkers())
		}
		for _, m := range st.Markers() {
			if err := vcfCheckMarker(m); err != nil {
				t.Fatalf("import accepted a bad marker: %v", err)
			}
		}
		fzStoreContent(t, st)
	})
}

// fzSmallStore writes a valid store (codec c, 5 samples, 11 markers in
// chunks of 4, some missing) and returns its bytes.
func fzSmallStore(tb testing.TB, c Codec) []byte {
	tb.Helper()
	p := filepath.Join(tb.TempDir(), "s.clinal")
	ids := []string{"isle1-0001", "isle1-0002", "isle2-0001", "isle3-0001", "mainland-0001"}
	w, err := Create(p, ids, WriterOptions{Codec: c, ChunkMarkers: 4, Source: "fuzz seed"})
	if err != nil {
		tb.Fatal(err)
	}
	for j := 0; j < 11; j++ {
		m := Marker{Chrom: fmt.Sprint(1 + j/6), Pos: int64(100 * (j + 1)), ID: fmt.Sprintf("rs%d", j+1), Ref: "A", Alt: "G"}
		if c == CodecGeno2 {
			g := make([]byte, len(ids))
			for i := range g {
				g[i] = byte((i + j) % 4)
			}
			err = w.AddGenotypes(m, g)
		} else {
			x := make([]float32, len(ids))
			for i := range x {
				x[i] = float32((i+j)%5) / 2
			}
			x[j%len(ids)] = float32(math.NaN())
			err = w.AddFloats(m, x)
		}
		if err != nil {
			tb.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		tb.Fatal(err)
	}
	b, err := os.ReadFile(p)
	if err != nil {
		tb.Fatal(err)
	}
	return b
}

// fzAllocBound is what opening and reading a store of n bytes may
// allocate: a fixed allowance for decoders and buffers plus the most the
// file's zstd payloads can decode to (zstdMaxRatio per byte) and a little
// per-record bookkeeping.
func fzAllocBound(n int) uint64 { return 96<<20 + uint64(n)*(zstdMaxRatio+1024) }

// fzOpenAll opens the store bytes and reads all of it; errors must be
// BadInput naming the file, and allocation must stay within fzAllocBound.
func fzOpenAll(t *testing.T, data []byte) {
	p := filepath.Join(t.TempDir(), "f.clinal")
	if err := os.WriteFile(p, data, 0o644); err != nil {
		t.Fatal(err)
	}
	var m0, m1 runtime.MemStats
	runtime.ReadMemStats(&m0)
	defer func() {
		runtime.ReadMemStats(&m1)
		if d := m1.TotalAlloc - m0.TotalAlloc; d > fzAllocBound(len(data)) {
			t.Fatalf("allocated %d bytes for a %d-byte store (bound %d)", d, len(data), fzAllocBound(len(data)))
		}
	}()
	st, err := Open(p)
	if err != nil {
		fzCheckErr(t, err, p)
		return
	}
	defer st.Close()
	ctx, cancel := context.WithTimeout(context.Background(), fzTimeout)
	defer cancel()
	if err := st.Verify(ctx, 2); err != nil {
		fzCheckErr(t, err, p)
		return
	}
	fzStoreContent(t, st)
	if _, err := InspectStore(ctx, p, InspectOptions{Verify: true, Threads: 1}); err != nil {
		t.Fatalf("store verifies but inspect fails: %v", err)
	}
}

// FuzzOpenStore opens mutated store bytes as they are: mostly the
// checksums catch the damage, which must be reported, never crash.
func FuzzOpenStore(f *testing.F) {
	f.Add(fzSmallStore(f, CodecGeno2))
	f.Add(fzSmallStore(f, CodecFloat32))
	f.Fuzz(func(t *testing.T, data []byte) { fzOpenAll(t, data) })
}

// FuzzOpenStoreRepaired mutates store bytes and then recomputes every
// checksum it can find (header, sample table, chunk CRCs, index records,
// marker table, footer), so mutations of sizes, offsets, counts and
// payloads reach the structural checks behind the checksums.
func FuzzOpenStoreRepaired(f *testing.F) {
	f.Add(fzSmallStore(f, CodecGeno2))
	f.Add(fzSmallStore(f, CodecFloat32))
	f.Fuzz(func(t *testing.T, data []byte) {
		fzOpenAll(t, fzRepairCRCs(append([]byte(nil), data...)))
	})
}

// fzRepairCRCs recomputes the store checksums of b in place, following the
// layout of store.go as far as the (possibly nonsensical) offsets allow.
func fzRepairCRCs(b []byte) []byte {
	le := binary.LittleEndian
	in := func(off, n uint64) bool { return off <= uint64(len(b)) && n <= uint64(len(b))-off }
	if len(b) >= 16 {
		ml := uint64(le.Uint32(b[12:]))
		if in(16, ml+4) {
			le.PutUint32(b[16+ml:], crc(b[16:16+ml]))
			off := 16 + ml + 4
			if in(off, 12) {
				cl := uint64(le.Uint32(b[off+8:]))
				if in(off+12, cl+4) {
					le.PutUint32(b[off+12+cl:], crc(b[off+12:off+12+cl]))
				}
			}
		}
	}
	if len(b) < footerSize {
		return b
	}
	ft := b[len(b)-footerSize:]
	mOff, mLen := le.Uint64(ft[0:]), le.Uint64(ft[8:])
	if in(mOff, mLen) {
		le.PutUint32(ft[48:], crc(b[mOff:mOff+mLen]))
	}
	iOff, nc := le.Uint64(ft[24:]), le.Uint64(ft[40:])
	for i := uint64(0); i < nc && i < 1<<16 && in(iOff+i*indexRecSize, indexRecSize); i++ {
		r := b[iOff+i*indexRecSize:][:indexRecSize]
		cOff, cLen := le.Uint64(r[0:]), uint64(le.Uint32(r[8:]))
		if in(cOff, cLen) {
			le.PutUint32(r[16:], crc(b[cOff:cOff+cLen]))
		}
		le.PutUint32(r[36:], crc(r[:36]))
	}
	le.PutUint32(ft[52:], crc(ft[:52]))
	return b
}

// fzEncoder compresses test sections like the writer does.
var fzEncoder = sync.OnceValue(func() *zstd.Encoder {
	e, err := zstd.NewWriter(nil)
	if err != nil {
		panic(err)
	}
	return e
})

// fzSpec describes a store section by section, with every declared size
// separately settable, so tests and fuzzing can write stores that lie
// about their sizes while all checksums and zstd frames are valid.
type fzSpec struct {
	meta        []byte   // header JSON
	samples     []byte   // decoded sample table
	sampleDecl  int64    // declared decoded size of the sample table (-1: true size)
	chunks      [][]byte // decoded chunk payloads
	chunkN      []uint32 // markers per chunk
	chunkDecl   []int64  // declared decoded size per chunk (nil or -1: true size)
	markerTable []byte   // decoded marker table
	markers     uint64   // footer marker count
	markersDecl int64    // declared decoded size of the marker table (-1: true size)
	metaLenDecl int64    // declared metadata length (-1: true size)
}

// fzBuild writes the bytes of a store from a spec (layout of store.go).
func fzBuild(sp fzSpec) []byte {
	le := binary.LittleEndian
	enc := fzEncoder()
	var b []byte
	b = append(b, headerMagic[:]...)
	b = le.AppendUint32(b, formatVersion)
	ml := uint32(len(sp.meta))
	if sp.metaLenDecl >= 0 {
		ml = uint32(sp.metaLenDecl)
	}
	b = le.AppendUint32(b, ml)
	b = append(b, sp.meta...)
	b = le.AppendUint32(b, crc(sp.meta))
	sd := uint64(len(sp.samples))
	if sp.sampleDecl >= 0 {
		sd = uint64(sp.sampleDecl)
	}
	sc := enc.EncodeAll(sp.samples, nil)
	b = le.AppendUint64(b, sd)
	b = le.AppendUint32(b, uint32(len(sc)))
	b = append(b, sc...)
	b = le.AppendUint32(b, crc(sc))
	var recs []chunkRec
	first := uint64(0)
	for i, raw := range sp.chunks {
		c := enc.EncodeAll(raw, nil)
		rl := uint32(len(raw))
		if i < len(sp.chunkDecl) && sp.chunkDecl[i] >= 0 {
			rl = uint32(sp.chunkDecl[i])
		}
		recs = append(recs, chunkRec{off: uint64(len(b)), compLen: uint32(len(c)), rawLen: rl,
			crc: crc(c), first: first, nmarkers: sp.chunkN[i]})
		first += uint64(sp.chunkN[i])
		b = append(b, c...)
	}
	mc := enc.EncodeAll(sp.markerTable, nil)
	ft := footer{markersOff: uint64(len(b)), markersLen: uint64(len(mc)), markersRaw: uint64(len(sp.markerTable)),
		markers: sp.markers, chunks: uint64(len(recs)), markersCRC: crc(mc)}
	if sp.markersDecl >= 0 {
		ft.markersRaw = uint64(sp.markersDecl)
	}
	b = append(b, mc...)
	ft.indexOff = uint64(len(b))
	rec := make([]byte, indexRecSize)
	for i := range recs {
		recs[i].marshal(rec)
		b = append(b, rec...)
	}
	return append(b, ft.marshal()...)
}

// fzValidSpec is a consistent spec: n samples, m markers of all-zero
// genotypes in chunks of cm, marker table as the writer lays it out.
func fzValidSpec(n, m, cm int) fzSpec {
	ids := make([]string, n)
	for i := range ids {
		ids[i] = fmt.Sprintf("isle1-%04d", i+1)
	}
	meta, _ := json.Marshal(Meta{Version: formatVersion, Samples: n, Codec: CodecGeno2, ChunkMarkers: cm})
	sp := fzSpec{meta: meta, samples: []byte(strings.Join(ids, "\n")), sampleDecl: -1, markers: uint64(m), markersDecl: -1, metaLenDecl: -1}
	rb := RowBytes(CodecGeno2, n)
	for first := 0; first < m; first += cm {
		k := min(cm, m-first)
		sp.chunks = append(sp.chunks, make([]byte, k*rb))
		sp.chunkN = append(sp.chunkN, uint32(k))
	}
	var t []byte
	for j := 0; j < m; j++ {
		t = appendString(t, "1")
		t = binary.AppendUvarint(t, uint64(j+1))
		t = appendString(t, fmt.Sprintf("m%d", j+1))
		t = appendString(t, "A")
		t = appendString(t, "G")
		for _, c := range []uint64{uint64(n), 0, 0, 0} {
			t = binary.AppendUvarint(t, c)
		}
	}
	for i := 0; i < n; i++ {
		t = binary.AppendUvarint(t, 0)
	}
	sp.markerTable = t
	return sp
}

// TestStoreDeclaredSizes writes stores whose checksums are all valid but
// whose declared sizes are absurd, and checks that Open (and reading every
// chunk) refuses them, or serves them, without allocating what they claim
// (design.md: "Readers bound every allocation by the header's declared
// sizes and reject absurd ones"). The bytes each case could make a naive
// reader allocate are in the comments; the bound is fzAllocBound of the
// file, well under them.
func TestStoreDeclaredSizes(t *testing.T) {
	withMeta := func(sp fzSpec, edit func(*Meta)) fzSpec {
		var m Meta
		json.Unmarshal(sp.meta, &m)
		edit(&m)
		sp.meta, _ = json.Marshal(m)
		return sp
	}
	// One sample, one marker, chunks declared 2^30 markers long.
	hugeChunks := withMeta(fzValidSpec(1, 1, 1), func(m *Meta) { m.ChunkMarkers = 1 << 30 })
	// 2^30 markers in one chunk of 2^30 one-byte rows, marker table of one
	// record: 2^30 Marker structs (72 GiB) if the count is trusted.
	manyMarkers := hugeChunks
	manyMarkers.markers = 1 << 30
	manyMarkers.chunkN = []uint32{1 << 30}
	manyMarkers.chunks = [][]byte{{0}}
	manyMarkers.chunkDecl = []int64{1 << 30} // the decoded length is checked only when read
	cases := []struct {
		name string
		sp   fzSpec
		want string // error substring; "" means the store must open and verify
	}{
		{"valid", fzValidSpec(5, 11, 4), ""},
		{"2^40 samples", withMeta(fzValidSpec(5, 11, 4), func(m *Meta) { m.Samples = 1 << 40 }), "1099511627776 samples"},
		{"negative samples", withMeta(fzValidSpec(5, 11, 4), func(m *Meta) { m.Samples = -5 }), "-5 samples"},
		// 2^26 samples (the limit) and a sample table declared 2^26*4097
		// bytes (275 GB) long, held in a few bytes.
		{"sample table of 275 GB", func() fzSpec {
			sp := withMeta(fzValidSpec(5, 11, 4), func(m *Meta) { m.Samples = MaxSamples })
			sp.sampleDecl = MaxSamples * 4097
			return sp
		}(), "cannot decode to the declared 274945015808"},
		{"metadata of 2 GiB", func() fzSpec { sp := fzValidSpec(5, 11, 4); sp.metaLenDecl = 1 << 31; return sp }(), "metadata of 2147483648 bytes"},
		{"chunk of 2^31 markers", withMeta(fzValidSpec(1, 1, 1), func(m *Meta) { m.ChunkMarkers = 1 << 31 }), "chunk of 2147483648 markers"},
		{"2^30 markers in a 1-marker table", manyMarkers, "cannot hold 1073741824 markers"},
		// Served, but a chunk buffer is the chunk's size, not 1 GiB.
		{"chunks declared 1 GiB, holding 1 byte", hugeChunks, ""},
		{"marker table of 1 TB", func() fzSpec { sp := fzValidSpec(5, 11, 4); sp.markersDecl = 1 << 40; return sp }(), "marker table: corrupt store: bad size"},
		{"marker table larger than its frame", func() fzSpec {
			sp := fzValidSpec(5, 11, 4)
			sp.markersDecl = int64(len(sp.markerTable)) + 1
			return sp
		}(), "marker table: corrupt store: decoded"},
		{"2^33 markers", func() fzSpec { sp := fzValidSpec(5, 11, 4); sp.markers = 1 << 33; return sp }(), "8589934592 markers"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			data := fzBuild(tc.sp)
			p := filepath.Join(t.TempDir(), "s.clinal")
			os.WriteFile(p, data, 0o644)
			var m0, m1 runtime.MemStats
			runtime.GC()
			runtime.ReadMemStats(&m0)
			st, err := Open(p)
			if err == nil {
				err = st.Verify(context.Background(), 2)
				st.Close()
			}
			runtime.ReadMemStats(&m1)
			if d := m1.TotalAlloc - m0.TotalAlloc; d > fzAllocBound(len(data)) {
				t.Errorf("allocated %d bytes for a %d-byte file (bound %d)", d, len(data), fzAllocBound(len(data)))
			}
			if tc.want == "" {
				if err != nil {
					t.Fatalf("valid store refused: %v", err)
				}
				return
			}
			if err == nil || !strings.Contains(err.Error(), tc.want) || !IsBadInput(err) {
				t.Fatalf("error %v, want a bad-input error containing %q", err, tc.want)
			}
		})
	}
}

// TestStoreLargeMarkerTable is the regression test of a bug found by the
// resource audit: the marker table was decoded with the chunk decoder,
// whose limit is one chunk plus 16 MiB, so a valid store with more than
// about 600,000 markers (40 samples here: 81,920-byte chunks) could not be
// opened ("decompressed size exceeds configured limit"). The expected
// dimensions are the ones written.
func TestStoreLargeMarkerTable(t *testing.T) {
	if testing.Short() {
		t.Skip("writes a 1,000,000-marker store")
	}
	const n, m = 4, 1_000_000
	p := filepath.Join(t.TempDir(), "wide.clinal")
	w, err := Create(p, []string{"isle1-0001", "isle1-0002", "isle1-0003", "isle1-0004"}, WriterOptions{})
	if err != nil {
		t.Fatal(err)
	}
	g := []byte{0, 1, 2, 3}
	for j := 0; j < m; j++ {
		if err := w.AddGenotypes(Marker{Chrom: "1", Pos: int64(j + 1), ID: fmt.Sprintf("isle-marker-%07d", j+1), Ref: "A", Alt: "G"}, g); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	st, err := Open(p)
	if err != nil {
		t.Fatalf("a valid store of %d markers does not open: %v", m, err)
	}
	defer st.Close()
	if st.NumMarkers() != m || st.NumSamples() != n || st.Markers()[m-1].ID != "isle-marker-1000000" {
		t.Fatalf("store reads as %d x %d, last marker %q", st.NumSamples(), st.NumMarkers(), st.Markers()[m-1].ID)
	}
}

// FuzzStoreDeclared builds stores from fuzzed sections with valid
// checksums and zstd frames: the metadata JSON, the decoded sample and
// marker tables and the footer's marker count are the fuzzer's, chunk
// payloads follow the metadata (filled with fill) so the index is
// consistent often enough to reach the table parsers.
func FuzzStoreDeclared(f *testing.F) {
	for _, s := range []fzSpec{fzValidSpec(5, 11, 4), fzValidSpec(1, 3, 8), fzValidSpec(9, 2, 1)} {
		f.Add(s.meta, s.samples, s.markerTable, s.markers, byte(0))
	}
	f.Fuzz(func(t *testing.T, meta, samples, markerTable []byte, markers uint64, fill byte) {
		sp := fzSpec{meta: meta, samples: samples, sampleDecl: -1, markerTable: markerTable, markers: markers, markersDecl: -1, metaLenDecl: -1}
		var m Meta
		json.Unmarshal(meta, &m)
		if m.Samples > 0 && m.Samples <= 1<<16 && m.ChunkMarkers > 0 && markers <= 1<<16 {
			rb := RowBytes(m.Codec, m.Samples)
			for first := 0; first < int(markers) && len(sp.chunks) < 64; first += m.ChunkMarkers {
				k := min(m.ChunkMarkers, int(markers)-first)
				if k*rb > 1<<20 {
					break
				}
				sp.chunks = append(sp.chunks, bytes.Repeat([]byte{fill}, k*rb))
				sp.chunkN = append(sp.chunkN, uint32(k))
			}
		}
		fzOpenAll(t, fzBuild(sp))
	})
}

// TestFzBuildMatchesWriter checks the test's store builder against the
// real writer: a store the writer made, decomposed and rebuilt by fzBuild,
// is byte for byte the same file (so the declared-size tests write the
// format the reader expects).
func TestFzBuildMatchesWriter(t *testing.T) {
	b := fzSmallStore(t, CodecGeno2)
	le := binary.LittleEndian
	ml := le.Uint32(b[12:])
	sp := fzSpec{meta: b[16 : 16+ml], sampleDecl: -1, markersDecl: -1, metaLenDecl: -1}
	p := filepath.Join(t.TempDir(), "s.clinal")
	os.WriteFile(p, b, 0o644)
	st, err := Open(p)
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	sp.samples = []byte(strings.Join(st.Samples(), "\n"))
	sp.markers = uint64(st.NumMarkers())
	var c Chunk
	for i := 0; i < st.NumChunks(); i++ {
		if err := st.ReadChunk(i, &c); err != nil {
			t.Fatal(err)
		}
		sp.chunks = append(sp.chunks, append([]byte(nil), c.Raw...))
		sp.chunkN = append(sp.chunkN, uint32(c.N))
	}
	ft := b[len(b)-footerSize:]
	mOff, mLen := le.Uint64(ft[0:]), le.Uint64(ft[8:])
	raw, err := fzEncoderDecode(b[mOff : mOff+mLen])
	if err != nil {
		t.Fatal(err)
	}
	sp.markerTable = raw
	got := fzBuild(sp)
	if !bytes.Equal(got, b) {
		t.Fatalf("rebuilt store differs from the writer's (%d vs %d bytes)", len(got), len(b))
	}
}

func fzEncoderDecode(b []byte) ([]byte, error) {
	d, err := zstd.NewReader(nil)
	if err != nil {
		return nil, err
	}
	defer d.Close()
	return d.DecodeAll(b, nil)
}

// TestImportLineBounds: an input without line ends (a decompression bomb
// of one endless line) is refused once the line passes its bound, naming
// the file and line, instead of being buffered whole. Bounds: vcf.go
// vcfMaxLine (64 MiB + 1 KiB per sample) and dense.go denseMaxRow (1 MiB +
// 64 bytes per column).
func TestImportLineBounds(t *testing.T) {
	if testing.Short() {
		t.Skip("decompresses about 70 MB")
	}
	bomb := func(prefix string, n int) []byte {
		var buf bytes.Buffer
		w := gzip.NewWriter(&buf)
		w.Write([]byte(prefix))
		blk := bytes.Repeat([]byte{'7'}, 1<<20)
		for k := 0; k < n; k++ {
			w.Write(blk)
		}
		w.Close()
		return buf.Bytes()
	}
	hdr := "##fileformat=VCFv4.2\n#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tisle1-0001\tisle1-0002\n"
	cases := []struct {
		name, file string
		data       []byte
		dense      bool
		want       string
	}{
		{"VCF data line", "a.vcf.gz", bomb(hdr+"1\t5\tx\tA\tG\t.\t.\t.\tGT\t0/1\t", 70), false, `a.vcf.gz:3: line longer than 64 MiB for 2 samples (no line ends?)`},
		{"VCF header line", "b.vcf.gz", bomb("##fileformat=VCFv4.2\n##", 260), false, `b.vcf.gz:2: header line longer than 256 MiB`},
		{"dense row", "m.tsv.gz", bomb("id\tm1\tm2\nisle1-0001\t", 3), true, `m.tsv.gz:2: line longer than 1 MiB`},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			in := filepath.Join(dir, tc.file)
			os.WriteFile(in, tc.data, 0o644)
			out := filepath.Join(dir, "o.clinal")
			var err error
			if tc.dense {
				_, err = ImportDense(context.Background(), []string{in}, out, DenseOptions{})
			} else {
				_, err = ImportVCF(context.Background(), []string{in}, out, ImportOptions{Threads: 2})
			}
			if err == nil || !IsBadInput(err) || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("error %v, want bad input containing %q", err, tc.want)
			}
		})
	}
}
