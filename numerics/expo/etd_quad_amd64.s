#include "textflag.h"

// Four tridiagonal solves side by side, one node per lane of a YMM
// register: the recurrences of four nodes advance in one fused
// multiply–add chain per row (see packTriQuad for the layout of fac,
// 24 values a row: lr, li, rr, ri, qr, qi of the four lanes).

// func etdTriFwd4(n int, fac, v, w0, w1, w2, coef, e *float64)
TEXT ·etdTriFwd4(SB), NOSPLIT, $0-64
	MOVQ n+0(FP), CX
	MOVQ fac+8(FP), SI
	MOVQ v+16(FP), R8
	MOVQ w0+24(FP), R9
	MOVQ w1+32(FP), R10
	MOVQ w2+40(FP), R11
	MOVQ coef+48(FP), AX
	MOVQ e+56(FP), DI
	VMOVUPD 0(AX), Y2
	VMOVUPD 32(AX), Y3
	VMOVUPD 64(AX), Y4
	VMOVUPD 96(AX), Y5
	VMOVUPD 128(AX), Y6
	VMOVUPD 160(AX), Y7
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	TESTQ CX, CX
	JE fdone

floop:
	// Right side s = v + w0 p0 + w1 p1 + w2 p2 (Y8 real, Y12 imaginary).
	VBROADCASTSD (R8), Y8
	VBROADCASTSD (R9), Y9
	VBROADCASTSD (R10), Y10
	VBROADCASTSD (R11), Y11
	VFMADD231PD Y2, Y9, Y8
	VFMADD231PD Y4, Y10, Y8
	VFMADD231PD Y6, Y11, Y8
	VMULPD Y3, Y9, Y12
	VFMADD231PD Y5, Y10, Y12
	VFMADD231PD Y7, Y11, Y12
	// y = s − l·y.
	VMOVUPD 0(SI), Y13
	VMOVUPD 32(SI), Y14
	VFMADD231PD Y14, Y1, Y8
	VFNMADD231PD Y13, Y0, Y8
	VFNMADD231PD Y14, Y0, Y12
	VFNMADD231PD Y13, Y1, Y12
	VMOVAPD Y8, Y0
	VMOVAPD Y12, Y1
	// e = y/d.
	VMOVUPD 64(SI), Y13
	VMOVUPD 96(SI), Y14
	VMULPD Y13, Y0, Y8
	VFNMADD231PD Y14, Y1, Y8
	VMULPD Y14, Y0, Y12
	VFMADD231PD Y13, Y1, Y12
	VMOVUPD Y8, 0(DI)
	VMOVUPD Y12, 32(DI)
	ADDQ $192, SI
	ADDQ $64, DI
	ADDQ $8, R8
	ADDQ $8, R9
	ADDQ $8, R10
	ADDQ $8, R11
	DECQ CX
	JNZ floop

fdone:
	VZEROUPPER
	RET

// func etdTriBwd4(n int, fac, e, acc, cw, m *float64)
TEXT ·etdTriBwd4(SB), NOSPLIT, $0-48
	MOVQ n+0(FP), CX
	MOVQ fac+8(FP), SI
	MOVQ e+16(FP), DI
	MOVQ acc+24(FP), R8
	MOVQ cw+32(FP), AX
	MOVQ m+40(FP), DX
	VMOVUPD 0(AX), Y2
	VMOVUPD 32(AX), Y3
	VXORPD Y0, Y0, Y0
	VXORPD Y1, Y1, Y1
	VXORPD Y4, Y4, Y4
	// |·| mask: every bit but the sign.
	VPCMPEQQ Y5, Y5, Y5
	VPSRLQ $1, Y5, Y5
	TESTQ CX, CX
	JE bdone
	// Start at row n−1.
	LEAQ -1(CX), BX
	IMUL3Q $192, BX, R9
	ADDQ R9, SI
	MOVQ BX, R9
	SHLQ $6, R9
	ADDQ R9, DI
	LEAQ (R8)(BX*8), R8

bloop:
	// x = e + q·x.
	VMOVUPD 0(DI), Y8
	VMOVUPD 32(DI), Y9
	VMOVUPD 128(SI), Y13
	VMOVUPD 160(SI), Y14
	VFMADD231PD Y13, Y0, Y8
	VFNMADD231PD Y14, Y1, Y8
	VFMADD231PD Y13, Y1, Y9
	VFMADD231PD Y14, Y0, Y9
	VMOVAPD Y8, Y0
	VMOVAPD Y9, Y1
	// acc[i] += Σ_lanes (Re c·Re x − Im c·Im x).
	VMULPD Y2, Y0, Y10
	VFNMADD231PD Y3, Y1, Y10
	VEXTRACTF128 $1, Y10, X11
	VADDPD X11, X10, X10
	VUNPCKHPD X10, X10, X11
	VADDSD X11, X10, X10
	VADDSD (R8), X10, X10
	VMOVSD X10, (R8)
	// m = max(m, |Re x| + |Im x|).
	VANDPD Y5, Y0, Y12
	VANDPD Y5, Y1, Y13
	VADDPD Y13, Y12, Y12
	VMAXPD Y4, Y12, Y4
	SUBQ $192, SI
	SUBQ $64, DI
	SUBQ $8, R8
	DECQ CX
	JNZ bloop

bdone:
	VMOVUPD Y4, (DX)
	VZEROUPPER
	RET

// func etdTriFactor4(n int, q, shifts, above, diag, below, right, one, stats *float64)
//
// The four no-interchange factorisations s_k − T side by side (see
// factorTriQuad): shifts holds Re s of the lanes then Im s; above, below
// and right are t_{i−1,i}, t_{i+1,i} and t_{i,i+1} padded with zeros to
// length n; one points at four ones. stats receives, per lane, the least
// |Re d| + |Im d| − |t_{i+1,i}| (negative: an interchange was due), the
// least and the largest |Re d| + |Im d| over the rows.
TEXT ·etdTriFactor4(SB), NOSPLIT, $0-72
	MOVQ n+0(FP), CX
	MOVQ q+8(FP), DI
	MOVQ shifts+16(FP), AX
	MOVQ above+24(FP), R8
	MOVQ diag+32(FP), R9
	MOVQ below+40(FP), R10
	MOVQ right+48(FP), R11
	MOVQ one+56(FP), R12
	MOVQ stats+64(FP), DX
	VMOVUPD 0(AX), Y0
	VMOVUPD 32(AX), Y1
	VXORPD Y2, Y2, Y2
	VXORPD Y3, Y3, Y3
	VXORPD Y6, Y6, Y6
	VPCMPEQQ Y7, Y7, Y7
	VPSRLQ $1, Y7, Y7
	// +inf for the running minima: the mask with the mantissa cleared.
	VPCMPEQQ Y4, Y4, Y4
	VPSLLQ $53, Y4, Y4
	VPSRLQ $1, Y4, Y4
	VMOVAPD Y4, Y5
	TESTQ CX, CX
	JE tdone

tloop:
	VBROADCASTSD (R8), Y8
	VBROADCASTSD (R9), Y9
	VBROADCASTSD (R10), Y10
	VBROADCASTSD (R11), Y11
	// d = s − t_ii + l·t_{i−1,i}.
	VSUBPD Y9, Y0, Y12
	VFMADD231PD Y8, Y2, Y12
	VMOVAPD Y1, Y13
	VFMADD231PD Y8, Y3, Y13
	// Pivot test and size of d.
	VANDPD Y7, Y12, Y14
	VANDPD Y7, Y13, Y15
	VADDPD Y15, Y14, Y14
	VMINPD Y5, Y14, Y5
	VMAXPD Y6, Y14, Y6
	VANDPD Y7, Y10, Y15
	VSUBPD Y15, Y14, Y15
	VMINPD Y4, Y15, Y4
	// 1/d = conj(d)/|d|².
	VMULPD Y12, Y12, Y15
	VFMADD231PD Y13, Y13, Y15
	VMOVUPD (R12), Y9
	VDIVPD Y15, Y9, Y15
	VMULPD Y15, Y12, Y12
	VMULPD Y15, Y13, Y13
	VXORPD Y9, Y9, Y9
	VSUBPD Y13, Y9, Y13
	// Row i: l, 1/d, q = t_{i,i+1}/d.
	VMOVUPD Y2, 0(DI)
	VMOVUPD Y3, 32(DI)
	VMOVUPD Y12, 64(DI)
	VMOVUPD Y13, 96(DI)
	VMULPD Y11, Y12, Y14
	VMOVUPD Y14, 128(DI)
	VMULPD Y11, Y13, Y14
	VMOVUPD Y14, 160(DI)
	// l for row i+1 = −t_{i+1,i}/d.
	VMULPD Y10, Y12, Y2
	VSUBPD Y2, Y9, Y2
	VMULPD Y10, Y13, Y3
	VSUBPD Y3, Y9, Y3
	ADDQ $192, DI
	ADDQ $8, R8
	ADDQ $8, R9
	ADDQ $8, R10
	ADDQ $8, R11
	DECQ CX
	JNZ tloop

tdone:
	VMOVUPD Y4, 0(DX)
	VMOVUPD Y5, 32(DX)
	VMOVUPD Y6, 64(DX)
	VZEROUPPER
	RET
