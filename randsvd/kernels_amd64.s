#include "textflag.h"

// func gatherAddAVX2(dst, tab *float64, raw *byte, offs *int32, n, grp, lp int)
// For q in [0, n): dst[q*lp : q*lp+lp] += tab[v*lp : v*lp+lp] with
// v = raw[offs[q]+grp]. lp is a multiple of 4.
TEXT ·gatherAddAVX2(SB), NOSPLIT, $0-56
	MOVQ dst+0(FP), DI
	MOVQ tab+8(FP), SI
	MOVQ raw+16(FP), R8
	MOVQ offs+24(FP), R9
	MOVQ n+32(FP), CX
	MOVQ grp+40(FP), R10
	MOVQ lp+48(FP), R11
	ADDQ R10, R8
	SHLQ $3, R11
	TESTQ CX, CX
	JLE gdone

gloop:
	MOVLQSX (R9), AX
	MOVBQZX (R8)(AX*1), AX
	IMULQ R11, AX
	LEAQ (SI)(AX*1), R13
	MOVQ DI, R12
	MOVQ R11, DX

ginner:
	VMOVUPD (R13), Y0
	VADDPD (R12), Y0, Y0
	VMOVUPD Y0, (R12)
	ADDQ $32, R12
	ADDQ $32, R13
	SUBQ $32, DX
	JNZ ginner
	ADDQ R11, DI
	ADDQ $4, R9
	DECQ CX
	JNZ gloop

gdone:
	VZEROUPPER
	RET

// func scatterAddAVX2(buck, src *float64, raw *byte, offs *int32, n, grp, lp int)
// For q in [0, n): buck[v*lp : v*lp+lp] += src[q*lp : q*lp+lp] with
// v = raw[offs[q]+grp]. lp is a multiple of 4.
TEXT ·scatterAddAVX2(SB), NOSPLIT, $0-56
	MOVQ buck+0(FP), DI
	MOVQ src+8(FP), SI
	MOVQ raw+16(FP), R8
	MOVQ offs+24(FP), R9
	MOVQ n+32(FP), CX
	MOVQ grp+40(FP), R10
	MOVQ lp+48(FP), R11
	ADDQ R10, R8
	SHLQ $3, R11
	TESTQ CX, CX
	JLE sdone

sloop:
	MOVLQSX (R9), AX
	MOVBQZX (R8)(AX*1), AX
	IMULQ R11, AX
	LEAQ (DI)(AX*1), R12
	MOVQ SI, R13
	MOVQ R11, DX

sinner:
	VMOVUPD (R13), Y0
	VADDPD (R12), Y0, Y0
	VMOVUPD Y0, (R12)
	ADDQ $32, R12
	ADDQ $32, R13
	SUBQ $32, DX
	JNZ sinner
	ADDQ R11, SI
	ADDQ $4, R9
	DECQ CX
	JNZ sloop

sdone:
	VZEROUPPER
	RET

// func gatherAdd4AVX2(dst, tab *float64, raw *byte, offs *int32, n, grp, lp int)
// Four consecutive groups at once: tab holds four 256-row tables, table t
// for group grp+t. For q in [0, n), with v_t = raw[offs[q]+grp+t]:
// dst[q] += (((tab_0[v_0] + tab_1[v_1]) + tab_2[v_2]) + tab_3[v_3]).
TEXT ·gatherAdd4AVX2(SB), NOSPLIT, $0-56
	MOVQ dst+0(FP), DI
	MOVQ tab+8(FP), SI
	MOVQ raw+16(FP), R8
	MOVQ offs+24(FP), R9
	MOVQ n+32(FP), CX
	MOVQ grp+40(FP), R10
	MOVQ lp+48(FP), R11
	ADDQ R10, R8
	SHLQ $3, R11
	TESTQ CX, CX
	JLE g4done

g4loop:
	MOVLQSX (R9), AX
	MOVL (R8)(AX*1), AX
	MOVQ AX, BX
	ANDQ $0xff, BX
	IMULQ R11, BX
	LEAQ (SI)(BX*1), R12
	MOVQ AX, BX
	SHRQ $8, BX
	ANDQ $0xff, BX
	ADDQ $256, BX
	IMULQ R11, BX
	LEAQ (SI)(BX*1), R13
	MOVQ AX, BX
	SHRQ $16, BX
	ANDQ $0xff, BX
	ADDQ $512, BX
	IMULQ R11, BX
	LEAQ (SI)(BX*1), R10
	SHRQ $24, AX
	ANDQ $0xff, AX
	ADDQ $768, AX
	IMULQ R11, AX
	ADDQ SI, AX
	XORQ DX, DX

g4inner:
	VMOVUPD (R12)(DX*1), Y0
	VADDPD (R13)(DX*1), Y0, Y0
	VADDPD (R10)(DX*1), Y0, Y0
	VADDPD (AX)(DX*1), Y0, Y0
	VADDPD (DI)(DX*1), Y0, Y0
	VMOVUPD Y0, (DI)(DX*1)
	ADDQ $32, DX
	CMPQ DX, R11
	JLT g4inner
	ADDQ R11, DI
	ADDQ $4, R9
	DECQ CX
	JNZ g4loop

g4done:
	VZEROUPPER
	RET

// func scatterAdd4AVX2(buck, src *float64, raw *byte, offs *int32, n, grp, lp int)
// Four consecutive groups at once: buck holds four 256-row bucket tables.
// For q in [0, n), with v_t = raw[offs[q]+grp+t]: buck_t[v_t] += src[q].
TEXT ·scatterAdd4AVX2(SB), NOSPLIT, $0-56
	MOVQ buck+0(FP), DI
	MOVQ src+8(FP), SI
	MOVQ raw+16(FP), R8
	MOVQ offs+24(FP), R9
	MOVQ n+32(FP), CX
	MOVQ grp+40(FP), R10
	MOVQ lp+48(FP), R11
	ADDQ R10, R8
	SHLQ $3, R11
	TESTQ CX, CX
	JLE s4done

s4loop:
	MOVLQSX (R9), AX
	MOVL (R8)(AX*1), AX
	MOVQ AX, BX
	ANDQ $0xff, BX
	IMULQ R11, BX
	LEAQ (DI)(BX*1), R12
	MOVQ AX, BX
	SHRQ $8, BX
	ANDQ $0xff, BX
	ADDQ $256, BX
	IMULQ R11, BX
	LEAQ (DI)(BX*1), R13
	MOVQ AX, BX
	SHRQ $16, BX
	ANDQ $0xff, BX
	ADDQ $512, BX
	IMULQ R11, BX
	LEAQ (DI)(BX*1), R10
	SHRQ $24, AX
	ANDQ $0xff, AX
	ADDQ $768, AX
	IMULQ R11, AX
	ADDQ DI, AX
	XORQ DX, DX

s4inner:
	VMOVUPD (SI)(DX*1), Y0
	VADDPD (R12)(DX*1), Y0, Y1
	VMOVUPD Y1, (R12)(DX*1)
	VADDPD (R13)(DX*1), Y0, Y2
	VMOVUPD Y2, (R13)(DX*1)
	VADDPD (R10)(DX*1), Y0, Y3
	VMOVUPD Y3, (R10)(DX*1)
	VADDPD (AX)(DX*1), Y0, Y4
	VMOVUPD Y4, (AX)(DX*1)
	ADDQ $32, DX
	CMPQ DX, R11
	JLT s4inner
	ADDQ R11, SI
	ADDQ $4, R9
	DECQ CX
	JNZ s4loop

s4done:
	VZEROUPPER
	RET

// func marginalAVX2(y, buck *float64, l1, l2 *uint8, lp int)
// y[k] += (E1 + O1) + 2*(E2 + O2) with E1 (O1) the sum over even (odd) t
// of buck[l1[t]][k], t in [0, 64), added in increasing t, and E2, O2 the
// same over l2.
TEXT ·marginalAVX2(SB), NOSPLIT, $0-40
	MOVQ y+0(FP), DI
	MOVQ buck+8(FP), SI
	MOVQ l1+16(FP), R8
	MOVQ l2+24(FP), R9
	MOVQ lp+32(FP), R11
	SHLQ $3, R11
	XORQ DX, DX

mcol:
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	VXORPD Y2, Y2, Y2
	VXORPD Y3, Y3, Y3
	LEAQ (SI)(DX*1), R10
	XORQ CX, CX

mrow:
	MOVBQZX (R8)(CX*1), AX
	IMULQ R11, AX
	VADDPD (R10)(AX*1), Y0, Y0
	MOVBQZX 1(R8)(CX*1), AX
	IMULQ R11, AX
	VADDPD (R10)(AX*1), Y1, Y1
	MOVBQZX (R9)(CX*1), AX
	IMULQ R11, AX
	VADDPD (R10)(AX*1), Y2, Y2
	MOVBQZX 1(R9)(CX*1), AX
	IMULQ R11, AX
	VADDPD (R10)(AX*1), Y3, Y3
	ADDQ $2, CX
	CMPQ CX, $64
	JLT mrow
	VADDPD Y1, Y0, Y0
	VADDPD Y3, Y2, Y2
	VADDPD Y2, Y2, Y2
	VADDPD Y2, Y0, Y0
	VADDPD (DI)(DX*1), Y0, Y0
	VMOVUPD Y0, (DI)(DX*1)
	ADDQ $32, DX
	CMPQ DX, R11
	JLT mcol
	VZEROUPPER
	RET

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
