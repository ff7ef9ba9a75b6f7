#include "textflag.h"

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

// func marginal32AVX2(y *float64, buck *float32, l1, l2 *uint8, lp int)
// The float32 twin of marginalAVX2: r = (E1 + O1) + 2*(E2 + O2) summed in
// float32 over the float32 bucket rows (stride lp), then y[k] += float64(r[k]).
// lp is a multiple of 4: columns go 8 at a time, then a tail of 4.
TEXT ·marginal32AVX2(SB), NOSPLIT, $0-40
	MOVQ y+0(FP), DI
	MOVQ buck+8(FP), SI
	MOVQ l1+16(FP), R8
	MOVQ l2+24(FP), R9
	MOVQ lp+32(FP), R11
	SHLQ $2, R11
	XORQ DX, DX

ncol:
	LEAQ 32(DX), BX
	CMPQ BX, R11
	JGT ntail
	VXORPS Y0, Y0, Y0
	VXORPS Y1, Y1, Y1
	VXORPS Y2, Y2, Y2
	VXORPS Y3, Y3, Y3
	LEAQ (SI)(DX*1), R10
	XORQ CX, CX

nrow:
	MOVBQZX (R8)(CX*1), AX
	IMULQ R11, AX
	VADDPS (R10)(AX*1), Y0, Y0
	MOVBQZX 1(R8)(CX*1), AX
	IMULQ R11, AX
	VADDPS (R10)(AX*1), Y1, Y1
	MOVBQZX (R9)(CX*1), AX
	IMULQ R11, AX
	VADDPS (R10)(AX*1), Y2, Y2
	MOVBQZX 1(R9)(CX*1), AX
	IMULQ R11, AX
	VADDPS (R10)(AX*1), Y3, Y3
	ADDQ $2, CX
	CMPQ CX, $64
	JLT nrow
	VADDPS Y1, Y0, Y0
	VADDPS Y3, Y2, Y2
	VADDPS Y2, Y2, Y2
	VADDPS Y2, Y0, Y0
	LEAQ (DI)(DX*2), BX
	VCVTPS2PD X0, Y4
	VADDPD (BX), Y4, Y4
	VMOVUPD Y4, (BX)
	VEXTRACTF128 $1, Y0, X5
	VCVTPS2PD X5, Y5
	VADDPD 32(BX), Y5, Y5
	VMOVUPD Y5, 32(BX)
	ADDQ $32, DX
	JMP ncol

ntail:
	CMPQ DX, R11
	JGE ndone
	VXORPS X0, X0, X0
	VXORPS X1, X1, X1
	VXORPS X2, X2, X2
	VXORPS X3, X3, X3
	LEAQ (SI)(DX*1), R10
	XORQ CX, CX

ntrow:
	MOVBQZX (R8)(CX*1), AX
	IMULQ R11, AX
	VADDPS (R10)(AX*1), X0, X0
	MOVBQZX 1(R8)(CX*1), AX
	IMULQ R11, AX
	VADDPS (R10)(AX*1), X1, X1
	MOVBQZX (R9)(CX*1), AX
	IMULQ R11, AX
	VADDPS (R10)(AX*1), X2, X2
	MOVBQZX 1(R9)(CX*1), AX
	IMULQ R11, AX
	VADDPS (R10)(AX*1), X3, X3
	ADDQ $2, CX
	CMPQ CX, $64
	JLT ntrow
	VADDPS X1, X0, X0
	VADDPS X3, X2, X2
	VADDPS X2, X2, X2
	VADDPS X2, X0, X0
	LEAQ (DI)(DX*2), BX
	VCVTPS2PD X0, Y4
	VADDPD (BX), Y4, Y4
	VMOVUPD Y4, (BX)

ndone:
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
