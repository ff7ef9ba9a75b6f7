package qc

import (
	"bufio"
	"compress/gzip"
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/clinal/clinal/matrixio"
)

// filterCohort is built so each marker fails exactly one filter, known by
// construction (the expected reasons are facts of the data, no outside
// source). 50 samples: isle1-0001 has half its calls missing (call rate),
// isle1-0002 is in the drop list, isle1-0003 is not in the keep list; the
// 47 others are kept.
func filterCohort() (*testCohort, []Reason) {
	const n = 50
	c := &testCohort{}
	for i := 0; i < n; i++ {
		c.samples = append(c.samples, fmt.Sprintf("isle1-%04d", i+1))
	}
	var why []Reason
	add := func(chrom string, pos int64, w Reason, fill func(i int) byte) {
		row := make([]byte, n)
		for i := range row {
			row[i] = fill(i)
		}
		c.markers = append(c.markers, matrixio.Marker{Chrom: chrom, Pos: pos, ID: fmt.Sprintf("m%d", len(c.markers)+1), Ref: "A", Alt: "T"})
		c.g = append(c.g, row)
		why = append(why, w)
	}
	// A polymorphic pattern in HWE: genotypes 0,1,1,2 repeating (p = 0.5,
	// het frequency 0.5).
	ok := func(i int) byte { return []byte{0, 1, 1, 2}[i%4] }
	for k := 0; k < 40; k++ {
		// 40 ordinary markers, where sample 1 (index 0) is missing half.
		add("chr1", int64(1000+k), Kept, func(i int) byte {
			if i == 0 && k%2 == 0 {
				return matrixio.Missing
			}
			return ok(i + k)
		})
	}
	add("chrX", 5000, OtherChromosome, ok)
	add("MT", 10, OtherChromosome, ok)
	add("chr2", 100, Kept, ok) // 0-based 99: just before the BED interval [100, 200)
	add("2", 101, InExcludedRegion, ok)
	add("chr2", 200, InExcludedRegion, ok)
	add("2", 201, Kept, ok)
	// Missing in 3 of the 47 kept samples: call rate 44/47 < 0.95.
	add("2", 300, LowMarkerCallRate, func(i int) byte {
		if i >= 10 && i < 13 {
			return matrixio.Missing
		}
		return ok(i)
	})
	// ALT only in the three removed samples: monomorphic over the kept
	// ones, which only a recount can see.
	add("2", 400, Monomorphic, func(i int) byte {
		if i < 3 {
			return 2
		}
		return 0
	})
	// Two heterozygotes among 47: MAF 2/94 < 0.05.
	add("2", 500, LowMAF, func(i int) byte {
		if i == 20 || i == 30 {
			return 1
		}
		return 0
	})
	// All heterozygous: HWE exact p far below 1e-6.
	add("2", 600, FailedHWE, func(int) byte { return 1 })
	return c, why
}

// filterOptions sets the files for filterCohort in dir.
func filterOptions(t testing.TB, dir string) Options {
	keep := filepath.Join(dir, "keep.txt")
	var b strings.Builder
	b.WriteString("# kept samples\n")
	for i := 1; i <= 50; i++ {
		if i != 3 {
			fmt.Fprintf(&b, "isle1-%04d\textra column\n", i)
		}
	}
	b.WriteString("isle9-9999\n")
	writeFile(t, keep, b.String())
	drop := filepath.Join(dir, "drop.txt")
	writeFile(t, drop, "isle1-0002\n")
	bed := filepath.Join(dir, "regions.bed")
	writeFile(t, bed, "track name=test\n# comment\nchr2\t100\t200\tlong-range\n2\t150\t160\n7\t0\t10\n")
	o := DefaultOptions()
	o.MinMAF = 0.05
	o.LDR2 = 0
	o.KeepSamples, o.DropSamples, o.ExcludeRegions = keep, drop, bed
	return o
}

func TestFilterOrder(t *testing.T) {
	c, want := filterCohort()
	st := c.store(t, 8)
	sel := run(t, st, filterOptions(t, t.TempDir()))
	wantS := make([]Reason, 50)
	wantS[0], wantS[1], wantS[2] = LowSampleCallRate, InDropList, NotInKeepList
	if !slices.Equal(sel.SampleWhy, wantS) {
		t.Errorf("sample reasons %v, want %v", sel.SampleWhy[:5], wantS[:5])
	}
	for j, w := range want {
		if sel.MarkerWhy[j] != w {
			t.Errorf("marker %d (%s:%d): %v, want %v", j+1, c.markers[j].Chrom, c.markers[j].Pos, sel.MarkerWhy[j], w)
		}
		if sel.MarkerKept[j] != (w == Kept) {
			t.Errorf("marker %d: kept %v", j+1, sel.MarkerKept[j])
		}
	}
	rep := sel.Report
	if !rep.CountsRecomputed || rep.Passes != 1 {
		t.Errorf("recomputed %v passes %d, want true 1", rep.CountsRecomputed, rep.Passes)
	}
	wantM := []FilterStep{{"chromosome", 2}, {"region", 2}, {"call-rate", 1}, {"monomorphic", 1}, {"maf", 1}, {"hwe", 1}, {"ld", 0}}
	if !slices.Equal(rep.Markers.Removed, wantM) || rep.Markers.Kept != 42 || rep.Markers.Input != len(want) {
		t.Errorf("marker counts %+v, want removed %v and 42 kept", rep.Markers, wantM)
	}
	wantSC := []FilterStep{{"keep-list", 1}, {"drop-list", 1}, {"call-rate", 1}}
	if !slices.Equal(rep.Samples.Removed, wantSC) || rep.Samples.Kept != 47 {
		t.Errorf("sample counts %+v, want %v and 47 kept", rep.Samples, wantSC)
	}
	if rep.Inputs.ExcludeRegions == nil || rep.Inputs.ExcludeRegions.Intervals != 3 {
		t.Errorf("regions input %+v, want 3 intervals", rep.Inputs.ExcludeRegions)
	}
	// Counts over the 47 kept samples: marker 41's pattern 0,1,1,2 over
	// samples 4..50 (by construction).
	var wc matrixio.Counts
	for i := 3; i < 50; i++ {
		switch []byte{0, 1, 1, 2}[i%4] {
		case 0:
			wc.HomRef++
		case 1:
			wc.Het++
		case 2:
			wc.HomAlt++
		}
	}
	if got := sel.Counts[42]; got != wc {
		t.Errorf("counts over kept samples %+v, want %+v", got, wc)
	}
}

// TestFilterHWEOnly: with FilterHWEOnly (what pca sets) the filters keep
// and drop the same markers for the same reasons as without it, on both
// paths (stored counts; a recount after dropping samples), and a p-value
// is computed exactly where the HWE filter reads one: markers that the
// filters before it kept, with --min-hwe-p above 0. Expected values are
// the filters' own definitions (no outside source).
func TestFilterHWEOnly(t *testing.T) {
	c, _ := filterCohort()
	st := c.store(t, 8)
	dir := t.TempDir()
	noLists := DefaultOptions()
	noLists.MinMAF, noLists.LDR2 = 0.05, 0
	for _, tc := range []struct {
		name string
		opt  Options
	}{
		{"recount", filterOptions(t, dir)},
		{"stored counts", noLists},
		{"hwe filter off", func() Options { o := noLists; o.MinHWEP = 0; return o }()},
	} {
		t.Run(tc.name, func(t *testing.T) {
			all := run(t, st, tc.opt)
			lazy := tc.opt
			lazy.FilterHWEOnly = true
			got := run(t, st, lazy)
			if !slices.Equal(got.MarkerWhy, all.MarkerWhy) || !slices.Equal(got.MarkerKept, all.MarkerKept) {
				t.Fatalf("reasons %v, want %v", got.MarkerWhy, all.MarkerWhy)
			}
			computed := 0
			for j, why := range all.MarkerWhy {
				read := tc.opt.MinHWEP > 0 && (why == Kept || why == FailedHWE || why == LDPruned)
				switch {
				case read && got.HWEP[j] != all.HWEP[j]:
					t.Errorf("marker %d (%v): p %v, want %v", j+1, why, got.HWEP[j], all.HWEP[j])
				case !read && !math.IsNaN(got.HWEP[j]):
					t.Errorf("marker %d (%v): p %v computed, not read by the filter", j+1, why, got.HWEP[j])
				}
				if read {
					computed++
				}
			}
			if tc.opt.MinHWEP > 0 && computed == 0 {
				t.Error("no marker reached the HWE filter")
			}
		})
	}
}

// TestRecountMatchesWriter forces the counting pass over all samples and
// compares it with the counts the store writer computed at import (an
// independent implementation), for a 2-bit and a float store.
func TestRecountMatchesWriter(t *testing.T) {
	c := hweCohort(37, 50)
	geno := c.store(t, 6)
	path := filepath.Join(t.TempDir(), "f.clinal")
	w, err := matrixio.Create(path, c.samples, matrixio.WriterOptions{Codec: matrixio.CodecFloat32, ChunkMarkers: 6})
	if err != nil {
		t.Fatal(err)
	}
	r := &rng{s: 3}
	for j, m := range c.markers {
		x := make([]float32, len(c.samples))
		for i, g := range c.g[j] {
			if g == matrixio.Missing {
				x[i] = float32(math.NaN())
			} else {
				x[i] = float32(g) + float32(r.float()-0.5)*0.6
			}
		}
		if err := w.AddFloats(m, x); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	float := openStore(t, path)
	for _, st := range []*matrixio.Store{geno, float} {
		t.Run(string(st.Codec()), func(t *testing.T) {
			sel := run(t, st, noFilters())
			all := make([]int, st.NumSamples())
			for i := range all {
				all[i] = i
			}
			sel.Counts = make([]matrixio.Counts, st.NumMarkers())
			f := &filters{opt: noFilters(), nk: len(all), float: st.Codec() == matrixio.CodecFloat32}
			p := &pass{st: st, sel: sel, f: f, keptIdx: all, recount: true, threads: 2}
			if err := p.run(context.Background()); err != nil {
				t.Fatal(err)
			}
			for j, want := range st.Counts() {
				if sel.Counts[j] != want {
					t.Fatalf("marker %d: recount %+v, writer %+v", j+1, sel.Counts[j], want)
				}
			}
		})
	}
}

// TestFloatStore: on dosages, call rate and MAF (Sum / 2n) apply, HWE is
// not computed, and LD pruning runs on the values.
func TestFloatStore(t *testing.T) {
	c, blocks := blockCohort(120, 1, 4, 5, 0.03)
	path := filepath.Join(t.TempDir(), "d.clinal")
	w, err := matrixio.Create(path, c.samples, matrixio.WriterOptions{Codec: matrixio.CodecFloat32, ChunkMarkers: 4})
	if err != nil {
		t.Fatal(err)
	}
	for j, m := range c.markers {
		x := make([]float32, len(c.samples))
		for i, g := range c.g[j] {
			x[i] = float32(g)
			if g == matrixio.Missing {
				x[i] = float32(math.NaN())
			}
		}
		if err := w.AddFloats(m, x); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	st := openStore(t, path)
	geno := c.store(t, 4)
	opt := ldOpt(0.5, "500kb", 1, 2)
	fs, gs := run(t, st, opt), run(t, geno, opt)
	for j := range c.markers {
		if !math.IsNaN(fs.HWEP[j]) {
			t.Fatalf("float store: HWE p %v, want NaN (not computed)", fs.HWEP[j])
		}
		a := Stats(fs.Counts[j], 120, true)
		b := Stats(gs.Counts[j], 120, false)
		if relErr(a.MAF, b.MAF) > 1e-12 || a.CallRate != b.CallRate {
			t.Fatalf("marker %d: dosage stats %+v, genotype stats %+v", j, a, b)
		}
	}
	// Integer dosages carry the genotypes: same r^2, same pruning.
	if !slices.Equal(fs.MarkerWhy, gs.MarkerWhy) {
		t.Errorf("float pruning %v differs from genotype pruning %v", fs.MarkerWhy, gs.MarkerWhy)
	}
	for _, idx := range blocks {
		kept := 0
		for _, j := range idx {
			if fs.MarkerKept[j] {
				kept++
			}
		}
		if kept != 1 {
			t.Errorf("block %v: %d kept, want 1", idx, kept)
		}
	}
}

func TestWriteLoad(t *testing.T) {
	c, _ := filterCohort()
	st := c.store(t, 8)
	dir := t.TempDir()
	opt := filterOptions(t, dir)
	opt.LDR2, opt.LDWindow = 0.9, "50"
	sel := run(t, st, opt)
	prefix := filepath.Join(dir, "out")
	if err := sel.Write(prefix, st); err != nil {
		t.Fatal(err)
	}
	// Contract headers (design.md).
	for path, start := range map[string]string{
		prefix + SuffixSampleStats: "sample_id\tcall_rate\tkept\twhy",
		prefix + SuffixMarkerStats: "chrom\tpos\tid\tref\talt\tcall_rate\talt_freq\tmaf\thwe_p\tkept\twhy",
	} {
		rows := readTSVHeader(t, path)
		if !strings.HasPrefix(rows, start) {
			t.Errorf("%s: header %q, want it to start with %q", path, rows, start)
		}
	}
	kept, _ := os.ReadFile(prefix + SuffixKeptSamples)
	if n := strings.Count(string(kept), "\n"); n != 47 {
		t.Errorf("kept-samples: %d lines, want 47", n)
	}
	km, _ := os.ReadFile(prefix + SuffixKeptMarkers)
	if n := strings.Count(string(km), "\n"); n != sel.NumKeptMarkers() {
		t.Errorf("kept-markers: %d lines, want %d", n, sel.NumKeptMarkers())
	}
	got, err := Load(prefix, st)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(got.SampleKept, sel.SampleKept) || !slices.Equal(got.MarkerKept, sel.MarkerKept) ||
		!slices.Equal(got.SampleWhy, sel.SampleWhy) || !slices.Equal(got.MarkerWhy, sel.MarkerWhy) ||
		!slices.Equal(got.Counts, sel.Counts) || !slices.Equal(got.SampleCallRate, sel.SampleCallRate) {
		t.Error("loaded selection differs from the written one")
	}
	for j := range sel.HWEP {
		if !(got.HWEP[j] == sel.HWEP[j] || math.IsNaN(got.HWEP[j]) && math.IsNaN(sel.HWEP[j])) {
			t.Errorf("marker %d: HWE p loaded %v, written %v", j, got.HWEP[j], sel.HWEP[j])
		}
	}
	if got.Report.Markers.Kept != sel.Report.Markers.Kept {
		t.Error("loaded report differs")
	}

	// Another store (one genotype changed) is refused.
	c.g[5][7] = (c.g[5][7] + 1) % 3
	other := c.store(t, 8)
	if _, err := Load(prefix, other); err == nil || !matrixio.IsBadInput(err) || !strings.Contains(err.Error(), "different genotype data") {
		t.Errorf("Load on another store: %v", err)
	}
	// A damaged row is refused with its file and line.
	ss := prefix + SuffixSampleStats
	b, _ := os.ReadFile(ss)
	lines := strings.Split(string(b), "\n")
	lines[4] = strings.Replace(lines[4], "\tyes\t", "\tmaybe\t", 1)
	writeFile(t, ss, strings.Join(lines, "\n"))
	_, err = Load(prefix, st)
	if err == nil || !matrixio.IsBadInput(err) || !strings.Contains(err.Error(), ss+":5:") {
		t.Errorf("Load with a damaged line: %v, want an error naming %s:5", err, ss)
	}
}

func readTSVHeader(t *testing.T, path string) string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var sc *bufio.Scanner
	if strings.HasSuffix(path, ".gz") {
		zr, err := gzip.NewReader(f)
		if err != nil {
			t.Fatal(err)
		}
		sc = bufio.NewScanner(zr)
	} else {
		sc = bufio.NewScanner(f)
	}
	sc.Scan()
	return sc.Text()
}

func TestBadInput(t *testing.T) {
	c, _ := filterCohort()
	st := c.store(t, 8)
	dir := t.TempDir()
	file := func(name, text string) string {
		p := filepath.Join(dir, name)
		writeFile(t, p, text)
		return p
	}
	for _, tc := range []struct {
		name string
		mod  func(o *Options)
		want string // substring of the error
	}{
		{"maf range", func(o *Options) { o.MinMAF = 0.7 }, "--min-maf 0.7: must be between 0 and 0.5"},
		{"call rate range", func(o *Options) { o.MinMarkerCallRate = 1.5 }, "--min-marker-call-rate 1.5"},
		{"sample call rate NaN", func(o *Options) { o.MinSampleCallRate = math.NaN() }, "--min-sample-call-rate NaN"},
		{"hwe negative", func(o *Options) { o.MinHWEP = -1 }, "--min-hwe-p -1"},
		{"r2 range", func(o *Options) { o.LDR2 = 2 }, "--ld-r2 2"},
		{"window", func(o *Options) { o.LDWindow = "5 furlongs" }, `--ld-window "5 furlongs"`},
		{"window one marker", func(o *Options) { o.LDWindow = "1" }, "at least 2 markers"},
		{"step", func(o *Options) { o.LDStep = -3 }, "--ld-step -3"},
		{"chrom range", func(o *Options) { o.Chromosomes = "1-X" }, `range "1-X" needs numeric ends`},
		{"chrom backwards", func(o *Options) { o.Chromosomes = "22-1" }, "runs backwards"},
		{"chrom empty item", func(o *Options) { o.Chromosomes = "1,,2" }, "empty item"},
		{"bed fields", func(o *Options) { o.ExcludeRegions = file("a.bed", "chr1\t10\t20\nchr1 30\n") }, "a.bed:2: want chrom, start and end"},
		{"bed start", func(o *Options) { o.ExcludeRegions = file("b.bed", "# x\nchr1\t-5\t20\n") }, `b.bed:2: bad start "-5"`},
		{"bed end", func(o *Options) { o.ExcludeRegions = file("c.bed", "chr1\t5\t2e3\n") }, `c.bed:1: bad end "2e3"`},
		{"bed backwards", func(o *Options) { o.ExcludeRegions = file("d.bed", "chr1\t1\t2\nchr1\t50\t40\n") }, "d.bed:2: end 40 before start 50"},
		{"bed missing", func(o *Options) { o.ExcludeRegions = filepath.Join(dir, "nope.bed") }, "nope.bed"},
		{"keep none match", func(o *Options) { o.KeepSamples = file("k.txt", "isle9-0001\nisle9-0002\n") }, "none of its 2 IDs is a sample of the store"},
		{"keep empty", func(o *Options) { o.KeepSamples = file("e.txt", "# nothing\n\n") }, "no sample IDs"},
		{"drop none match", func(o *Options) { o.DropSamples = file("dn.txt", "nobody\n") }, "--drop-samples"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			o := DefaultOptions()
			tc.mod(&o)
			_, err := Run(context.Background(), st, o)
			if err == nil {
				t.Fatalf("no error, want %q", tc.want)
			}
			if !matrixio.IsBadInput(err) || !strings.Contains(err.Error(), tc.want) || strings.Contains(err.Error(), "\n") {
				t.Fatalf("error %q (bad input %v), want a one-line BadInput containing %q", err, matrixio.IsBadInput(err), tc.want)
			}
		})
	}
}

func TestParseWindowAndChromosomes(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want Window
	}{
		{"500kb", Window{BP: 500000}}, {"1mb", Window{BP: 1000000}}, {"1.5Mb", Window{BP: 1500000}},
		{"250000bp", Window{BP: 250000}}, {"200", Window{Markers: 200}}, {" 50 KBP ", Window{BP: 50000}},
	} {
		got, err := ParseWindow(tc.in)
		if err != nil || got != tc.want {
			t.Errorf("ParseWindow(%q) = %+v, %v; want %+v", tc.in, got, err, tc.want)
		}
	}
	for _, tc := range []struct {
		sel  string
		in   []string
		want []bool
	}{
		{"", []string{"1", "chr22", "23", "X", "chrY", "MT", "chrUn_gl000220", "01"}, []bool{true, true, true, false, false, false, false, true}},
		{"1-22,X", []string{"chr1", "22", "23", "chrX", "x", "XY", "Y"}, []bool{true, true, false, true, true, false, false}},
		{"chrM,sex", []string{"MT", "chrM", "m", "X", "XY", "Y", "1"}, []bool{true, true, true, true, true, true, false}},
		{"all", []string{"scaffold_9", "1", "X"}, []bool{true, true, true}},
		{"scaffold_9,3", []string{"scaffold_9", "chrscaffold_9", "3", "4"}, []bool{true, true, true, false}},
	} {
		cs, err := ParseChromosomes(tc.sel)
		if err != nil {
			t.Fatal(err)
		}
		for i, c := range tc.in {
			if got := cs.Contains(c); got != tc.want[i] {
				t.Errorf("--chromosomes %q: Contains(%q) = %v, want %v", tc.sel, c, got, tc.want[i])
			}
		}
	}
}

func TestRegionsBoundaries(t *testing.T) {
	p := filepath.Join(t.TempDir(), "r.bed")
	// UCSC BED: 0-based start, exclusive end; [100, 200) covers 1-based
	// positions 101..200 (the UCSC convention, common practice).
	writeFile(t, p, "chr5\t100\t200\n5\t150\t300\nchr5\t400\t400\n")
	r, err := ReadBED(p)
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		chrom string
		pos   int64
		want  bool
	}{{"5", 100, false}, {"chr5", 101, true}, {"5", 200, true}, {"5", 300, true}, {"5", 301, false}, {"5", 400, false}, {"6", 150, false}} {
		if got := r.Contains(tc.chrom, tc.pos); got != tc.want {
			t.Errorf("Contains(%s, %d) = %v, want %v", tc.chrom, tc.pos, got, tc.want)
		}
	}
}

// TestRunCancelled: a cancelled context stops the pass.
func TestRunCancelled(t *testing.T) {
	c, _ := blockCohort(40, 2, 4, 4, 0.1)
	st := c.store(t, 4)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := Run(ctx, st, ldOpt(0.2, "500kb", 1, 2)); !errors.Is(err, context.Canceled) {
		t.Fatalf("err = %v, want context.Canceled", err)
	}
}
