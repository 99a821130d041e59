//go:build amd64 && !purego

#include "textflag.h"

// func adamAsm(w, grad, m, v *float64, n int, c *[9]float64, decay int)
// c = b1, 1−b1, b2, 1−b2, bc1, lr, bc2, eps, wd. Every operation is the
// Go loop's (Adam in vmath.go), in its order and without fused
// multiply-adds, so both give the same bits.
TEXT ·adamAsm(SB), NOSPLIT, $0-56
	MOVQ w+0(FP), DI
	MOVQ grad+8(FP), SI
	MOVQ m+16(FP), DX
	MOVQ v+24(FP), BX
	MOVQ n+32(FP), CX
	MOVQ c+40(FP), R8
	MOVQ decay+48(FP), R9
	VBROADCASTSD 0(R8), Y8
	VBROADCASTSD 8(R8), Y9
	VBROADCASTSD 16(R8), Y10
	VBROADCASTSD 24(R8), Y11
	VBROADCASTSD 32(R8), Y12
	VBROADCASTSD 40(R8), Y13
	VBROADCASTSD 48(R8), Y14
	VBROADCASTSD 56(R8), Y15
aloop:
	CMPQ CX, $4
	JLT adone
	VMOVUPD (SI), Y0
	// Without decay, four entries whose gradient and moments are all +0
	// (outside a mask) keep their weight and moments exactly: skip them,
	// as the Go loop does.
	CMPQ R9, $0
	JNE compute
	VMOVUPD (DX), Y1
	VORPD (BX), Y1, Y1
	VORPD Y0, Y1, Y1
	VPTEST Y1, Y1
	JZ next
compute:
	// m = b1·m + (1−b1)·g
	VMULPD (DX), Y8, Y1
	VMULPD Y0, Y9, Y4
	VADDPD Y4, Y1, Y1
	VMOVUPD Y1, (DX)
	// v = b2·v + ((1−b2)·g)·g
	VMULPD (BX), Y10, Y2
	VMULPD Y0, Y11, Y4
	VMULPD Y0, Y4, Y4
	VADDPD Y4, Y2, Y2
	VMOVUPD Y2, (BX)
	// step = (lr·(m/bc1)) / (√(v/bc2) + eps)
	VDIVPD Y12, Y1, Y1
	VMULPD Y1, Y13, Y1
	VDIVPD Y14, Y2, Y2
	VSQRTPD Y2, Y2
	VADDPD Y15, Y2, Y2
	VDIVPD Y2, Y1, Y1
	VMOVUPD (DI), Y3
	CMPQ R9, $0
	JEQ nodecay
	VBROADCASTSD 64(R8), Y5
	VMULPD Y3, Y5, Y5
	VADDPD Y5, Y1, Y1
nodecay:
	VSUBPD Y1, Y3, Y3
	VMOVUPD Y3, (DI)
next:
	ADDQ $32, DI
	ADDQ $32, SI
	ADDQ $32, DX
	ADDQ $32, BX
	SUBQ $4, CX
	JMP aloop
adone:
	VZEROUPPER
	RET
