package qc

import (
	"context"
	"fmt"
	"math"
	"testing"

	"github.com/clinal/clinal/matrixio"
	"github.com/clinal/clinal/randsvd"
)

// TestPCAAfterPruning: a long LD block dominates a PC of unpruned data;
// after LD pruning no top PC is carried by it (issue 4: "PCs after pruning
// are not dominated by a block, show the loadings"). The data: 300 samples
// of two populations (allele frequencies p -+ 0.1 at each of 3000
// independent markers 20 kb apart) and one block of 200 markers 1 kb apart
// that copy one genotype vector (2% redrawn). That a block of copies
// forms its own axis is common practice, no source; the measure is the
// share of each PC's squared loadings on the block's markers.
func TestPCAAfterPruning(t *testing.T) {
	const n, indep, block = 300, 3000, 200
	r := &rng{s: 21}
	c := &testCohort{}
	for i := 0; i < n; i++ {
		c.samples = append(c.samples, fmt.Sprintf("isle%d-%04d", 1+i%2*3, i+1))
	}
	add := func(pos int64, row []byte) {
		c.markers = append(c.markers, matrixio.Marker{Chrom: "1", Pos: pos, ID: fmt.Sprintf("m%d", len(c.markers)+1), Ref: "A", Alt: "C"})
		c.g = append(c.g, row)
	}
	inBlock := map[int]bool{}
	pos := int64(10_000)
	for j := 0; j < indep; j++ {
		if j == indep/2 {
			base := make([]byte, n)
			for i := range base {
				base[i] = r.geno(0.4, 0)
			}
			for k := 0; k < block; k++ {
				row := make([]byte, n)
				for i := range row {
					row[i] = base[i]
					if r.float() < 0.02 {
						row[i] = r.geno(0.4, 0)
					}
				}
				inBlock[len(c.markers)] = true
				add(pos, row)
				pos += 1000
			}
			pos += 20_000
		}
		p := 0.2 + 0.6*r.float()
		row := make([]byte, n)
		for i := range row {
			q := p - 0.1
			if i%2 == 1 {
				q = p + 0.1
			}
			row[i] = r.geno(q, 0.005)
		}
		add(pos, row)
		pos += 20_000
	}
	st := c.store(t, 256)
	share := func(name string, opt Options) (float64, int) {
		sel := run(t, st, opt)
		res, op, err := randsvd.RunPCA(context.Background(), st, randsvd.PCAOptions{K: 3, Tol: 1e-6, MaxPasses: 60, Seed: 1,
			Threads: 2, SampleKept: sel.SampleKept, MarkerKept: sel.MarkerKept, Counts: sel.Counts, TW: "off"})
		if err != nil {
			t.Fatal(err)
		}
		km := op.KeptMarkers()
		on := make([]float64, 3)
		tot := make([]float64, 3)
		err = randsvd.Loadings(context.Background(), op, res, func(ord int, v []float64) error {
			for k := range on {
				tot[k] += v[k] * v[k]
				if inBlock[km[ord]] {
					on[k] += v[k] * v[k]
				}
			}
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		worst := 0.0
		for k := range on {
			t.Logf("%s: PC%d: eigenvalue %.3f, %.1f%% of squared loadings on the block", name, k+1, res.Eigenvalues[k], 100*on[k]/tot[k])
			worst = math.Max(worst, on[k]/tot[k])
		}
		kept := 0
		for j := range inBlock {
			if sel.MarkerKept[j] {
				kept++
			}
		}
		return worst, kept
	}
	opt := noFilters()
	worst, _ := share("unpruned", opt)
	if worst < 0.5 {
		t.Errorf("unpruned: the block carries at most %.0f%% of a top PC's loadings; the test expects it to dominate one", 100*worst)
	}
	opt.LDR2, opt.LDWindow = 0.2, "500kb"
	worst, kept := share("pruned", opt)
	if worst > 0.02 {
		t.Errorf("pruned: the block still carries %.1f%% of a top PC's loadings (%d block markers kept)", 100*worst, kept)
	}
	if kept < 1 || kept > 3 {
		t.Errorf("pruned: %d block markers kept, want about one", kept)
	}
}
