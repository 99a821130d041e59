package ising

import (
	"testing"
)

// BenchmarkMetropolis reports single-spin Metropolis updates per second on a
// 64×64 lattice near T_c with a field (so Metropolis is the method used).
func BenchmarkMetropolis(b *testing.B) {
	ch, err := NewMarkovChain(Lattice{64, 64}, Couplings{T: 2.3, Jx: 1, Jy: 1, H: 0.05}, 1, 0)
	if err != nil {
		b.Fatal(err)
	}
	for i := 0; i < 50; i++ {
		ch.MetropolisSweep()
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		ch.MetropolisSweep()
	}
	b.ReportMetric(float64(b.N)*64*64/b.Elapsed().Seconds(), "updates/s")
}

// BenchmarkWolff reports spins flipped per second by Wolff clusters on a
// 64×64 lattice at T_c.
func BenchmarkWolff(b *testing.B) {
	ch, err := NewMarkovChain(Lattice{64, 64}, Couplings{T: 2.269185, Jx: 1, Jy: 1}, 1, 0)
	if err != nil {
		b.Fatal(err)
	}
	for i := 0; i < 200; i++ {
		ch.WolffCluster()
	}
	spins := 0
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		spins += ch.WolffCluster()
	}
	b.ReportMetric(float64(spins)/b.Elapsed().Seconds(), "spins/s")
}

// BenchmarkExactLogZ4x4 reports the cost of ln Z of the 4×4 lattice at a
// new Couplings (one pass over the classes).
func BenchmarkExactLogZ4x4(b *testing.B) {
	e, _ := NewEnumeration(Lattice{4, 4})
	for i := 0; i < b.N; i++ {
		e.LogZ(Couplings{T: 1 + float64(i%100000)*1e-5, Jx: 1, Jy: 1})
	}
}
