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
