package train

import (
	"context"
	"fmt"
	"testing"
)

// BenchmarkEpoch16x16 times one training epoch with the default settings
// on 16×16 snapshots (20 points × 200 samples) with 1 and 2 threads and
// reports samples/s.
func BenchmarkEpoch16x16(b *testing.B) {
	ds := randomDataset(b, 16, 16, 20, 200)
	for _, threads := range []int{1, 2} {
		b.Run(fmt.Sprintf("threads=%d", threads), func(b *testing.B) {
			st := DefaultSettings()
			st.Epochs = 1
			st.Threads = threads
			sps := 0.0
			for i := 0; i < b.N; i++ {
				ck, err := Run(context.Background(), ds, Options{Settings: st})
				if err != nil {
					b.Fatal(err)
				}
				sps += ck.Header.Metrics[0].SamplesPerS
			}
			b.ReportMetric(sps/float64(b.N), "samples/s")
		})
	}
}

// BenchmarkAdamStep times one Adam update (UpdateThreads, 1 thread) over
// 700,000 weights and reports weights/s: "half" has zero gradient and
// moments in the second half of every 1024 entries (like the masked-out
// entries of MADE weights), "none" everywhere (only the skip test runs),
// "all" nowhere. With -tags openblas it runs the C loop.
func BenchmarkAdamStep(b *testing.B) {
	const n = 700000
	for _, c := range []struct {
		name   string
		active int
	}{{"all", 1024}, {"half", 512}, {"none", 0}} {
		b.Run(c.name, func(b *testing.B) {
			w, g := make([]float64, n), make([]float64, n)
			for j := range w {
				w[j] = float64(j%7) - 3
				if j%1024 < c.active {
					g[j] = 1e-3 * float64(j%13-6)
				}
			}
			a := NewAdam([]int{n}, 0.9, 0.999, 1e-8, 0)
			ws, gs := [][]float64{w}, [][]float64{g}
			for b.Loop() {
				a.UpdateThreads(ws, gs, 1e-4, 1)
			}
			b.ReportMetric(float64(b.N*n)/b.Elapsed().Seconds(), "weights/s")
		})
	}
}
