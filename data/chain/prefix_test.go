package chain

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

func randomState(n int, rng *rand.Rand) []complex128 {
	amp := make([]complex128, 1<<n)
	for i := range amp {
		amp[i] = complex(rng.NormFloat64(), rng.NormFloat64())
	}
	return amp
}

func randomRows(n, m int, rng *rand.Rand) []uint8 {
	xs := make([]uint8, n*m)
	for i := range xs {
		xs[i] = uint8(rng.IntN(6))
	}
	// repeat some rows and some prefixes, as real data do
	for r := 1; r < m; r += 3 {
		copy(xs[r*n+n/2:(r+1)*n], xs[(r-1)*n+n/2:r*n])
	}
	return xs
}

// TestCollapseSharedMatchesCollapse: sharing prefixes changes no result,
// bit for bit, including a state with exact zeros (outcomes of probability
// 0 give −Inf), against the per-row chain rule of collapse.
func TestCollapseSharedMatchesCollapse(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, tc := range []struct {
		name string
		n, m int
		zero bool
	}{{"n=6", 6, 300, false}, {"n=10", 10, 500, false}, {"product state", 5, 200, true}} {
		t.Run(tc.name, func(t *testing.T) {
			amp := randomState(tc.n, rng)
			if tc.zero {
				for i := range amp {
					amp[i] = 0
				}
				amp[0] = 1 // all up: Z outcomes −1 impossible
			}
			xs := randomRows(tc.n, tc.m, rng)
			got := make([]float64, tc.m)
			collapseShared(amp, xs, tc.n, got)
			buf := make([]complex128, len(amp))
			bases, outs := make([]int, tc.n), make([]int, tc.n)
			ninf := 0
			for r := 0; r < tc.m; r++ {
				for j, v := range xs[r*tc.n : (r+1)*tc.n] {
					bases[j], outs[j] = int(v)/2, 1-int(v)%2
				}
				want := collapse(amp, buf, bases, outs, nil)
				if got[r] != want && !(math.IsInf(got[r], -1) && math.IsInf(want, -1)) {
					t.Fatalf("row %d: shared %v, per row %v", r, got[r], want)
				}
				if math.IsInf(want, -1) {
					ninf++
				}
			}
			if tc.zero && ninf == 0 {
				t.Error("no impossible outcome tested")
			}
		})
	}
}

// BenchmarkCollapse compares the per-row chain rule with the shared-prefix
// one on 1024 (the block of indicator.ComputeMatrix) and 4096 random-basis
// rows of a 12-site state: the ratio is the speed-up of chain.Source.LogProb
// in the random basis.
func BenchmarkCollapse(b *testing.B) {
	const n = 12
	for _, m := range []int{1024, 4096} {
		rng := rand.New(rand.NewPCG(1, 2))
		amp := randomState(n, rng)
		xs := make([]uint8, n*m)
		for i := range xs {
			xs[i] = uint8(rng.IntN(6))
		}
		dst := make([]float64, m)
		b.Run(fmt.Sprintf("rows=%d/per-row", m), func(b *testing.B) {
			buf := make([]complex128, len(amp))
			bases, outs := make([]int, n), make([]int, n)
			for i := 0; i < b.N; i++ {
				for r := 0; r < m; r++ {
					for j, v := range xs[r*n : (r+1)*n] {
						bases[j], outs[j] = int(v)/2, 1-int(v)%2
					}
					dst[r] = collapse(amp, buf, bases, outs, nil)
				}
			}
		})
		b.Run(fmt.Sprintf("rows=%d/shared-prefix", m), func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				collapseShared(amp, xs, n, dst)
			}
		})
	}
}
