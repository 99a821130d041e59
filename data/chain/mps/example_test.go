package mps_test

import (
	"context"
	"fmt"
	"math/rand/v2"

	"tidemark/data/chain/mps"
)

// Example finds the ground state of the open transverse-field Ising chain
// −Σ Z_iZ_{i+1} − h Σ X_i at its critical field h = 1 and measures it. The
// energy is the free-fermion value −20.0163879005 (Pfeuty, Ann. Phys. 57, 79
// (1970), from the Majorana matrix of freefermion_test.go).
func Example() {
	const n, h = 16, 1.0
	var terms []mps.Term
	for i := 0; i < n; i++ {
		if i+1 < n {
			terms = append(terms, mps.Term{Coef: -1, Sites: []int{i, i + 1}, Letters: "ZZ"})
		}
		terms = append(terms, mps.Term{Coef: -h, Sites: []int{i}, Letters: "X"})
	}
	op, err := mps.BuildMPO(n, terms)
	if err != nil {
		panic(err)
	}
	psi, res, err := mps.GroundState(context.Background(), op, nil, mps.Options{MaxBond: 32}, rand.New(rand.NewPCG(1, 1)))
	if err != nil {
		panic(err)
	}
	fmt.Printf("E0 = %.8f, converged %v\n", res.Energy, res.Converged)

	// Exact probability that every site is measured X = +1.
	bases, outs := make([]int, n), make([]int, n)
	m := mps.NewMeasurer(psi)
	fmt.Printf("log p(all X = +1) = %.6f\n", m.LogProb(bases, outs))
	// Output:
	// E0 = -20.01638790, converged true
	// log p(all X = +1) = -1.369630
}
