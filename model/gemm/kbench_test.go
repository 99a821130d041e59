package gemm

import (
	"fmt"
	"testing"
)

// BenchmarkKernel times the micro-kernels alone on packed, L1-resident
// operands (k = 256), the upper bound of the driver's rate.
func BenchmarkKernel(b *testing.B) {
	const k = 256
	ss, ds := asmConfigs()
	for _, cf := range ds {
		b.Run(fmt.Sprintf("f64_%dx%d", cf.mr, cf.nr), func(b *testing.B) {
			a, bb, c := make([]float64, cf.mr*k), make([]float64, cf.nr*k), make([]float64, cf.mr*cf.nr)
			for range b.N {
				cf.kernel(k, &a[0], 1, cf.mr, &bb[0], &c[0], cf.nr, 1, 1, 1)
			}
			b.ReportMetric(2*float64(cf.mr*cf.nr*k*b.N)/b.Elapsed().Seconds()/1e9, "GFLOP/s")
		})
	}
	for _, cf := range ss {
		b.Run(fmt.Sprintf("f32_%dx%d", cf.mr, cf.nr), func(b *testing.B) {
			a, bb, c := make([]float32, cf.mr*k), make([]float32, cf.nr*k), make([]float32, cf.mr*cf.nr)
			for range b.N {
				cf.kernel(k, &a[0], 1, cf.mr, &bb[0], &c[0], cf.nr, 1, 1, 1)
			}
			b.ReportMetric(2*float64(cf.mr*cf.nr*k*b.N)/b.Elapsed().Seconds()/1e9, "GFLOP/s")
		})
	}
}
