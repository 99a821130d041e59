//go:build !amd64 || purego

package gemm

import "unsafe"

// hasAsm is false: there are no assembly kernels for this architecture
// (or the build has the tag purego), so Dgemm and Sgemm are gonum's.
const hasAsm = false

// The driver's configurations with the plain-Go kernel; Dgemm and Sgemm
// do not use them here (useAsm is false), the tests do.
var (
	s32 = &config[float32]{mr: 6, nr: 16, kc: 256, mc: 768, nc: 2048, kernel: goKernel[float32](6, 16)}
	d64 = &config[float64]{mr: 6, nr: 8, kc: 256, mc: 192, nc: 1024, kernel: goKernel[float64](6, 8)}
)

func kernelName() string { return "gonum" }

func asmConfigs() ([]*config[float32], []*config[float64]) { return nil, nil }

// copyPanels is not called without the assembly (useAsm is false).
func copyPanels(dst, src unsafe.Pointer, k, stride, panels, width int) {
	panic("gemm: copyPanels without assembly")
}

// transD and transS are not called without the assembly.
func transD(dst, src unsafe.Pointer, k4, stride, nr int) { panic("gemm: transD without assembly") }
func transS(dst, src unsafe.Pointer, k4, stride, nr int) { panic("gemm: transS without assembly") }
