package indicator

import (
	"context"
	"testing"

	"tidemark/data/density"
	"tidemark/data/density/densitytest"
)

// BenchmarkScan16x16 measures everything after the density on the size of
// the performance target (16×16 sites, 21 temperatures × 1000 snapshots,
// all indicators, 100 bootstrap replicates) with a fast fake source (an
// independent-site Bernoulli family), so the time is the indicator code's
// own: the matrix of 21000×21 entries is computed once and every replicate
// reuses it.
func BenchmarkScan16x16(b *testing.B) {
	src := &densitytest.Logistic{N: 256, D: 1, A: 2, C: 2.3}
	ds := bernoulliData(src, linspace(1.5, 3.5, 21), nil, 1000, 1)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := Run(context.Background(), []density.Source{src}, ds, Config{Bootstrap: 100, Threads: 2, Seed: 1}); err != nil {
			b.Fatal(err)
		}
	}
}
