//go:build amd64 && !purego

package qc

import "golang.org/x/sys/cpu"

// useVPOPCNT selects pairSums8, which counts eight words of every plane
// per step with AVX-512 VPOPCNTQ (Ice Lake, Sapphire Rapids, Zen 4
// and later).
var useVPOPCNT = cpu.X86.HasAVX512F && cpu.X86.HasAVX512VPOPCNTDQ

// pairSums8 adds to s the population counts of pairSums over the first
// 8*n words of the planes (n >= 1): s[0] a, s[1] b^c, s[2] d, s[3] cx&cy,
// s[4] x1&cy, s[5] x2&cy, s[6] y1&cx, s[7] y2&cx (see pairSumsFrom).
//
//go:noescape
func pairSums8(s *[8]int64, cx, x1, x2, cy, y1, y2 *uint64, n int)

// pairSums returns the population counts a pair of rows needs
// (pairSumsFrom in ldrow.go), eight words at a time where the CPU can.
func pairSums(x, y *ldRow) (s [8]int64) {
	k := 0
	if useVPOPCNT && len(x.c) >= 8 {
		k = len(x.c) &^ 7
		// The assembly reads k words of all six planes.
		if min(len(x.b1), len(x.b2), len(y.c), len(y.b1), len(y.b2)) < k {
			panic("qc: LD rows of different lengths")
		}
		pairSums8(&s, &x.c[0], &x.b1[0], &x.b2[0], &y.c[0], &y.b1[0], &y.b2[0], k/8)
	}
	pairSumsFrom(&s, x, y, k)
	return s
}
