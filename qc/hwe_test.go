package qc

import (
	"bufio"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

type hweCase struct{ homRef, het, homAlt int }

// hweGrid returns genotype configurations for n from 1 to 2,000, with rare
// (1, 2, 3, 5, 10 copies) and common alleles, heterozygote counts from the
// extremes through the mode, and the rare allele on either side.
func hweGrid() []hweCase {
	var out []hweCase
	seen := map[hweCase]bool{}
	add := func(c hweCase) {
		if !seen[c] {
			seen[c] = true
			out = append(out, c)
		}
	}
	for _, n := range []int{1, 2, 3, 4, 5, 7, 10, 15, 20, 33, 50, 77, 100, 150, 250, 400, 700, 1000, 1500, 2000} {
		for k, rare := range []int{1, 2, 3, 5, 10, n / 10, n / 4, n / 2, 3 * n / 4, n} {
			if rare < 1 || rare > n {
				continue
			}
			// Possible het counts: same parity as rare, 0..rare.
			var hs []int
			for h := rare % 2; h <= rare; h += 2 {
				hs = append(hs, h)
			}
			pick := hs
			if len(hs) > 9 {
				mode := rare * (2*n - rare) / (2 * n)
				pick = nil
				for _, f := range []float64{0, 0.05, 0.2, 0.4, 0.6, 0.8, 1} {
					pick = append(pick, hs[int(f*float64(len(hs)-1))])
				}
				for _, d := range []int{-4, -2, 0, 2, 4} {
					if h := mode - mode%2 + rare%2 + d; h >= 0 && h <= rare {
						pick = append(pick, h)
					}
				}
			}
			for _, h := range pick {
				homRare := (rare - h) / 2
				homCommon := n - h - homRare
				if k%2 == 0 {
					add(hweCase{homCommon, h, homRare})
				} else {
					add(hweCase{homRare, h, homCommon})
				}
			}
		}
	}
	return out
}

type hweRef struct {
	p, pTies, pMid float64
	nearTie        bool
	via            string
}

// hweReference runs testdata/qc/hwe_exact.R on the cases.
func hweReference(t *testing.T, cases []hweCase) []hweRef {
	t.Helper()
	script := fixture(t, "qc/hwe_exact.R")
	dir := t.TempDir()
	in, out := filepath.Join(dir, "in.tsv"), filepath.Join(dir, "out.tsv")
	var b strings.Builder
	b.WriteString("hom_ref\thet\thom_alt\n")
	for _, c := range cases {
		fmt.Fprintf(&b, "%d\t%d\t%d\n", c.homRef, c.het, c.homAlt)
	}
	if err := os.WriteFile(in, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	runR(t, script, in, out)
	f, err := os.Open(out)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	var refs []hweRef
	for line := 0; sc.Scan(); line++ {
		if line == 0 {
			continue
		}
		fl := strings.Fields(sc.Text())
		if len(fl) != 8 {
			t.Fatalf("R output line %d: %q", line+1, sc.Text())
		}
		p, err1 := strconv.ParseFloat(fl[3], 64)
		pt, err2 := strconv.ParseFloat(fl[5], 64)
		pm, err3 := strconv.ParseFloat(fl[7], 64)
		if err1 != nil || err2 != nil || err3 != nil {
			t.Fatalf("R output line %d: %q", line+1, sc.Text())
		}
		refs = append(refs, hweRef{p: p, pTies: pt, pMid: pm, nearTie: fl[4] == "1", via: fl[6]})
	}
	if len(refs) != len(cases) {
		t.Fatalf("R returned %d rows for %d cases", len(refs), len(cases))
	}
	return refs
}

func relErr(got, want float64) float64 {
	if got == want {
		return 0
	}
	return math.Abs(got-want) / math.Max(math.Abs(want), 1e-300)
}

// TestHWEExactVsRGenetics compares HWEExact with Debian r-cran-genetics
// HWE.exact (reference implementation of Wigginton, Cutler & Abecasis
// 2005) on a grid of counts, n = 1..2000, at 1e-10 relative where R's p is
// above 1e-300, plus a few large cohorts (n up to 10^6, R applying
// HWE.exact's own formula) at 1e-6 relative, the accuracy of R's lgamma
// there.
func TestHWEExactVsRGenetics(t *testing.T) {
	cases := hweGrid()
	large := []hweCase{
		{250000, 500000, 250000}, {249000, 502000, 249000}, {260000, 480000, 260000},
		{980100, 19800, 100}, {980000, 20000, 0}, {999990, 10, 0}, {99000, 1000, 0},
		{36000, 48000, 16000}, {35500, 49000, 15500},
	}
	cases = append(cases, large...)
	refs := hweReference(t, cases)
	compared, ties := 0, 0
	for i, c := range cases {
		ref := refs[i]
		got := HWEExact(c.homRef, c.het, c.homAlt, false)
		if got < 0 || got > 1 || math.IsNaN(got) {
			t.Errorf("HWEExact%v = %v, outside [0,1]", c, got)
			continue
		}
		if ref.p <= 1e-300 {
			if got > 1e-290 {
				t.Errorf("HWEExact%v = %v, R HWE.exact gives %v", c, got, ref.p)
			}
			continue
		}
		tol := 1e-10
		if ref.via != "HWE.exact" {
			tol = 1e-6
		}
		if ref.nearTie {
			// HWE.exact counts a tied configuration or not depending on the
			// rounding of lgamma; accept either reading.
			ties++
			if relErr(got, ref.p) > tol && relErr(got, ref.pTies) > tol {
				t.Errorf("HWEExact%v = %.17g, R gives %.17g (ties included %.17g)", c, got, ref.p, ref.pTies)
			}
			continue
		}
		compared++
		if e := relErr(got, ref.p); e > tol {
			t.Errorf("HWEExact%v = %.17g, R HWE.exact (%s) %.17g, relative error %.2g", c, got, ref.via, ref.p, e)
		}
		// Mid-p: R's p minus half of HWE.exact's density of the observed
		// configuration (the definition of Graffelman & Moreno 2013, from
		// memory), where that difference is not lost to cancellation.
		if mid := HWEExact(c.homRef, c.het, c.homAlt, true); ref.pMid > 1e-3*ref.p {
			if e := relErr(mid, ref.pMid); e > 100*tol {
				t.Errorf("HWEExact%v mid-p = %.17g, from R %.17g, relative error %.2g", c, mid, ref.pMid, e)
			}
		}
	}
	t.Logf("%d configurations compared with R, %d with near ties", compared, ties)
	if compared < 500 {
		t.Errorf("only %d grid points compared", compared)
	}
}

// TestHWEExactFacts checks values that need no reference program.
func TestHWEExactFacts(t *testing.T) {
	for _, tc := range []struct {
		name                string
		homRef, het, homAlt int
		midP                bool
		want                float64
		source              string
	}{
		// Common practice, no source: the configuration at the mode of the
		// null distribution has p = 1.
		{"25-50-25", 25, 50, 25, false, 1, "common practice, no source"},
		// A single possible configuration: p = 1 (P(obs) = 1), mid-p 0.5.
		{"monomorphic", 100, 0, 0, false, 1, "definition"},
		{"monomorphic midp", 100, 0, 0, true, 0.5, "definition: 1 - P(obs)/2"},
		{"one copy", 99, 1, 0, false, 1, "definition: one configuration"},
		// Hand computation from the density of the paper: n = 2 with one
		// copy of each allele in each sample (het = 2) or a homozygote
		// pair: P(het=2) = 2!/(0!2!0!) 2^2 2!2!/4! = 2/3, P(het=0) = 1/3.
		{"n2 het2", 0, 2, 0, false, 1, "hand computation"},
		{"n2 het0", 1, 0, 1, false, 1.0 / 3, "hand computation"},
		{"n2 het0 midp", 1, 0, 1, true, 1.0/3 - 1.0/6, "hand computation"},
		{"n2 het2 midp", 0, 2, 0, true, 1 - 1.0/3, "hand computation"},
		{"empty", 0, 0, 0, false, math.NaN(), "no genotypes"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got := HWEExact(tc.homRef, tc.het, tc.homAlt, tc.midP)
			if math.IsNaN(tc.want) {
				if !math.IsNaN(got) {
					t.Fatalf("got %v, want NaN (%s)", got, tc.source)
				}
				return
			}
			if relErr(got, tc.want) > 1e-14 {
				t.Fatalf("got %.17g, want %.17g (%s)", got, tc.want, tc.source)
			}
		})
	}
}

// TestHWEExactHugeCohorts checks that nothing overflows or underflows into
// nonsense for very large cohorts: the p-value stays in [0, 1], is
// symmetric in the two alleles, the mid-p is below the p-value, and an
// extreme excess of heterozygotes gives 0 without looping over millions of
// terms. (Exact values at this size are checked against R in
// TestHWEExactVsRGenetics for n up to 10^6.)
func TestHWEExactHugeCohorts(t *testing.T) {
	for _, c := range []hweCase{
		{25000000, 50000000, 25000000}, {0, 10000000, 0}, {9000000, 0, 1000000},
		{99999999, 1, 0}, {49000000, 2000000, 49000000}, {5000000, 1, 5000000},
	} {
		p := HWEExact(c.homRef, c.het, c.homAlt, false)
		q := HWEExact(c.homAlt, c.het, c.homRef, false)
		m := HWEExact(c.homRef, c.het, c.homAlt, true)
		if math.IsNaN(p) || p < 0 || p > 1 || p != q || m > p || m < 0 {
			t.Errorf("%v: p %v, swapped %v, mid-p %v", c, p, q, m)
		}
	}
	if p := HWEExact(0, 10000000, 0, false); p != 0 {
		t.Errorf("all heterozygous, n = 10^7: p = %v, want 0 (true value far below 1e-300)", p)
	}
}
