package chain

import (
	"math/rand/v2"
	"testing"
)

func benchSolve(b *testing.B, n int, text string) {
	s, err := New(Config{Sites: n, Hamiltonian: text, Params: []string{"h"}})
	if err != nil {
		b.Fatal(err)
	}
	for i := 0; b.Loop(); i++ {
		// A fresh λ each time defeats the cache.
		if _, err := s.GroundState([]float64{0.9 + 1e-6*float64(i)}); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkGroundStateIsing12(b *testing.B) { benchSolve(b, 12, "-ZZ - h*X") }
func BenchmarkGroundStateIsing16(b *testing.B) { benchSolve(b, 16, "-ZZ - h*X") }
func BenchmarkGroundStateComplex12(b *testing.B) {
	benchSolve(b, 12, "-XX - YY + 0.3*XY - 0.3*YX - h*Z")
}

func BenchmarkSampleRandomBasis12(b *testing.B) {
	s, err := New(Config{Sites: 12, Hamiltonian: "-ZZ - h*X", Params: []string{"h"}, Basis: BasisRandom})
	if err != nil {
		b.Fatal(err)
	}
	lam := []float64{1}
	if _, err := s.GroundState(lam); err != nil {
		b.Fatal(err)
	}
	xs := make([]uint8, 1000*12)
	rng := rand.New(rand.NewPCG(1, 2))
	for b.Loop() {
		if err := s.Sample(xs, 1000, lam, rng); err != nil {
			b.Fatal(err)
		}
	}
}
