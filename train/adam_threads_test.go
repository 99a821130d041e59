package train

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestAdamThreadsSameBits: the update is the same, bit for bit, for every
// thread count (each entry is updated on its own, whichever thread takes
// its chunk), on slices shorter and longer than several chunks, with runs
// of zero gradients.
func TestAdamThreadsSameBits(t *testing.T) {
	sizes := []int{1, 100, adamChunk - 1, 3*adamChunk + 17, 9 * adamChunk}
	run := func(threads int) [][]float64 {
		r := rand.New(rand.NewPCG(1, 1))
		a := NewAdam(sizes, 0.9, 0.999, 1e-8, 0.01)
		a.Decay = []bool{true, false, true, false, false}
		w := make([][]float64, len(sizes))
		for i, n := range sizes {
			w[i] = make([]float64, n)
			for j := range w[i] {
				w[i][j] = r.NormFloat64()
			}
		}
		for step := 0; step < 3; step++ {
			g := make([][]float64, len(sizes))
			for i, n := range sizes {
				g[i] = make([]float64, n)
				for j := range g[i] {
					if (j/1000)%2 == 0 {
						g[i][j] = r.NormFloat64() * 1e-2
					}
				}
			}
			a.UpdateThreads(w, g, 1e-3, threads)
		}
		return append(w, append(a.M, a.V...)...)
	}
	want := run(1)
	for _, threads := range []int{2, 3, 7} {
		got := run(threads)
		for i := range want {
			for j := range want[i] {
				if math.Float64bits(got[i][j]) != math.Float64bits(want[i][j]) {
					t.Fatalf("threads=%d: slice %d entry %d is %v, one thread gives %v", threads, i, j, got[i][j], want[i][j])
				}
			}
		}
	}
}
