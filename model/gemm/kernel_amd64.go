//go:build amd64 && !purego

package gemm

import (
	"unsafe"

	"golang.org/x/sys/cpu"
)

// hasAsm: the kernels need AVX2 and FMA, and the operating system must
// save the YMM registers (x/sys/cpu's HasAVX and HasAVX2 include that).
var hasAsm = cpu.X86.HasAVX && cpu.X86.HasAVX2 && cpu.X86.HasFMA

// hasAVX512 selects the AVX-512 kernels (x/sys/cpu's HasAVX512F includes
// the operating system's support for the ZMM and mask registers).
var hasAVX512 = hasAsm && cpu.X86.HasAVX512F

// kernS6x16 is the AVX2 float32 micro-kernel (kernelFunc, mr = 6, nr = 16),
// in kernel_amd64.s.
//
//go:noescape
func kernS6x16(k int, a *float32, rsa, csa int, b, c *float32, ldc int, alpha, beta float32, load int)

// kernD6x8 is the AVX2 float64 micro-kernel (kernelFunc, mr = 6, nr = 8).
//
//go:noescape
func kernD6x8(k int, a *float64, rsa, csa int, b, c *float64, ldc int, alpha, beta float64, load int)

// kernS6x32 is the AVX-512 float32 micro-kernel (kernelFunc, mr = 6, nr = 32).
//
//go:noescape
func kernS6x32(k int, a *float32, rsa, csa int, b, c *float32, ldc int, alpha, beta float32, load int)

// kernD6x16 is the AVX-512 float64 micro-kernel (kernelFunc, mr = 6, nr = 16).
//
//go:noescape
func kernD6x16(k int, a *float64, rsa, csa int, b, c *float64, ldc int, alpha, beta float64, load int)

// The blocking: a packed kc×nr panel of B, 16 KiB, stays in the 32–48 KiB
// L1 cache while the 6-row slivers of A stream past it; mc·kc of A (up to
// 768 KiB float32, 384 KiB float64) stays in L2; a packed kc×nc block of B
// is 2 MiB (1 MiB for AVX-512 float32).
var (
	s32AVX2   = &config[float32]{mr: 6, nr: 16, kc: 256, mc: 768, nc: 2048, kernel: kernS6x16}
	d64AVX2   = &config[float64]{mr: 6, nr: 8, kc: 256, mc: 192, nc: 1024, kernel: kernD6x8}
	s32AVX512 = &config[float32]{mr: 6, nr: 32, kc: 128, mc: 1536, nc: 2048, kernel: kernS6x32}
	d64AVX512 = &config[float64]{mr: 6, nr: 16, kc: 128, mc: 384, nc: 2048, kernel: kernD6x16}
)

// s32 and d64 are the configurations Sgemm and Dgemm use.
var s32, d64 = s32AVX2, d64AVX2

func init() {
	if hasAVX512 {
		s32, d64 = s32AVX512, d64AVX512
	}
}

// kernelName says which kernels run, for Kernels.
func kernelName() string {
	switch {
	case !useAsm:
		return "gonum"
	case s32 == s32AVX512:
		return "AVX-512"
	}
	return "AVX2"
}

// asmConfigs lists the configurations this CPU can run, for the tests.
func asmConfigs() ([]*config[float32], []*config[float64]) {
	if !hasAsm {
		return nil, nil
	}
	if !hasAVX512 {
		return []*config[float32]{s32AVX2}, []*config[float64]{d64AVX2}
	}
	return []*config[float32]{s32AVX2, s32AVX512}, []*config[float64]{d64AVX2, d64AVX512}
}

// copyPanels packs the first panels full panels of an untransposed B
// (rows of width = 64 or 128 bytes per panel, src rows stride bytes apart,
// k rows) into dst; in kernel_amd64.s.
//
//go:noescape
func copyPanels(dst, src unsafe.Pointer, k, stride, panels, width int)

// transD packs one full panel of a transposed float64 B for the first k4
// rows (k4 a multiple of 4): dst[p·nr + j] = src row j [p], the rows
// stride bytes apart, nr a multiple of 4; in kernel_amd64.s.
//
//go:noescape
func transD(dst, src unsafe.Pointer, k4, stride, nr int)

// transS is transD for float32.
//
//go:noescape
func transS(dst, src unsafe.Pointer, k4, stride, nr int)
