package chain_test

import (
	"fmt"
	"math"
	"math/rand/v2"

	"tidemark/data/chain"
)

// The transverse-field Ising chain at its critical field: the ground-state
// energy per site of an 8-site periodic chain, and three Z-basis snapshots
// with their exact log-probabilities.
func Example() {
	src, err := chain.New(chain.Config{
		Sites:       8,
		Hamiltonian: "-ZZ - h*X",
		Params:      []string{"h"},
		Basis:       chain.BasisZ,
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	lambda := []float64{1}
	st, err := src.GroundState(lambda)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("sector %v, E0/N = %.6f, gap = %.4f\n", src.Config().Sector, st.E0/8, st.Gap)

	xs := make([]uint8, 3*8)
	if err := src.Sample(xs, 3, lambda, rand.New(rand.NewPCG(1, 0))); err != nil {
		fmt.Println(err)
		return
	}
	lp := make([]float64, 3)
	if err := src.LogProb(lp, xs, lambda); err != nil {
		fmt.Println(err)
		return
	}
	for m := 0; m < 3; m++ {
		fmt.Printf("%v  p = %.4f\n", xs[m*8:(m+1)*8], math.Exp(lp[m]))
	}
	// Output:
	// sector even, E0/N = -1.281458, gap = 1.5607
	// [0 1 0 0 0 0 0 0]  p = 0.0167
	// [0 0 0 0 0 0 0 1]  p = 0.0167
	// [0 0 0 0 0 0 0 0]  p = 0.2108
}

// A parse error names the column and what was expected.
func ExampleParse() {
	_, err := chain.Parse("-ZZ - h X")
	fmt.Println(err)
	// Output: hamiltonian "-ZZ - h X", column 9: expected '*' and a Pauli word (I, X, Y, Z) after "h", found Pauli word "X"
}
