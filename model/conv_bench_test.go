package model

import (
	"math/rand/v2"
	"testing"
)

// BenchmarkConvVsDense scores 64 snapshots of a 32×32 lattice at 17 λ
// (LogProbMatrix, one thread) and takes one training step on a batch of
// 64 (LossGrad, one thread) with the dense default model and with the conv
// model at its trainer defaults (window 2, channels 16,16), so the two can
// be compared in one run: go test -bench ConvVsDense ./model/.
func BenchmarkConvVsDense(b *testing.B) {
	const L, n = 32, 64
	lo, hi := []float64{1.9}, []float64{2.7}
	dense := DefaultConfig(L*L, 2, 1, lo, hi)
	conv := DefaultConfig(L*L, 2, 1, lo, hi)
	conv.Hidden = []int{16, 16}
	conv.Conv = &ConvConfig{Height: L, Width: L, Window: 2}
	rng := rand.New(rand.NewPCG(1, 1))
	xs := make([]uint8, n*L*L)
	for i := range xs {
		xs[i] = uint8(rng.IntN(2))
	}
	var lams [][]float64
	ps := make([]float64, n)
	for k := range 17 {
		lams = append(lams, []float64{1.9 + 0.05*float64(k)})
	}
	for i := range ps {
		ps[i] = lams[i%17][0]
	}
	for _, tc := range []struct {
		name string
		cfg  Config
	}{{"dense", dense}, {"conv", conv}} {
		m, err := New(tc.cfg, 1)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(tc.name+"/logprobmatrix", func(b *testing.B) {
			for b.Loop() {
				if _, err := m.LogProbMatrix(xs, n, lams, 1); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(b.N*n*len(lams))/b.Elapsed().Seconds(), "evals/s")
		})
		b.Run(tc.name+"/train", func(b *testing.B) {
			bg, err := NewBatchGraph(m, n, 1)
			if err != nil {
				b.Fatal(err)
			}
			grads := make([][]float64, len(m.Weights))
			for i, w := range m.Weights {
				grads[i] = make([]float64, len(w.Data))
			}
			for b.Loop() {
				if _, err := bg.LossGrad(xs, ps, n, 1, grads); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(b.N*n)/b.Elapsed().Seconds(), "snapshots/s")
		})
	}
}
