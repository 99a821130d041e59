package gemm

import (
	"sync/atomic"
	"testing"

	"gonum.org/v1/gonum/blas"
	G "gorgonia.org/gorgonia"
	"gorgonia.org/tensor"
)

// counting counts the Dgemm and Sgemm calls that reach it.
type counting struct {
	Implementation
	d, s *atomic.Int64
}

func (c counting) Dgemm(tA, tB blas.Transpose, m, n, k int, alpha float64, a []float64, lda int, b []float64, ldb int, beta float64, cc []float64, ldc int) {
	c.d.Add(1)
	c.Implementation.Dgemm(tA, tB, m, n, k, alpha, a, lda, b, ldb, beta, cc, ldc)
}

func (c counting) Sgemm(tA, tB blas.Transpose, m, n, k int, alpha float32, a []float32, lda int, b []float32, ldb int, beta float32, cc []float32, ldc int) {
	c.s.Add(1)
	c.Implementation.Sgemm(tA, tB, m, n, k, alpha, a, lda, b, ldb, beta, cc, ldc)
}

// TestGorgoniaUsesGivenBLAS checks that gorgonia's matrix products, in
// its pure-Go default engine, forward and backward, call the BLAS handed
// to gorgonia.Use, as tidemark's default build relies on.
func TestGorgoniaUsesGivenBLAS(t *testing.T) {
	saved := G.WhichBLAS()
	defer G.Use(saved)
	for _, dt := range []tensor.Dtype{tensor.Float64, tensor.Float32} {
		c := counting{d: new(atomic.Int64), s: new(atomic.Int64)}
		G.Use(c)
		g := G.NewGraph()
		x := G.NewMatrix(g, dt, G.WithShape(8, 5), G.WithName("x"), G.WithInit(G.GlorotU(1)))
		w := G.NewMatrix(g, dt, G.WithShape(5, 7), G.WithName("w"), G.WithInit(G.GlorotU(1)))
		y := G.Must(G.Mul(x, w))
		loss := G.Must(G.Sum(y))
		if _, err := G.Grad(loss, x, w); err != nil {
			t.Fatal(err)
		}
		vm := G.NewTapeMachine(g)
		if err := vm.RunAll(); err != nil {
			t.Fatal(err)
		}
		vm.Close()
		got, other := c.d.Load(), c.s.Load()
		if dt == tensor.Float32 {
			got, other = other, got
		}
		t.Logf("%v: %d GEMM calls reached the BLAS, %d of the other precision", dt, got, other)
		// One product forward and one per gradient (x and w).
		if got < 3 || other != 0 {
			t.Errorf("%v: %d GEMM calls of the right precision reached the BLAS handed to gorgonia (want ≥ 3), %d of the other", dt, got, other)
		}
	}
}
