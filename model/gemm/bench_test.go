package gemm

import (
	"fmt"
	"math/rand/v2"
	"sync"
	"testing"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/gonum"
)

// benchShapes are the products of one training step of tidemark at
// N = 256 sites, H = 512 hidden units, a batch of 256 split into 2 chunks
// of 128 rows: the forward products x·W (NN), the input gradients dY·Wᵀ
// (NT) and the weight gradients Xᵀ·dY (TN, k = 128), then one 64-column
// block as the masked products issue them, and the square 1024³.
var benchShapes = []struct {
	name    string
	tA, tB  blas.Transpose
	m, n, k int
}{
	{"NN_128x512x256", blas.NoTrans, blas.NoTrans, 128, 512, 256},
	{"NN_128x512x512", blas.NoTrans, blas.NoTrans, 128, 512, 512},
	{"NN_128x256x512", blas.NoTrans, blas.NoTrans, 128, 256, 512},
	{"NT_128x256x512", blas.NoTrans, blas.Trans, 128, 256, 512},
	{"NT_128x512x512", blas.NoTrans, blas.Trans, 128, 512, 512},
	{"TN_256x512x128", blas.Trans, blas.NoTrans, 256, 512, 128},
	{"TN_512x512x128", blas.Trans, blas.NoTrans, 512, 512, 128},
	{"TN_512x256x128", blas.Trans, blas.NoTrans, 512, 256, 128},
	{"NN_128x64x512", blas.NoTrans, blas.NoTrans, 128, 64, 512},
	{"NN_1024x1024x1024", blas.NoTrans, blas.NoTrans, 1024, 1024, 1024},
}

// benchGemm times f on one shape, from g goroutines at once (each with
// its own matrices), and reports the total GFLOP/s (2mnk per product).
func benchGemm[T float32 | float64](b *testing.B, f gemmFunc[T], tA, tB blas.Transpose, m, n, k, g int) {
	type mats struct{ a, b, c []T }
	rng := rand.New(rand.NewPCG(1, 2))
	ms := make([]mats, g)
	for i := range ms {
		ms[i] = mats{fill[T](rng, m*k), fill[T](rng, k*n), make([]T, m*n)}
	}
	lda, ldb := k, n
	if tA == blas.Trans {
		lda = m
	}
	if tB == blas.Trans {
		ldb = k
	}
	b.ResetTimer()
	var wg sync.WaitGroup
	for i := range ms {
		wg.Add(1)
		go func(x mats) {
			defer wg.Done()
			for range b.N {
				f(tA, tB, m, n, k, 1, x.a, lda, x.b, ldb, 0, x.c, n)
			}
		}(ms[i])
	}
	wg.Wait()
	b.ReportMetric(float64(g)*2*float64(m)*float64(n)*float64(k)*float64(b.N)/b.Elapsed().Seconds()/1e9, "GFLOP/s")
}

// BenchmarkGemm compares this package's Dgemm and Sgemm ("ours"; and,
// where the CPU has several, each kernel, "ours_6x16" etc.) with
// gonum's ("gonum", which spreads large products over GOMAXPROCS
// goroutines itself), called from 1 goroutine and from 2 at once (as
// tidemark's training calls them, one goroutine per thread).
func BenchmarkGemm(b *testing.B) {
	var ours Implementation
	var ref gonum.Implementation
	ss, ds := asmConfigs()
	for _, s := range benchShapes {
		for _, g := range []int{1, 2} {
			if len(ss) > 1 {
				// Each kernel this CPU has, through the driver.
				for i := range ss {
					sc, dc := ss[i], ds[i]
					b.Run(fmt.Sprintf("f64/%s/g%d/ours_%dx%d", s.name, g, dc.mr, dc.nr), func(b *testing.B) { benchGemm(b, withConfig(dc), s.tA, s.tB, s.m, s.n, s.k, g) })
					b.Run(fmt.Sprintf("f32/%s/g%d/ours_%dx%d", s.name, g, sc.mr, sc.nr), func(b *testing.B) { benchGemm(b, withConfig(sc), s.tA, s.tB, s.m, s.n, s.k, g) })
				}
			}
			b.Run(fmt.Sprintf("f64/%s/g%d/ours", s.name, g), func(b *testing.B) { benchGemm(b, ours.Dgemm, s.tA, s.tB, s.m, s.n, s.k, g) })
			b.Run(fmt.Sprintf("f64/%s/g%d/gonum", s.name, g), func(b *testing.B) { benchGemm(b, ref.Dgemm, s.tA, s.tB, s.m, s.n, s.k, g) })
			b.Run(fmt.Sprintf("f32/%s/g%d/ours", s.name, g), func(b *testing.B) { benchGemm(b, ours.Sgemm, s.tA, s.tB, s.m, s.n, s.k, g) })
			b.Run(fmt.Sprintf("f32/%s/g%d/gonum", s.name, g), func(b *testing.B) { benchGemm(b, ref.Sgemm, s.tA, s.tB, s.m, s.n, s.k, g) })
		}
	}
}
