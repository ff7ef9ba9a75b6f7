#include "textflag.h"

// func addRowsAVX2(dst, src, v *float64, rows, lp int)
// dst[r][k] = src[r][k] + v[k] for r < rows, k < lp (lp a multiple of 4).
TEXT ·addRowsAVX2(SB), NOSPLIT, $0-40
	MOVQ dst+0(FP), DI
	MOVQ src+8(FP), SI
	MOVQ v+16(FP), R8
	MOVQ rows+24(FP), CX
	MOVQ lp+32(FP), R11
	SHLQ $3, R11
	TESTQ CX, CX
	JLE adone

arow:
	XORQ DX, DX

acol:
	VMOVUPD (SI)(DX*1), Y0
	VADDPD (R8)(DX*1), Y0, Y0
	VMOVUPD Y0, (DI)(DX*1)
	ADDQ $32, DX
	CMPQ DX, R11
	JLT acol
	ADDQ R11, DI
	ADDQ R11, SI
	DECQ CX
	JNZ arow

adone:
	VZEROUPPER
	RET

// func addRows32AVX2(dst, src, v *float32, rows, lp int)
// dst[r][k] = src[r][k] + v[k] for r < rows, k < lp (lp a multiple of 4:
// 8 at a time, then a tail of 4).
TEXT ·addRows32AVX2(SB), NOSPLIT, $0-40
	MOVQ dst+0(FP), DI
	MOVQ src+8(FP), SI
	MOVQ v+16(FP), R8
	MOVQ rows+24(FP), CX
	MOVQ lp+32(FP), R11
	SHLQ $2, R11
	TESTQ CX, CX
	JLE bdone

brow:
	XORQ DX, DX

bcol:
	LEAQ 32(DX), BX
	CMPQ BX, R11
	JGT btail
	VMOVUPS (SI)(DX*1), Y0
	VADDPS (R8)(DX*1), Y0, Y0
	VMOVUPS Y0, (DI)(DX*1)
	ADDQ $32, DX
	JMP bcol

btail:
	CMPQ DX, R11
	JGE bnext
	VMOVUPS (SI)(DX*1), X0
	VADDPS (R8)(DX*1), X0, X0
	VMOVUPS X0, (DI)(DX*1)

bnext:
	ADDQ R11, DI
	ADDQ R11, SI
	DECQ CX
	JNZ brow

bdone:
	VZEROUPPER
	RET

// The masks of transpose32 (fast.go), broadcast by transposeRunsAVX2.
DATA tm33<>+0(SB)/8, $0x3333333333333333
GLOBL tm33<>(SB), RODATA|NOPTR, $8
DATA tmcc<>+0(SB)/8, $0xcccccccccccccccc
GLOBL tmcc<>(SB), RODATA|NOPTR, $8
DATA tm0f<>+0(SB)/8, $0x0f0f0f0f0f0f0f0f
GLOBL tm0f<>(SB), RODATA|NOPTR, $8
DATA tmf0<>+0(SB)/8, $0xf0f0f0f0f0f0f0f0
GLOBL tmf0<>(SB), RODATA|NOPTR, $8

// PAIRS interleaves the codes of two markers' words wa and wb into p
// (codes 0 and 2 of each byte) and q (codes 1 and 3); t is scratch.
#define PAIRS(wa, wb, p, q, t) \
	VPAND wa, Y15, p \
	VPAND wb, Y15, t \
	VPSLLQ $2, t, t \
	VPOR p, t, p \
	VPSRLQ $2, wa, q \
	VPAND q, Y15, q \
	VPAND wb, Y14, t \
	VPOR q, t, q

// LOWNIBBLES sets o = lo&m0f | (hi&m0f)<<4; t is scratch.
#define LOWNIBBLES(lo, hi, o, t) \
	VPAND lo, Y13, o \
	VPAND hi, Y13, t \
	VPSLLQ $4, t, t \
	VPOR o, t, o

// HIGHNIBBLES sets o = (lo>>4)&m0f | hi&mf0; t is scratch.
#define HIGHNIBBLES(lo, hi, o, t) \
	VPSRLQ $4, lo, o \
	VPAND o, Y13, o \
	VPAND hi, Y12, t \
	VPOR o, t, o

// func transposeRunsAVX2(out, r0, r1, r2, r3 *byte, n int)
// transpose32 on four runs of 32 samples at a time (32 bytes of each of
// the four rows), n such steps (n >= 1): the same shifts and masks on four
// 64-bit words per vector, then a 4 x 4 transpose of 64-bit words puts
// each run's four output words together (128 bytes out per step).
TEXT ·transposeRunsAVX2(SB), NOSPLIT, $0-48
	MOVQ out+0(FP), DI
	MOVQ r0+8(FP), R8
	MOVQ r1+16(FP), R9
	MOVQ r2+24(FP), R10
	MOVQ r3+32(FP), R11
	MOVQ n+40(FP), CX
	VPBROADCASTQ tm33<>(SB), Y15
	VPBROADCASTQ tmcc<>(SB), Y14
	VPBROADCASTQ tm0f<>(SB), Y13
	VPBROADCASTQ tmf0<>(SB), Y12

trloop:
	VMOVDQU (R8), Y0
	VMOVDQU (R9), Y1
	VMOVDQU (R10), Y2
	VMOVDQU (R11), Y3
	// p01 = w0&m33 | (w1&m33)<<2, q01 = (w0>>2)&m33 | w1&mcc; p23, q23
	// likewise from w2, w3.
	PAIRS(Y0, Y1, Y4, Y5, Y6)
	PAIRS(Y2, Y3, Y6, Y7, Y8)
	// o0 = p01&m0f | (p23&m0f)<<4, o1 the same of q01 and q23.
	LOWNIBBLES(Y4, Y6, Y8, Y9)
	LOWNIBBLES(Y5, Y7, Y9, Y10)
	// o2 = (p01>>4)&m0f | p23&mf0, o3 the same of q01 and q23.
	HIGHNIBBLES(Y4, Y6, Y10, Y11)
	HIGHNIBBLES(Y5, Y7, Y11, Y4)
	// Y8..Y11 hold o0..o3 of runs 0-3; regroup by run.
	VPUNPCKLQDQ Y9, Y8, Y0
	VPUNPCKHQDQ Y9, Y8, Y1
	VPUNPCKLQDQ Y11, Y10, Y2
	VPUNPCKHQDQ Y11, Y10, Y3
	VPERM2I128 $0x20, Y2, Y0, Y4
	VPERM2I128 $0x20, Y3, Y1, Y5
	VPERM2I128 $0x31, Y2, Y0, Y6
	VPERM2I128 $0x31, Y3, Y1, Y7
	VMOVDQU Y4, 0(DI)
	VMOVDQU Y5, 32(DI)
	VMOVDQU Y6, 64(DI)
	VMOVDQU Y7, 96(DI)
	ADDQ $32, R8
	ADDQ $32, R9
	ADDQ $32, R10
	ADDQ $32, R11
	ADDQ $128, DI
	DECQ CX
	JNZ trloop
	VZEROUPPER
	RET
