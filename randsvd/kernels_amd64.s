//go:build amd64 && !purego

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

// func missingAVX512(row *byte, groups int, dst *int32, base int) int
//
// For each of groups 64-byte groups of a packed row, the samples with a
// missing call (code 3: both bits of a 2-bit code set), ascending:
// base + 32 w + bit/2 for each set bit of x & x>>1 & 0x55.. in the row's
// 8-byte word w (counted from the first group). A group whose words hold
// at most two missing calls each (nearly all, at the missing rates QC
// lets through: at 1% missing calls a word of 32 samples holds two in 4%
// of words, three in 0.4%) takes no branch per word: each word's lowest
// and highest set bits become positions (VPLZCNTQ), interleaved as the
// two 32-bit halves of its 64-bit lane, and VPCOMPRESSD stores those of
// the words that have one (the lowest) or two (the highest too), in
// order. A group with a word of three or more is scanned bit by bit.
// Branching on words of two, as before, mispredicted on a quarter of the
// groups at 1% missing calls. dst must have room for 256 entries per
// group (a group's stores may run past its count, within that room).
// Returns the number written. Needs AVX512F and AVX512CD.
TEXT ·missingAVX512(SB), NOSPLIT, $0-40
	MOVQ row+0(FP), SI
	MOVQ groups+8(FP), CX
	MOVQ dst+16(FP), DI
	MOVQ base+24(FP), DX
	XORQ AX, AX
	MOVQ $0x5555555555555555, R8
	VPBROADCASTQ R8, Z2          // the low bit of every code
	MOVQ $63, R9
	VPBROADCASTQ R9, Z8          // 63
	MOVQ $1, R9
	VPBROADCASTQ R9, Z9          // 1
	VPBROADCASTQ DX, Z10
	VPADDQ missingLanes<>(SB), Z10, Z10 // base + 32 j for word j of the group
	MOVQ $256, R9
	VPBROADCASTQ R9, Z11         // 256: the next group
	VPXORQ Z12, Z12, Z12         // 0
	TESTQ CX, CX
	JZ mdone
mgroup:
	VMOVDQU64 (SI), Z0
	VPSRLQ $1, Z0, Z1
	VPANDQ Z0, Z1, Z1
	VPANDQ Z2, Z1, Z1            // m: the missing-code bits of each word
	VPTESTMQ Z1, Z1, K1          // words with one or more
	KORTESTW K1, K1
	JZ mnext
	VPSUBQ Z9, Z1, Z3
	VPANDQ Z1, Z3, Z3            // m2 = m & (m-1): m without its lowest bit
	VPSUBQ Z9, Z3, Z5
	VPTESTMQ Z3, Z5, K3          // words with three or more
	KORTESTW K3, K3
	JNZ mslow
	VPSUBQ Z1, Z12, Z4
	VPANDQ Z1, Z4, Z4            // the lowest set bit
	VPLZCNTQ Z4, Z4
	VPSUBQ Z4, Z8, Z4            // its index
	VPSRLQ $1, Z4, Z4
	VPADDQ Z10, Z4, Z4           // its sample
	VPLZCNTQ Z1, Z6
	VPSUBQ Z6, Z8, Z6            // the highest set bit's index
	VPSRLQ $1, Z6, Z6
	VPADDQ Z10, Z6, Z6           // its sample
	VPSLLQ $32, Z6, Z6
	VPORQ Z6, Z4, Z4             // 32-bit lanes: lowest, highest of word 0, of word 1, ...
	VPMINUQ Z9, Z1, Z13          // 1 for a word with one or more
	VPMINUQ Z9, Z3, Z14          // 1 for a word with two
	VPSLLQ $32, Z14, Z14
	VPORQ Z14, Z13, Z13
	VPTESTMD Z13, Z13, K4        // the lanes to keep
	VPCOMPRESSD Z4, K4, Z7       // in a register: the memory form is slow on some CPUs
	VMOVDQU32 Z7, (DI)(AX*4)     // sixteen entries; those past the count are overwritten later
	KMOVW K4, R9
	POPCNTL R9, R9
	ADDQ R9, AX
	JMP mnext
mslow:
	KMOVW K1, R9
	MOVQ DX, BX
mword:
	BSFQ R9, R10                 // word j of the group
	MOVQ (SI)(R10*8), R11
	MOVQ R11, R12
	SHRQ $1, R12
	ANDQ R12, R11
	ANDQ R8, R11                 // its missing-code bits
	SHLQ $5, R10
	ADDQ BX, R10                 // base + 32 (8 g + j)
mbit:
	BSFQ R11, R12
	SHRQ $1, R12
	ADDQ R10, R12
	MOVL R12, (DI)(AX*4)
	INCQ AX
	LEAQ -1(R11), R13
	ANDQ R13, R11
	JNZ mbit
	LEAQ -1(R9), R13
	ANDQ R13, R9
	JNZ mword
mnext:
	ADDQ $64, SI
	ADDQ $256, DX
	VPADDQ Z11, Z10, Z10
	DECQ CX
	JNZ mgroup
mdone:
	VZEROUPPER
	MOVQ AX, ret+32(FP)
	RET

DATA missingLanes<>+0(SB)/8, $0
DATA missingLanes<>+8(SB)/8, $32
DATA missingLanes<>+16(SB)/8, $64
DATA missingLanes<>+24(SB)/8, $96
DATA missingLanes<>+32(SB)/8, $128
DATA missingLanes<>+40(SB)/8, $160
DATA missingLanes<>+48(SB)/8, $192
DATA missingLanes<>+56(SB)/8, $224
GLOBL missingLanes<>(SB), RODATA|NOPTR, $64
