package gemm

import "testing"

// BenchmarkKernel times the micro-kernels alone on packed, L1-resident
// operands (k = 256), the upper bound of the driver's rate.
func BenchmarkKernel(b *testing.B) {
	const k = 256
	b.Run("f64", func(b *testing.B) {
		a, bb, c := make([]float64, 6*k), make([]float64, 8*k), make([]float64, 6*8)
		for range b.N {
			d64.kernel(k, &a[0], 1, 6, &bb[0], &c[0], 8, 1, 1, 1)
		}
		b.ReportMetric(2*6*8*k*float64(b.N)/b.Elapsed().Seconds()/1e9, "GFLOP/s")
	})
	b.Run("f32", func(b *testing.B) {
		a, bb, c := make([]float32, 6*k), make([]float32, 16*k), make([]float32, 6*16)
		for range b.N {
			s32.kernel(k, &a[0], 1, 6, &bb[0], &c[0], 16, 1, 1, 1)
		}
		b.ReportMetric(2*6*16*k*float64(b.N)/b.Elapsed().Seconds()/1e9, "GFLOP/s")
	})
}
