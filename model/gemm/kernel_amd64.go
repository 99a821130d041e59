//go:build amd64 && !purego

package gemm

import "golang.org/x/sys/cpu"

// hasAsm: the kernels need AVX2 and FMA, and the operating system must
// save the YMM registers (x/sys/cpu's HasAVX and HasAVX2 include that).
var hasAsm = cpu.X86.HasAVX && cpu.X86.HasAVX2 && cpu.X86.HasFMA

// kernS6x16 is the float32 micro-kernel (kernelFunc, mr = 6, nr = 16), in
// kernel_amd64.s.
//
//go:noescape
func kernS6x16(k int, a *float32, rsa, csa int, b, c *float32, ldc int, alpha, beta float32, load int)

// kernD6x8 is the float64 micro-kernel (kernelFunc, mr = 6, nr = 8), in
// kernel_amd64.s.
//
//go:noescape
func kernD6x8(k int, a *float64, rsa, csa int, b, c *float64, ldc int, alpha, beta float64, load int)

// The blocking: kc·nr·size = 16 KiB of packed B per panel stays in the
// 32–48 KiB L1 cache; mc·kc of A (up to 768 KiB float32, 384 KiB float64)
// in L2; a packed kc×nc block of B is 2 MiB.
var (
	s32 = config[float32]{mr: 6, nr: 16, kc: 256, mc: 768, nc: 2048, kernel: kernS6x16}
	d64 = config[float64]{mr: 6, nr: 8, kc: 256, mc: 192, nc: 1024, kernel: kernD6x8}
)
