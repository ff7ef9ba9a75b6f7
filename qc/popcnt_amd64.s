//go:build amd64 && !purego

#include "textflag.h"

// COUNT adds to the lanes of acc the population counts of a&b (clobbers
// Z6).
#define COUNT(a, b, acc) \
	VPANDQ a, b, Z6 \
	VPOPCNTQ Z6, Z6 \
	VPADDQ Z6, acc, acc

// HSUM adds the sum of the eight int64 lanes of z to off(DI) (clobbers
// Z0, Z1 and AX).
#define HSUM(z, off) \
	VMOVDQU64 z, Z0 \
	VEXTRACTI64X4 $1, Z0, Y1 \
	VPADDQ Y1, Y0, Y0 \
	VEXTRACTI128 $1, Y0, X1 \
	VPADDQ X1, X0, X0 \
	VPSHUFD $0x4e, X0, X1 \
	VPADDQ X1, X0, X0 \
	VMOVQ X0, AX \
	ADDQ AX, off(DI)

// func pairSums8(s *[8]int64, cx, x1, x2, cy, y1, y2 *uint64, n int)
// Eight words of each plane per step: with a = x1&y1, b = x1&y2,
// c = x2&y1, d = x2&y2, the per-lane counts of a, b^c, d, cx&cy, x1&cy,
// x2&cy, y1&cx and y2&cx accumulate in Z8..Z15 and are summed into s.
TEXT ·pairSums8(SB), NOSPLIT, $0-64
	MOVQ s+0(FP), DI
	MOVQ cx+8(FP), R8
	MOVQ x1+16(FP), R9
	MOVQ x2+24(FP), R10
	MOVQ cy+32(FP), R11
	MOVQ y1+40(FP), R12
	MOVQ y2+48(FP), R13
	MOVQ n+56(FP), CX
	VPXORQ Z8, Z8, Z8
	VPXORQ Z9, Z9, Z9
	VPXORQ Z10, Z10, Z10
	VPXORQ Z11, Z11, Z11
	VPXORQ Z12, Z12, Z12
	VPXORQ Z13, Z13, Z13
	VPXORQ Z14, Z14, Z14
	VPXORQ Z15, Z15, Z15
loop:
	VMOVDQU64 (R8), Z0  // cx
	VMOVDQU64 (R9), Z1  // x1
	VMOVDQU64 (R10), Z2 // x2
	VMOVDQU64 (R11), Z3 // cy
	VMOVDQU64 (R12), Z4 // y1
	VMOVDQU64 (R13), Z5 // y2
	COUNT(Z1, Z4, Z8)   // a = x1&y1
	VPANDQ Z1, Z5, Z6   // b = x1&y2
	VPANDQ Z2, Z4, Z7   // c = x2&y1
	VPXORQ Z6, Z7, Z6
	VPOPCNTQ Z6, Z6
	VPADDQ Z6, Z9, Z9   // b^c
	COUNT(Z2, Z5, Z10)  // d = x2&y2
	COUNT(Z0, Z3, Z11)  // cx&cy
	COUNT(Z1, Z3, Z12)  // x1&cy
	COUNT(Z2, Z3, Z13)  // x2&cy
	COUNT(Z4, Z0, Z14)  // y1&cx
	COUNT(Z5, Z0, Z15)  // y2&cx
	ADDQ $64, R8
	ADDQ $64, R9
	ADDQ $64, R10
	ADDQ $64, R11
	ADDQ $64, R12
	ADDQ $64, R13
	DECQ CX
	JNZ loop
	// Horizontal sums of the eight accumulators into s[0..7].
	HSUM(Z8, 0)
	HSUM(Z9, 8)
	HSUM(Z10, 16)
	HSUM(Z11, 24)
	HSUM(Z12, 32)
	HSUM(Z13, 40)
	HSUM(Z14, 48)
	HSUM(Z15, 56)
	VZEROUPPER
	RET
