package qc

import (
	"fmt"
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/clinal/clinal/matrixio"
)

// blockCohort plants LD blocks: on each of nChrom chromosomes, nBlocks
// blocks of perBlock markers 2 kb apart, blocks 600 kb apart. Within a
// block every marker copies one base genotype vector, each sample redrawn
// with probability flip; blocks are independent. 2% of calls are missing.
func blockCohort(nSamples, nChrom, nBlocks, perBlock int, flip float64) (*testCohort, [][]int) {
	r := &rng{s: 11}
	c := &testCohort{}
	for i := 0; i < nSamples; i++ {
		c.samples = append(c.samples, fmt.Sprintf("isle%d-%04d", i%5+1, i+1))
	}
	var blocks [][]int
	for ch := 1; ch <= nChrom; ch++ {
		for b := 0; b < nBlocks; b++ {
			p := 0.15 + 0.7*r.float()
			base := make([]byte, nSamples)
			for i := range base {
				base[i] = r.geno(p, 0)
			}
			var idx []int
			for k := 0; k < perBlock; k++ {
				row := make([]byte, nSamples)
				for i := range row {
					row[i] = base[i]
					if r.float() < flip {
						row[i] = r.geno(p, 0)
					}
					if r.float() < 0.02 {
						row[i] = matrixio.Missing
					}
				}
				idx = append(idx, len(c.markers))
				c.markers = append(c.markers, matrixio.Marker{Chrom: fmt.Sprint(ch),
					Pos: int64(1_000_000 + b*600_000 + k*2_000), ID: fmt.Sprintf("c%db%dm%d", ch, b, k), Ref: "C", Alt: "T"})
				c.g = append(c.g, row)
			}
			blocks = append(blocks, idx)
		}
	}
	return c, blocks
}

// ldOpt prunes at r^2 > r2 and filters nothing else.
func ldOpt(r2 float64, window string, step, threads int) Options {
	o := noFilters()
	o.LDR2, o.LDWindow, o.LDStep, o.Threads = r2, window, step, threads
	return o
}

// TestLDPlantedBlocks: with a high threshold pruning keeps one marker per
// planted block (common practice, no source: copies of one genotype
// vector are in strong LD, independent blocks are not), in one pass, and
// the result is the same for 1, 2 and 3 threads.
func TestLDPlantedBlocks(t *testing.T) {
	c, blocks := blockCohort(400, 3, 8, 6, 0.03)
	st := c.store(t, 7) // small chunks: units and windows straddle them
	var first []Reason
	for _, threads := range []int{1, 2, 3} {
		sel := run(t, st, ldOpt(0.5, "500kb", 1, threads))
		if sel.Report.Passes != 1 {
			t.Errorf("threads %d: %d passes, want 1", threads, sel.Report.Passes)
		}
		if first == nil {
			first = sel.MarkerWhy
			for b, idx := range blocks {
				kept := 0
				for _, j := range idx {
					if sel.MarkerKept[j] {
						kept++
					}
				}
				if kept != 1 {
					t.Errorf("block %d: %d markers kept, want 1", b, kept)
				}
			}
			continue
		}
		if !slices.Equal(first, sel.MarkerWhy) {
			t.Errorf("threads %d: pruning differs from threads 1", threads)
		}
	}
}

// naiveR2 is the squared correlation over pairwise complete samples,
// computed directly in float64 from the codes (the definition R's
// cor(..., use = "pairwise.complete.obs") implements); 0 when undefined.
func naiveR2(x, y []byte, kept []bool) float64 {
	var n, sx, sy, sxx, syy, sxy float64
	for i := range x {
		if !kept[i] || x[i] == matrixio.Missing || y[i] == matrixio.Missing {
			continue
		}
		a, b := float64(x[i]), float64(y[i])
		n++
		sx += a
		sy += b
		sxx += a * a
		syy += b * b
		sxy += a * b
	}
	vx, vy := n*sxx-sx*sx, n*syy-sy*sy
	if vx <= 0 || vy <= 0 {
		return 0
	}
	cv := n*sxy - sx*sy
	return cv * cv / (vx * vy)
}

// naivePrune applies the greedy rule documented on ldWindow literally:
// every window s = 0, step, ..., all pairs (i, j) of markers still present
// compared anew, in order, the lower-MAF marker (the later on a tie)
// removed. It returns the removed candidates.
func naivePrune(c *testCohort, cands []int, kept []bool, win Window, step int, thr float64) map[int]bool {
	maf := make([]float64, len(cands))
	for k, j := range cands {
		var n, s float64
		for i, g := range c.g[j] {
			if kept[i] && g != matrixio.Missing {
				n++
				s += float64(g)
			}
		}
		p := s / (2 * n)
		maf[k] = math.Min(p, 1-p)
	}
	dropped := map[int]bool{}
	n := len(cands)
	for s := 0; s < n; s += step {
		e := min(n, s+win.Markers)
		if win.BP > 0 {
			e = s
			for e < n && c.markers[cands[e]].Pos < c.markers[cands[s]].Pos+win.BP {
				e++
			}
		}
		for i := s; i < e; i++ {
			if dropped[i] {
				continue
			}
			for j := i + 1; j < e; j++ {
				if dropped[j] {
					continue
				}
				if naiveR2(c.g[cands[i]], c.g[cands[j]], kept) > thr {
					if maf[i] < maf[j] {
						dropped[i] = true
						break
					}
					dropped[j] = true
				}
			}
		}
	}
	out := map[int]bool{}
	for k := range dropped {
		out[cands[k]] = true
	}
	return out
}

// TestLDGreedyMatchesNaive checks the streaming pruner (bit-plane r^2,
// each pair tested once, bounded window) against the literal rule on
// data with moderate LD, for windows in bp and in markers, steps 1, 3 and
// 5, with and without samples removed, in both row layouts.
func TestLDGreedyMatchesNaive(t *testing.T) {
	c, _ := blockCohort(150, 2, 6, 7, 0.35)
	st := c.store(t, 5)
	drop := t.TempDir() + "/drop.txt"
	writeFile(t, drop, "isle1-0001\nisle2-0002\n")
	for _, tc := range []struct {
		window string
		step   int
		thr    float64
		drop   bool
		layout int
	}{
		{"500kb", 1, 0.3, false, layoutAuto},
		{"20kb", 1, 0.2, false, layoutCompact},
		{"10", 1, 0.3, false, layoutAuto},
		{"10", 5, 0.3, false, layoutCompact},
		{"700kb", 5, 0.25, true, layoutMasked},
		{"700kb", 5, 0.25, true, layoutCompact},
		{"1mb", 3, 0.1, true, layoutMasked},
	} {
		t.Run(fmt.Sprintf("%s-step%d-r%v-drop%v-layout%d", tc.window, tc.step, tc.thr, tc.drop, tc.layout), func(t *testing.T) {
			opt := ldOpt(tc.thr, tc.window, tc.step, 2)
			opt.layout = tc.layout
			if tc.drop {
				opt.DropSamples = drop
			}
			sel := run(t, st, opt)
			kept := sel.SampleKept
			var cands []int
			for j, w := range sel.MarkerWhy {
				if w == Kept || w == LDPruned {
					cands = append(cands, j)
				}
			}
			win, _ := ParseWindow(tc.window)
			want := naivePrune(c, cands, kept, win, tc.step, tc.thr)
			got := 0
			for _, j := range cands {
				if (sel.MarkerWhy[j] == LDPruned) != want[j] {
					t.Errorf("marker %s: pruned %v, literal rule %v", c.markers[j].ID, sel.MarkerWhy[j] == LDPruned, want[j])
				}
				if want[j] {
					got++
				}
			}
			if got == 0 || got == len(cands) {
				t.Errorf("%d of %d pruned: the case does not exercise the rule", got, len(cands))
			}
		})
	}
}

// TestLDWindowMemoryBound: a memory bound too small for the window cuts
// windows short, the report says so, and threads do not change it.
func TestLDWindowMemoryBound(t *testing.T) {
	c, _ := blockCohort(64, 1, 3, 6, 0.03)
	st := c.store(t, 8)
	opt := ldOpt(0.5, "500kb", 1, 1)
	opt.LDMemory = int64(3 * rowBytesFor(1, 64, false)) // three rows of 64 samples
	sel := run(t, st, opt)
	ld := sel.Report.LD
	if ld == nil || ld.MaxWindowMarkers != 3 || ld.WindowsTruncated == 0 {
		t.Fatalf("LD report %+v, want windows of 3 markers, some truncated", ld)
	}
	if !strings.Contains(strings.Join(sel.Report.Warnings, " "), "cut short") {
		t.Errorf("warnings %q lack the truncation", sel.Report.Warnings)
	}
	// The cap is per window, so the result does not depend on threads.
	opt.Threads = 2
	if s2 := run(t, st, opt); !slices.Equal(s2.MarkerWhy, sel.MarkerWhy) {
		t.Error("truncated windows prune differently with 2 threads")
	}
}

// TestLDUnsortedPositions: a bp window needs sorted positions.
func TestLDUnsortedPositions(t *testing.T) {
	c, _ := blockCohort(20, 1, 2, 3, 0.5)
	c.markers[4].Pos = 10
	st := c.store(t, 4)
	_, err := Run(t.Context(), st, ldOpt(0.2, "500kb", 1, 1))
	if err == nil || !matrixio.IsBadInput(err) || !strings.Contains(err.Error(), "marker 5 (1:10)") {
		t.Fatalf("err = %v, want a BadInput naming marker 5 (1:10)", err)
	}
}
