//go:build amd64 && !purego

package vmath

import "golang.org/x/sys/cpu"

// useAsm: the kernels need AVX2 and FMA, and the operating system must
// save the YMM registers (x/sys/cpu's HasAVX and HasAVX2 include that).
var useAsm = cpu.X86.HasAVX && cpu.X86.HasAVX2 && cpu.X86.HasFMA

// softplusAsm writes softplus of n values (n a multiple of 4) from src to
// dst, in softplus_amd64.s.
//
//go:noescape
func softplusAsm(dst, src *float64, n int)

// sigmoidMulAsm writes σ(a)·d of n values (n a multiple of 4) to dst.
//
//go:noescape
func sigmoidMulAsm(dst, d, a *float64, n int)

// adamAsm is Adam's step of n entries (n a multiple of 4), in adam_amd64.s.
//
//go:noescape
func adamAsm(w, grad, m, v *float64, n int, c *[9]float64, decay int)
