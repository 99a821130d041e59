package ising_test

import (
	"fmt"
	"math"

	"tidemark/data/ising"
)

// The 4×4 lattice enumerated exactly agrees with Kaufman's closed form.
func ExampleNewEnumeration() {
	e, err := ising.NewEnumeration(ising.Lattice{Ly: 4, Lx: 4})
	if err != nil {
		panic(err)
	}
	c := ising.Couplings{T: 2.5, Jx: 1, Jy: 1}
	meanE, varE, meanAbsM := e.Moments(c)
	fmt.Printf("ln Z = %.6f (Kaufman %.6f)\n", e.LogZ(c), ising.KaufmanLogZ(4, 4, 2.5, 1, 1))
	fmt.Printf("E/N = %.4f, C/N = %.4f, <|m|> = %.4f\n", meanE/16, varE/(16*2.5*2.5), meanAbsM/16)
	// Output:
	// ln Z = 14.561093 (Kaufman 14.561093)
	// E/N = -1.3791, C/N = 0.8125, <|m|> = 0.7647
}

// The heat-capacity peak of a finite lattice lies above Onsager's T_c.
func ExampleKaufmanPeak() {
	tc := 2 / math.Log(1+math.Sqrt2)
	for _, l := range []int{16, 64} {
		T, c := ising.KaufmanPeak(l, l, 1, 1, 2, 2.6)
		fmt.Printf("L=%d: peak C/N = %.3f at T = %.4f (T_c = %.4f)\n", l, c, T, tc)
	}
	// Output:
	// L=16: peak C/N = 1.552 at T = 2.3175 (T_c = 2.2692)
	// L=64: peak C/N = 2.252 at T = 2.2817 (T_c = 2.2692)
}
