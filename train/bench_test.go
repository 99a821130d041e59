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
