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

// BenchmarkShiftedLogProb12 scores 500 random-basis snapshots at a λ one
// hundredth of a grid step from a grid point whose ground state is known —
// what a scan's ∂λ log p asks at every point — with the state solved from
// the grid point's (warm, LogProb's path) and from scratch with the gap
// (cold, GroundState's path, which LogProb used before).
func BenchmarkShiftedLogProb12(b *testing.B) {
	for _, mode := range []string{"cold", "warm"} {
		b.Run(mode, func(b *testing.B) {
			s, err := New(Config{Sites: 12, Hamiltonian: "-ZXZ - h*X - J*XX", Params: []string{"h", "J"}, Basis: BasisRandom})
			if err != nil {
				b.Fatal(err)
			}
			grid := []float64{0.8, 0.75}
			xs := make([]uint8, 500*12)
			if err := s.Sample(xs, 500, grid, rand.New(rand.NewPCG(1, 2))); err != nil {
				b.Fatal(err)
			}
			dst := make([]float64, 500)
			for i := 0; b.Loop(); i++ {
				lam := []float64{grid[0] + 0.002 + 1e-7*float64(i), grid[1]} // a fresh λ defeats the caches
				if mode == "cold" {
					if _, err := s.GroundState(lam); err != nil {
						b.Fatal(err)
					}
				}
				if err := s.LogProb(dst, xs, lam); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
