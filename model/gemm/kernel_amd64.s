//go:build amd64 && !purego

#include "textflag.h"

// Register use in both kernels:
//	SI  A(i, p) for i = 0 (advances by csa bytes per p)
//	R9  rsa in bytes, R10 = 3·rsa, R11 = 5·rsa; R12 csa in bytes
//	DI  packed B (64 bytes per p: 16 float32 or 8 float64)
//	DX  C, R8 ldc in bytes
//	CX  k, BX loop counter
//	Y4..Y15 the 6×2 accumulators (row i in Y(4+2i), Y(5+2i))
//	Y0, Y1 the row of B; Y2, Y3 broadcasts of A

#define STEPS \
	VMOVUPS (DI), Y0 \
	VMOVUPS 32(DI), Y1 \
	VBROADCASTSS (SI), Y2 \
	VFMADD231PS Y0, Y2, Y4 \
	VFMADD231PS Y1, Y2, Y5 \
	VBROADCASTSS (SI)(R9*1), Y3 \
	VFMADD231PS Y0, Y3, Y6 \
	VFMADD231PS Y1, Y3, Y7 \
	VBROADCASTSS (SI)(R9*2), Y2 \
	VFMADD231PS Y0, Y2, Y8 \
	VFMADD231PS Y1, Y2, Y9 \
	VBROADCASTSS (SI)(R10*1), Y3 \
	VFMADD231PS Y0, Y3, Y10 \
	VFMADD231PS Y1, Y3, Y11 \
	VBROADCASTSS (SI)(R9*4), Y2 \
	VFMADD231PS Y0, Y2, Y12 \
	VFMADD231PS Y1, Y2, Y13 \
	VBROADCASTSS (SI)(R11*1), Y3 \
	VFMADD231PS Y0, Y3, Y14 \
	VFMADD231PS Y1, Y3, Y15 \
	ADDQ R12, SI \
	ADDQ $64, DI

#define STEPD \
	VMOVUPD (DI), Y0 \
	VMOVUPD 32(DI), Y1 \
	VBROADCASTSD (SI), Y2 \
	VFMADD231PD Y0, Y2, Y4 \
	VFMADD231PD Y1, Y2, Y5 \
	VBROADCASTSD (SI)(R9*1), Y3 \
	VFMADD231PD Y0, Y3, Y6 \
	VFMADD231PD Y1, Y3, Y7 \
	VBROADCASTSD (SI)(R9*2), Y2 \
	VFMADD231PD Y0, Y2, Y8 \
	VFMADD231PD Y1, Y2, Y9 \
	VBROADCASTSD (SI)(R10*1), Y3 \
	VFMADD231PD Y0, Y3, Y10 \
	VFMADD231PD Y1, Y3, Y11 \
	VBROADCASTSD (SI)(R9*4), Y2 \
	VFMADD231PD Y0, Y2, Y12 \
	VFMADD231PD Y1, Y2, Y13 \
	VBROADCASTSD (SI)(R11*1), Y3 \
	VFMADD231PD Y0, Y3, Y14 \
	VFMADD231PD Y1, Y3, Y15 \
	ADDQ R12, SI \
	ADDQ $64, DI

// SETUP loads the arguments common to both kernels; SZ is the element
// size's shift (2 for float32, 3 for float64).
#define SETUP(SZ) \
	MOVQ k+0(FP), CX \
	MOVQ a+8(FP), SI \
	MOVQ rsa+16(FP), R9 \
	SHLQ $SZ, R9 \
	LEAQ (R9)(R9*2), R10 \
	LEAQ (R9)(R9*4), R11 \
	MOVQ csa+24(FP), R12 \
	SHLQ $SZ, R12 \
	MOVQ b+32(FP), DI \
	MOVQ c+40(FP), DX \
	MOVQ ldc+48(FP), R8 \
	SHLQ $SZ, R8 \
	VXORPS Y4, Y4, Y4 \
	VXORPS Y5, Y5, Y5 \
	VXORPS Y6, Y6, Y6 \
	VXORPS Y7, Y7, Y7 \
	VXORPS Y8, Y8, Y8 \
	VXORPS Y9, Y9, Y9 \
	VXORPS Y10, Y10, Y10 \
	VXORPS Y11, Y11, Y11 \
	VXORPS Y12, Y12, Y12 \
	VXORPS Y13, Y13, Y13 \
	VXORPS Y14, Y14, Y14 \
	VXORPS Y15, Y15, Y15 \
	MOVQ CX, BX \
	SHRQ $2, BX

// OP applies one AVX instruction to all 12 accumulators with the operand X.
#define OP(INS, X) \
	INS X, Y4, Y4 \
	INS X, Y5, Y5 \
	INS X, Y6, Y6 \
	INS X, Y7, Y7 \
	INS X, Y8, Y8 \
	INS X, Y9, Y9 \
	INS X, Y10, Y10 \
	INS X, Y11, Y11 \
	INS X, Y12, Y12 \
	INS X, Y13, Y13 \
	INS X, Y14, Y14 \
	INS X, Y15, Y15

// ROWFMA adds beta·C (beta in Y1) to one row's two accumulators; AX
// points to the row and advances to the next.
#define ROWFMA(INS, R0, R1) \
	INS (AX), Y1, R0 \
	INS 32(AX), Y1, R1 \
	ADDQ R8, AX

#define ROWSTORE(MOV, R0, R1) \
	MOV R0, (DX) \
	MOV R1, 32(DX) \
	ADDQ R8, DX

// func kernS6x16(k int, a *float32, rsa, csa int, b, c *float32, ldc int, alpha, beta float32, load int)
TEXT ·kernS6x16(SB), NOSPLIT, $0-72
	SETUP(2)
	JZ   s_tail

s_loop4:
	STEPS
	STEPS
	STEPS
	STEPS
	DECQ BX
	JNZ  s_loop4

s_tail:
	ANDQ $3, CX
	JZ   s_done

s_loop1:
	STEPS
	DECQ CX
	JNZ  s_loop1

s_done:
	VBROADCASTSS alpha+56(FP), Y0
	OP(VMULPS, Y0)
	MOVQ load+64(FP), AX
	TESTQ AX, AX
	JZ   s_store
	VBROADCASTSS beta+60(FP), Y1
	MOVQ DX, AX
	ROWFMA(VFMADD231PS, Y4, Y5)
	ROWFMA(VFMADD231PS, Y6, Y7)
	ROWFMA(VFMADD231PS, Y8, Y9)
	ROWFMA(VFMADD231PS, Y10, Y11)
	ROWFMA(VFMADD231PS, Y12, Y13)
	ROWFMA(VFMADD231PS, Y14, Y15)

s_store:
	ROWSTORE(VMOVUPS, Y4, Y5)
	ROWSTORE(VMOVUPS, Y6, Y7)
	ROWSTORE(VMOVUPS, Y8, Y9)
	ROWSTORE(VMOVUPS, Y10, Y11)
	ROWSTORE(VMOVUPS, Y12, Y13)
	ROWSTORE(VMOVUPS, Y14, Y15)
	VZEROUPPER
	RET

// func kernD6x8(k int, a *float64, rsa, csa int, b, c *float64, ldc int, alpha, beta float64, load int)
TEXT ·kernD6x8(SB), NOSPLIT, $0-80
	SETUP(3)
	JZ   d_tail

d_loop4:
	STEPD
	STEPD
	STEPD
	STEPD
	DECQ BX
	JNZ  d_loop4

d_tail:
	ANDQ $3, CX
	JZ   d_done

d_loop1:
	STEPD
	DECQ CX
	JNZ  d_loop1

d_done:
	VBROADCASTSD alpha+56(FP), Y0
	OP(VMULPD, Y0)
	MOVQ load+72(FP), AX
	TESTQ AX, AX
	JZ   d_store
	VBROADCASTSD beta+64(FP), Y1
	MOVQ DX, AX
	ROWFMA(VFMADD231PD, Y4, Y5)
	ROWFMA(VFMADD231PD, Y6, Y7)
	ROWFMA(VFMADD231PD, Y8, Y9)
	ROWFMA(VFMADD231PD, Y10, Y11)
	ROWFMA(VFMADD231PD, Y12, Y13)
	ROWFMA(VFMADD231PD, Y14, Y15)

d_store:
	ROWSTORE(VMOVUPD, Y4, Y5)
	ROWSTORE(VMOVUPD, Y6, Y7)
	ROWSTORE(VMOVUPD, Y8, Y9)
	ROWSTORE(VMOVUPD, Y10, Y11)
	ROWSTORE(VMOVUPD, Y12, Y13)
	ROWSTORE(VMOVUPD, Y14, Y15)
	VZEROUPPER
	RET

// The AVX-512 kernels: the same 6-row tile and register plan on ZMM
// registers, 6×32 for float32 and 6×16 for float64 (128 bytes of packed B
// per p).

#define STEP512S \
	VMOVUPS (DI), Z0 \
	VMOVUPS 64(DI), Z1 \
	VBROADCASTSS (SI), Z2 \
	VFMADD231PS Z0, Z2, Z4 \
	VFMADD231PS Z1, Z2, Z5 \
	VBROADCASTSS (SI)(R9*1), Z3 \
	VFMADD231PS Z0, Z3, Z6 \
	VFMADD231PS Z1, Z3, Z7 \
	VBROADCASTSS (SI)(R9*2), Z2 \
	VFMADD231PS Z0, Z2, Z8 \
	VFMADD231PS Z1, Z2, Z9 \
	VBROADCASTSS (SI)(R10*1), Z3 \
	VFMADD231PS Z0, Z3, Z10 \
	VFMADD231PS Z1, Z3, Z11 \
	VBROADCASTSS (SI)(R9*4), Z2 \
	VFMADD231PS Z0, Z2, Z12 \
	VFMADD231PS Z1, Z2, Z13 \
	VBROADCASTSS (SI)(R11*1), Z3 \
	VFMADD231PS Z0, Z3, Z14 \
	VFMADD231PS Z1, Z3, Z15 \
	ADDQ R12, SI \
	ADDQ $128, DI

#define STEP512D \
	VMOVUPD (DI), Z0 \
	VMOVUPD 64(DI), Z1 \
	VBROADCASTSD (SI), Z2 \
	VFMADD231PD Z0, Z2, Z4 \
	VFMADD231PD Z1, Z2, Z5 \
	VBROADCASTSD (SI)(R9*1), Z3 \
	VFMADD231PD Z0, Z3, Z6 \
	VFMADD231PD Z1, Z3, Z7 \
	VBROADCASTSD (SI)(R9*2), Z2 \
	VFMADD231PD Z0, Z2, Z8 \
	VFMADD231PD Z1, Z2, Z9 \
	VBROADCASTSD (SI)(R10*1), Z3 \
	VFMADD231PD Z0, Z3, Z10 \
	VFMADD231PD Z1, Z3, Z11 \
	VBROADCASTSD (SI)(R9*4), Z2 \
	VFMADD231PD Z0, Z2, Z12 \
	VFMADD231PD Z1, Z2, Z13 \
	VBROADCASTSD (SI)(R11*1), Z3 \
	VFMADD231PD Z0, Z3, Z14 \
	VFMADD231PD Z1, Z3, Z15 \
	ADDQ R12, SI \
	ADDQ $128, DI

#define ZERO512 \
	VPXORQ Z4, Z4, Z4 \
	VPXORQ Z5, Z5, Z5 \
	VPXORQ Z6, Z6, Z6 \
	VPXORQ Z7, Z7, Z7 \
	VPXORQ Z8, Z8, Z8 \
	VPXORQ Z9, Z9, Z9 \
	VPXORQ Z10, Z10, Z10 \
	VPXORQ Z11, Z11, Z11 \
	VPXORQ Z12, Z12, Z12 \
	VPXORQ Z13, Z13, Z13 \
	VPXORQ Z14, Z14, Z14 \
	VPXORQ Z15, Z15, Z15

#define OP512(INS, X) \
	INS X, Z4, Z4 \
	INS X, Z5, Z5 \
	INS X, Z6, Z6 \
	INS X, Z7, Z7 \
	INS X, Z8, Z8 \
	INS X, Z9, Z9 \
	INS X, Z10, Z10 \
	INS X, Z11, Z11 \
	INS X, Z12, Z12 \
	INS X, Z13, Z13 \
	INS X, Z14, Z14 \
	INS X, Z15, Z15

#define ROWFMA512(INS, R0, R1) \
	INS (AX), Z1, R0 \
	INS 64(AX), Z1, R1 \
	ADDQ R8, AX

#define ROWSTORE512(MOV, R0, R1) \
	MOV R0, (DX) \
	MOV R1, 64(DX) \
	ADDQ R8, DX

// func kernS6x32(k int, a *float32, rsa, csa int, b, c *float32, ldc int, alpha, beta float32, load int)
TEXT ·kernS6x32(SB), NOSPLIT, $0-72
	SETUP(2)
	ZERO512
	TESTQ BX, BX
	JZ   z_tail

z_loop4:
	STEP512S
	STEP512S
	STEP512S
	STEP512S
	DECQ BX
	JNZ  z_loop4

z_tail:
	ANDQ $3, CX
	JZ   z_done

z_loop1:
	STEP512S
	DECQ CX
	JNZ  z_loop1

z_done:
	VBROADCASTSS alpha+56(FP), Z0
	OP512(VMULPS, Z0)
	MOVQ load+64(FP), AX
	TESTQ AX, AX
	JZ   z_store
	VBROADCASTSS beta+60(FP), Z1
	MOVQ DX, AX
	ROWFMA512(VFMADD231PS, Z4, Z5)
	ROWFMA512(VFMADD231PS, Z6, Z7)
	ROWFMA512(VFMADD231PS, Z8, Z9)
	ROWFMA512(VFMADD231PS, Z10, Z11)
	ROWFMA512(VFMADD231PS, Z12, Z13)
	ROWFMA512(VFMADD231PS, Z14, Z15)

z_store:
	ROWSTORE512(VMOVUPS, Z4, Z5)
	ROWSTORE512(VMOVUPS, Z6, Z7)
	ROWSTORE512(VMOVUPS, Z8, Z9)
	ROWSTORE512(VMOVUPS, Z10, Z11)
	ROWSTORE512(VMOVUPS, Z12, Z13)
	ROWSTORE512(VMOVUPS, Z14, Z15)
	VZEROUPPER
	RET

// func kernD6x16(k int, a *float64, rsa, csa int, b, c *float64, ldc int, alpha, beta float64, load int)
TEXT ·kernD6x16(SB), NOSPLIT, $0-80
	SETUP(3)
	ZERO512
	TESTQ BX, BX
	JZ   w_tail

w_loop4:
	STEP512D
	STEP512D
	STEP512D
	STEP512D
	DECQ BX
	JNZ  w_loop4

w_tail:
	ANDQ $3, CX
	JZ   w_done

w_loop1:
	STEP512D
	DECQ CX
	JNZ  w_loop1

w_done:
	VBROADCASTSD alpha+56(FP), Z0
	OP512(VMULPD, Z0)
	MOVQ load+72(FP), AX
	TESTQ AX, AX
	JZ   w_store
	VBROADCASTSD beta+64(FP), Z1
	MOVQ DX, AX
	ROWFMA512(VFMADD231PD, Z4, Z5)
	ROWFMA512(VFMADD231PD, Z6, Z7)
	ROWFMA512(VFMADD231PD, Z8, Z9)
	ROWFMA512(VFMADD231PD, Z10, Z11)
	ROWFMA512(VFMADD231PD, Z12, Z13)
	ROWFMA512(VFMADD231PD, Z14, Z15)

w_store:
	ROWSTORE512(VMOVUPD, Z4, Z5)
	ROWSTORE512(VMOVUPD, Z6, Z7)
	ROWSTORE512(VMOVUPD, Z8, Z9)
	ROWSTORE512(VMOVUPD, Z10, Z11)
	ROWSTORE512(VMOVUPD, Z12, Z13)
	ROWSTORE512(VMOVUPD, Z14, Z15)
	VZEROUPPER
	RET

// func copyPanels(dst, src unsafe.Pointer, k, stride, panels, width int)
// packs full panels of an untransposed B: for each of k rows (src rows
// stride bytes apart) it copies panels consecutive pieces of width bytes
// (64 or 128) of the row to dst + q·k·width + p·width, panel q, row p.
// Reading each row left to right keeps the reads sequential.
TEXT ·copyPanels(SB), NOSPLIT, $0-48
	MOVQ dst+0(FP), DI
	MOVQ src+8(FP), SI
	MOVQ k+16(FP), CX
	MOVQ stride+24(FP), R8
	MOVQ panels+32(FP), R9
	MOVQ width+40(FP), AX
	MOVQ CX, R10
	IMULQ AX, R10 // bytes per panel in dst
	TESTQ CX, CX
	JZ   cp_done
	TESTQ R9, R9
	JZ   cp_done
	CMPQ AX, $64
	JNE  cp_wide_row

cp_row64:
	MOVQ SI, BX
	MOVQ DI, DX
	MOVQ R9, R11

cp_piece64:
	VMOVUPS (BX), Y0
	VMOVUPS 32(BX), Y1
	VMOVUPS Y0, (DX)
	VMOVUPS Y1, 32(DX)
	ADDQ $64, BX
	ADDQ R10, DX
	DECQ R11
	JNZ  cp_piece64
	ADDQ R8, SI
	ADDQ $64, DI
	DECQ CX
	JNZ  cp_row64
	VZEROUPPER
	RET

cp_wide_row:
	MOVQ SI, BX
	MOVQ DI, DX
	MOVQ R9, R11

cp_piece128:
	VMOVUPS (BX), Y0
	VMOVUPS 32(BX), Y1
	VMOVUPS 64(BX), Y2
	VMOVUPS 96(BX), Y3
	VMOVUPS Y0, (DX)
	VMOVUPS Y1, 32(DX)
	VMOVUPS Y2, 64(DX)
	VMOVUPS Y3, 96(DX)
	ADDQ $128, BX
	ADDQ R10, DX
	DECQ R11
	JNZ  cp_piece128
	ADDQ R8, SI
	ADDQ $128, DI
	DECQ CX
	JNZ  cp_wide_row

cp_done:
	VZEROUPPER
	RET

// func transD(dst, src unsafe.Pointer, k4, stride, nr int)
// packs one full panel of a transposed float64 B: nr rows of B (src rows
// stride bytes apart, nr a multiple of 4) hold the panel's columns; for
// p < k4 (a multiple of 4) it writes dst[p·nr + j] = row j [p], by 4×4
// transposes in YMM registers.
TEXT ·transD(SB), NOSPLIT, $0-40
	MOVQ dst+0(FP), DI
	MOVQ src+8(FP), SI
	MOVQ k4+16(FP), CX
	MOVQ stride+24(FP), R8
	MOVQ nr+32(FP), R10
	SHLQ $3, R10            // bytes per packed row
	LEAQ (R8)(R8*2), R9     // 3 rows of B
	MOVQ R10, R11
	SHLQ $2, R11            // 4 packed rows
	LEAQ (R10)(R10*2), R12  // 3 packed rows
	SHRQ $2, CX
	JZ   td_done
	MOVQ R10, R13
	SHRQ $5, R13            // groups of 4 columns

td_group:
	MOVQ SI, AX             // B rows of this group, p = 0
	MOVQ DI, DX             // packed rows, p = 0
	MOVQ CX, BX

td_p:
	VMOVUPD (AX), Y0
	VMOVUPD (AX)(R8*1), Y1
	VMOVUPD (AX)(R8*2), Y2
	VMOVUPD (AX)(R9*1), Y3
	VUNPCKLPD Y1, Y0, Y4    // r0p0 r1p0 r0p2 r1p2
	VUNPCKHPD Y1, Y0, Y5    // r0p1 r1p1 r0p3 r1p3
	VUNPCKLPD Y3, Y2, Y6    // r2p0 r3p0 r2p2 r3p2
	VUNPCKHPD Y3, Y2, Y7    // r2p1 r3p1 r2p3 r3p3
	VPERM2F128 $0x20, Y6, Y4, Y0
	VPERM2F128 $0x20, Y7, Y5, Y1
	VPERM2F128 $0x31, Y6, Y4, Y2
	VPERM2F128 $0x31, Y7, Y5, Y3
	VMOVUPD Y0, (DX)
	VMOVUPD Y1, (DX)(R10*1)
	VMOVUPD Y2, (DX)(R10*2)
	VMOVUPD Y3, (DX)(R12*1)
	ADDQ $32, AX
	ADDQ R11, DX
	DECQ BX
	JNZ  td_p
	LEAQ (SI)(R8*4), SI     // next 4 rows of B
	ADDQ $32, DI            // next 4 columns of the panel
	DECQ R13
	JNZ  td_group

td_done:
	VZEROUPPER
	RET

// func transS(dst, src unsafe.Pointer, k4, stride, nr int)
// is transD for float32, by 4×4 transposes in XMM registers.
TEXT ·transS(SB), NOSPLIT, $0-40
	MOVQ dst+0(FP), DI
	MOVQ src+8(FP), SI
	MOVQ k4+16(FP), CX
	MOVQ stride+24(FP), R8
	MOVQ nr+32(FP), R10
	SHLQ $2, R10
	LEAQ (R8)(R8*2), R9
	MOVQ R10, R11
	SHLQ $2, R11
	LEAQ (R10)(R10*2), R12
	SHRQ $2, CX
	JZ   ts_done
	MOVQ R10, R13
	SHRQ $4, R13

ts_group:
	MOVQ SI, AX
	MOVQ DI, DX
	MOVQ CX, BX

ts_p:
	VMOVUPS (AX), X0
	VMOVUPS (AX)(R8*1), X1
	VMOVUPS (AX)(R8*2), X2
	VMOVUPS (AX)(R9*1), X3
	VUNPCKLPS X1, X0, X4    // r0p0 r1p0 r0p1 r1p1
	VUNPCKHPS X1, X0, X5    // r0p2 r1p2 r0p3 r1p3
	VUNPCKLPS X3, X2, X6    // r2p0 r3p0 r2p1 r3p1
	VUNPCKHPS X3, X2, X7    // r2p2 r3p2 r2p3 r3p3
	VMOVLHPS X6, X4, X0     // p0
	VMOVHLPS X4, X6, X1     // p1
	VMOVLHPS X7, X5, X2     // p2
	VMOVHLPS X5, X7, X3     // p3
	VMOVUPS X0, (DX)
	VMOVUPS X1, (DX)(R10*1)
	VMOVUPS X2, (DX)(R10*2)
	VMOVUPS X3, (DX)(R12*1)
	ADDQ $16, AX
	ADDQ R11, DX
	DECQ BX
	JNZ  ts_p
	LEAQ (SI)(R8*4), SI
	ADDQ $16, DI
	DECQ R13
	JNZ  ts_group

ts_done:
	VZEROUPPER
	RET
