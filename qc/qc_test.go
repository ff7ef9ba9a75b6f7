package qc

import (
	"context"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/clinal/clinal/matrixio"
)

// noFilters keeps everything except monomorphic markers.
func noFilters() Options { return Options{Chromosomes: "all"} }

func run(t testing.TB, st *matrixio.Store, opt Options) *Selection {
	t.Helper()
	sel, err := Run(context.Background(), st, opt)
	if err != nil {
		t.Fatal(err)
	}
	return sel
}

// hweCohort simulates markers with a range of frequencies, some with an
// excess of heterozygotes or homozygotes, and 2% missing calls.
func hweCohort(nSamples, nMarkers int) *testCohort {
	r := &rng{s: 7}
	c := &testCohort{}
	for i := 0; i < nSamples; i++ {
		c.samples = append(c.samples, fmt.Sprintf("isle%d-%04d", i%5+1, i+1))
	}
	for j := 0; j < nMarkers; j++ {
		p := 0.02 + 0.96*r.float()
		c.markers = append(c.markers, matrixio.Marker{Chrom: "1", Pos: int64(1000 * (j + 1)), ID: fmt.Sprintf("m%d", j+1), Ref: "A", Alt: "G"})
		row := make([]byte, nSamples)
		for i := range row {
			row[i] = r.geno(p, 0.02)
			switch {
			case j%7 == 3 && row[i] != matrixio.Missing && r.float() < 0.3:
				row[i] = 1 // excess heterozygotes
			case j%7 == 5 && row[i] == 1 && r.float() < 0.5:
				row[i] = 2 * byte(r.next()&1) // deficit of heterozygotes
			}
		}
		c.g = append(c.g, row)
	}
	return c
}

// TestHWEVsBcftools cross-checks the HWE p-values of Run (store imported
// from a VCF with matrixio.ImportVCF) with `bcftools +fill-tags -t HWE`
// (Debian bcftools 1.16, which implements Wigginton et al. 2005) on the
// same VCF, to bcftools' printed precision (6 significant digits).
func TestHWEVsBcftools(t *testing.T) {
	bcf := lookTool(t, "bcftools")
	c := hweCohort(300, 80)
	dir := t.TempDir()
	vcf := filepath.Join(dir, "h.vcf")
	if err := os.WriteFile(vcf, []byte(c.vcf()), 0o644); err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(bcf, "+fill-tags", vcf, "-Ov", "--", "-t", "HWE")
	if _, err := os.Stat("/usr/lib/x86_64-linux-gnu/bcftools"); err == nil && os.Getenv("BCFTOOLS_PLUGINS") == "" {
		cmd.Env = append(os.Environ(), "BCFTOOLS_PLUGINS=/usr/lib/x86_64-linux-gnu/bcftools")
	}
	out, err := cmd.Output()
	if err != nil {
		missingRef(t, "bcftools +fill-tags failed (plugin missing?): %v", err)
	}
	want := map[string]float64{}
	for _, line := range strings.Split(string(out), "\n") {
		if line == "" || line[0] == '#' {
			continue
		}
		f := strings.Split(line, "\t")
		for _, kv := range strings.Split(f[7], ";") {
			if v, ok := strings.CutPrefix(kv, "HWE="); ok {
				p, err := strconv.ParseFloat(v, 64)
				if err != nil {
					t.Fatalf("bcftools HWE %q", v)
				}
				want[f[2]] = p
			}
		}
	}
	st := importVCF(t, vcf, 16)
	sel := run(t, st, noFilters())
	small := 0
	for j, m := range st.Markers() {
		w, ok := want[m.ID]
		if !ok {
			t.Fatalf("bcftools gave no HWE for %s", m.ID)
		}
		if w < 1e-6 {
			small++
		}
		if e := relErr(sel.HWEP[j], w); e > 1e-5 {
			t.Errorf("%s: HWE p %.9g, bcftools %g", m.ID, sel.HWEP[j], w)
		}
	}
	if small < 5 {
		t.Errorf("only %d markers with p < 1e-6: the cohort does not exercise the tail", small)
	}
}

// hapmapVCF returns the HapMap CEU/YRI VCF made by testdata/hapmap/make.sh.
func hapmapVCF(t *testing.T) string { return fixture(t, "ref/hapmap/hapmap.vcf") }

// TestHapMapStatsAllSamples compares Run's counts, frequencies and call
// rates (from the stored counts: no sample removed) with those computed by
// base R in testdata/hapmap/convert.R (counts.tsv, samples.tsv), and the
// pairwise LD r^2 with R's cor(x, y, use = "pairwise.complete.obs")^2
// (ld.tsv.gz, every pair at most 50 markers apart).
func TestHapMapStatsAllSamples(t *testing.T) {
	st := importVCF(t, hapmapVCF(t), 64)
	sel := run(t, st, noFilters())
	if sel.Report.CountsRecomputed {
		t.Fatal("no sample removed, yet counts were recomputed")
	}
	ref := readTSV(t, fixture(t, "ref/hapmap/counts.tsv"))
	if len(ref) != st.NumMarkers() {
		t.Fatalf("%d reference markers, store has %d", len(ref), st.NumMarkers())
	}
	N := st.NumSamples()
	for j, row := range ref {
		checkMarkerStats(t, st, sel, j, row, N)
	}
	sref := readTSV(t, fixture(t, "ref/hapmap/samples.tsv"))
	for i, row := range sref {
		if row["sample_id"] != st.Samples()[i] {
			t.Fatalf("sample %d: %s vs %s", i, row["sample_id"], st.Samples()[i])
		}
		want, _ := strconv.ParseFloat(row["call_rate"], 64)
		if relErr(sel.SampleCallRate[i], want) > 1e-14 {
			t.Errorf("sample %s: call rate %v, R %v", row["sample_id"], sel.SampleCallRate[i], want)
		}
	}
	// LD r^2 against R, in each row layout.
	idx := map[string]int{}
	for j, m := range st.Markers() {
		idx[m.ID] = j
	}
	ld := readTSV(t, fixture(t, "ref/hapmap/ld.tsv.gz"))
	for name, rows := range rowLayouts(t, st, nil) {
		compared := 0
		for _, r := range ld {
			a, b := idx[r["id1"]], idx[r["id2"]]
			got := pairR2(rows[a], rows[b])
			if r["r2"] == "NA" {
				if got != 0 {
					t.Errorf("%s: %s-%s: r^2 %v where R's is undefined (want 0: such pairs never prune)", name, r["id1"], r["id2"], got)
				}
				continue
			}
			want, _ := strconv.ParseFloat(r["r2"], 64)
			compared++
			if math.Abs(got-want) > 1e-12 {
				t.Errorf("%s: %s-%s: r^2 %.17g, R cor^2 %.17g", name, r["id1"], r["id2"], got, want)
			}
		}
		if compared < 20000 {
			t.Errorf("%s: only %d pairs compared", name, compared)
		}
	}
}

// rowLayouts decodes the store into LD rows of each kind: bit planes over
// all samples with removed ones masked, bit planes over the kept samples,
// and float values.
func rowLayouts(t *testing.T, st *matrixio.Store, keep []bool) map[string][]*ldRow {
	t.Helper()
	compact := hapmapRows(t, st, keep, false)
	floats := make([]*ldRow, len(compact))
	for j, r := range compact {
		f := make([]float32, r.n+int64(len(r.miss)))
		if !r.missOK {
			t.Fatal("too many missing calls for the float conversion")
		}
		for k := range f {
			if r.c[k>>6]&(1<<(k&63)) == 0 {
				f[k] = float32(math.NaN())
			} else {
				f[k] = float32(r.geno(int32(k)))
			}
		}
		floats[j] = &ldRow{f: f}
	}
	return map[string][]*ldRow{"masked": hapmapRows(t, st, keep, true), "compact": compact, "float": floats}
}

func checkMarkerStats(t *testing.T, st *matrixio.Store, sel *Selection, j int, row map[string]string, nk int) {
	t.Helper()
	m := st.Markers()[j]
	if row["id"] != m.ID {
		t.Fatalf("marker %d: reference %s, store %s", j, row["id"], m.ID)
	}
	c := sel.Counts[j]
	got := []uint32{c.HomRef, c.Het, c.HomAlt, c.Missing}
	for k, col := range []string{"hom_ref", "het", "hom_alt", "missing"} {
		want, _ := strconv.ParseUint(row[col], 10, 32)
		if uint64(got[k]) != want {
			t.Errorf("%s: %s %d, R %d", m.ID, col, got[k], want)
		}
	}
	s := Stats(c, nk, false)
	for _, x := range []struct {
		col string
		v   float64
	}{{"alt_freq", s.AltFreq}, {"maf", s.MAF}, {"call_rate", s.CallRate}} {
		want, _ := strconv.ParseFloat(row[x.col], 64)
		if relErr(x.v, want) > 1e-14 {
			t.Errorf("%s: %s %.17g, R %.17g", m.ID, x.col, x.v, want)
		}
	}
}

// hapmapRows decodes every marker of the store into LD rows over the
// samples kept (all when keep is nil), in the masked layout (all samples,
// removed ones masked) or the compact one (kept samples only).
func hapmapRows(t *testing.T, st *matrixio.Store, keep []bool, masked bool) []*ldRow {
	t.Helper()
	N := st.NumSamples()
	var kept []int
	for i := 0; i < N; i++ {
		if keep == nil || keep[i] {
			kept = append(kept, i)
		}
	}
	width := len(kept)
	if masked {
		width = N
	}
	words := (width + 63) / 64
	mask := make([]uint64, words)
	for k, i := range kept {
		if masked {
			mask[i>>6] |= 1 << (i & 63)
		} else {
			mask[k>>6] |= 1 << (k & 63)
		}
	}
	pool := &rowPool{words: words, nk: len(kept)}
	rows := make([]*ldRow, st.NumMarkers())
	codes := make([]byte, N)
	err := st.Stream(context.Background(), st.AllChunks(), 1, func(c *matrixio.Chunk) error {
		for r := 0; r < c.N; r++ {
			row := pool.get()
			if masked {
				row.fillPacked(c.Row(r, st.RowBytes()), mask)
			} else {
				matrixio.DecodeGenotypes(c.Row(r, st.RowBytes()), codes)
				row.fillCodes(codes, kept, mask)
			}
			rows[c.First+r] = row
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return rows
}

// TestHapMapKeepCEU keeps the 90 CEU samples with a keep list, so the
// counts are recomputed in a pass, and compares counts, frequencies, call
// rates and pairwise r^2 with base R on the same subset
// (testdata/qc/stats.R).
func TestHapMapKeepCEU(t *testing.T) {
	vcf := hapmapVCF(t)
	st := importVCF(t, vcf, 50)
	dir := t.TempDir()
	keep := filepath.Join(dir, "ceu.txt")
	var b strings.Builder
	for _, id := range st.Samples() {
		if strings.HasPrefix(id, "ceu-") {
			b.WriteString(id + "\n")
		}
	}
	b.WriteString("ceu-999\n") // unknown: a warning, not an error
	if err := os.WriteFile(keep, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	runR(t, fixture(t, "qc/stats.R"), vcf, keep, "20", dir)
	opt := noFilters()
	opt.KeepSamples = keep
	opt.Threads = 2
	sel := run(t, st, opt)
	if !sel.Report.CountsRecomputed || sel.Report.Passes != 1 {
		t.Fatalf("counts recomputed %v, passes %d; want true, 1", sel.Report.CountsRecomputed, sel.Report.Passes)
	}
	if n := sel.NumKeptSamples(); n != 90 {
		t.Fatalf("%d samples kept, want the 90 CEU", n)
	}
	if len(sel.Report.Warnings) != 1 || !strings.Contains(sel.Report.Warnings[0], "1 of 91 IDs") {
		t.Errorf("warnings %q, want one about 1 of 91 unknown IDs", sel.Report.Warnings)
	}
	ref := readTSV(t, filepath.Join(dir, "markers.tsv"))
	for j, row := range ref {
		checkMarkerStats(t, st, sel, j, row, 90)
	}
	compared := 0
	ld := readTSV(t, filepath.Join(dir, "ld.tsv"))
	for name, rows := range rowLayouts(t, st, sel.SampleKept) {
		for _, r := range ld {
			i, _ := strconv.Atoi(r["i"])
			j, _ := strconv.Atoi(r["j"])
			got := pairR2(rows[i-1], rows[j-1])
			if r["r2"] == "NA" {
				if got != 0 {
					t.Errorf("%s: pair %d-%d: r^2 %v where R's is undefined", name, i, j, got)
				}
				continue
			}
			want, _ := strconv.ParseFloat(r["r2"], 64)
			compared++
			if math.Abs(got-want) > 1e-12 {
				t.Errorf("%s: pair %d-%d: r^2 %.17g, R %.17g", name, i, j, got, want)
			}
		}
	}
	// Both row layouts of the pass give the same counts and pruning.
	opt.LDR2, opt.LDWindow = 0.5, "200kb"
	var whys [][]Reason
	for _, layout := range []int{layoutMasked, layoutCompact} {
		o := opt
		o.layout = layout
		s := run(t, st, o)
		if !slices.Equal(s.Counts, sel.Counts) {
			t.Errorf("layout %d: counts differ", layout)
		}
		whys = append(whys, s.MarkerWhy)
	}
	if !slices.Equal(whys[0], whys[1]) {
		t.Errorf("the two row layouts prune differently")
	}
	if compared < 10000 {
		t.Errorf("only %d pairs compared", compared)
	}
}
