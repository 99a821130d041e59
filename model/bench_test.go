package model

import (
	"fmt"
	"math/rand/v2"
	"testing"
)

// benchModel is the benchmark architecture: N = 256, q = 2, two masked
// hidden layers of 512 units, the default conditioning net and a direct
// connection.
func benchModel(b *testing.B) *Model {
	cfg := DefaultConfig(256, 2, 1, []float64{1}, []float64{4})
	cfg.Hidden = []int{512, 512}
	cfg.Activation = "relu" // the model of bench/run.sh and its PyTorch peer
	m, err := New(cfg, 1)
	if err != nil {
		b.Fatal(err)
	}
	return m
}

const benchBatch = 256

func benchData(m *Model, n int) ([]uint8, []float64) {
	return randomBatch(m.Cfg, n, 42)
}

func lambdas(k int) [][]float64 {
	l := make([][]float64, k)
	for i := range l {
		l[i] = []float64{1 + 3*float64(i)/float64(k-1)}
	}
	return l
}

// BenchmarkLogProb scores 256 snapshots at one λ per operation.
func BenchmarkLogProb(b *testing.B) { benchLogProb(b, benchModel(b)) }

// BenchmarkLossGrad is one training step: loss and gradient of a batch of
// 256 snapshots through the gorgonia graph.
func BenchmarkLossGrad(b *testing.B) { benchLossGrad(b, benchModel(b)) }

// benchLogProb scores a batch of snapshots at one λ per operation.
func benchLogProb(b *testing.B, m *Model) {
	xs, _ := benchData(m, benchBatch)
	dst := make([]float64, benchBatch)
	b.ResetTimer()
	for b.Loop() {
		if err := m.LogProb(dst, xs, []float64{2.5}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.N*benchBatch)/b.Elapsed().Seconds(), "snapshots/s")
}

// benchLogProbMatrix64 scores a batch at 64 λ in one call on one thread per
// operation.
func benchLogProbMatrix64(b *testing.B, m *Model) {
	xs, _ := benchData(m, benchBatch)
	ls := lambdas(64)
	b.ResetTimer()
	for b.Loop() {
		if _, err := m.LogProbMatrix(xs, benchBatch, ls, 1); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.N*benchBatch*64)/b.Elapsed().Seconds(), "snapshot·λ/s")
}

// benchLossGrad runs one training step (loss and gradient of a batch) per
// operation.
func benchLossGrad(b *testing.B, m *Model) {
	g, err := NewGraph(m, benchBatch)
	if err != nil {
		b.Fatal(err)
	}
	xs, ps := benchData(m, benchBatch)
	grads := zeroGrads(m)
	b.ResetTimer()
	for b.Loop() {
		if _, err := g.LossGrad(xs, ps, benchBatch, grads); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.N*benchBatch)/b.Elapsed().Seconds(), "snapshots/s")
}

// BenchmarkLogProbMatrix64 scores 256 snapshots at 64 λ in one call on one
// thread (the first-layer product is shared by all λ).
func BenchmarkLogProbMatrix64(b *testing.B) {
	m := benchModel(b)
	benchLogProbMatrix64(b, m)
}

// BenchmarkLogProbSeparate64 is the same work as BenchmarkLogProbMatrix64
// done by 64 separate LogProb calls.
func BenchmarkLogProbSeparate64(b *testing.B) {
	m := benchModel(b)
	xs, _ := benchData(m, benchBatch)
	ls := lambdas(64)
	dst := make([]float64, benchBatch)
	b.ResetTimer()
	for b.Loop() {
		for _, l := range ls {
			if err := m.LogProb(dst, xs, l); err != nil {
				b.Fatal(err)
			}
		}
	}
	b.ReportMetric(float64(b.N*benchBatch*64)/b.Elapsed().Seconds(), "snapshot·λ/s")
}

// BenchmarkSample draws 256 snapshots per operation.
func BenchmarkSample(b *testing.B) {
	m := benchModel(b)
	dst := make([]uint8, benchBatch*m.Cfg.Sites)
	rng := rand.New(rand.NewPCG(1, 2))
	b.ResetTimer()
	for b.Loop() {
		if err := m.Sample(dst, benchBatch, []float64{2.5}, rng); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.N*benchBatch)/b.Elapsed().Seconds(), "snapshots/s")
}

// BenchmarkLossGradFloat32 is BenchmarkLossGrad with Precision float32.
func BenchmarkLossGradFloat32(b *testing.B) {
	m := benchModel(b)
	m.Cfg.Precision = PrecisionFloat32
	g, err := NewGraph(m, benchBatch)
	if err != nil {
		b.Fatal(err)
	}
	xs, ps := benchData(m, benchBatch)
	grads := zeroGrads(m)
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		if _, err := g.LossGrad(xs, ps, benchBatch, grads); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.N*benchBatch)/b.Elapsed().Seconds(), "snapshots/s")
}

// BenchmarkLogProbMatrixStream scores 10^5 snapshots of 256 sites (default
// widths) at 4 λ in one call and reports the peak heap in use during the
// call beyond the n·K output ("extra-peak-MB"): scoring streams in blocks
// of blockRows snapshots, so it stays at a few MB however large n is.
func BenchmarkLogProbMatrixStream(b *testing.B) {
	cfg := DefaultConfig(256, 2, 1, []float64{1}, []float64{4})
	m, err := New(cfg, 1)
	if err != nil {
		b.Fatal(err)
	}
	const n, K = 100000, 4
	xs, _ := randomBatch(cfg, n, 5)
	ls := lambdas(K)
	for b.Loop() {
		peak, err := peakHeapDuring(func() error {
			_, err := m.LogProbMatrix(xs, n, ls, 0)
			return err
		})
		if err != nil {
			b.Fatal(err)
		}
		b.ReportMetric(float64(peak-8*n*K)/1e6, "extra-peak-MB")
	}
	b.ReportMetric(float64(b.N*n*K)/b.Elapsed().Seconds(), "snapshot·λ/s")
}

// BenchmarkLogProbMatrix64Float32 is BenchmarkLogProbMatrix64 with
// Precision float32.
func BenchmarkLogProbMatrix64Float32(b *testing.B) {
	m := benchModel(b)
	m.Cfg.Precision = PrecisionFloat32
	benchLogProbMatrix64(b, m)
}

// BenchmarkLogProbFloat32 is BenchmarkLogProb with Precision float32.
func BenchmarkLogProbFloat32(b *testing.B) {
	m := benchModel(b)
	m.Cfg.Precision = PrecisionFloat32
	benchLogProb(b, m)
}

// BenchmarkActivation compares the cost of the activations on the benchmark
// shape (N = 256, H = 512, batch 256): one training step (LossGrad) and one
// scoring call (LogProb) each. Compare the sub-benchmarks of one run.
func BenchmarkActivation(b *testing.B) {
	for _, act := range Activations {
		cfg := DefaultConfig(256, 2, 1, []float64{1}, []float64{4})
		cfg.Hidden = []int{512, 512}
		cfg.Activation = act
		m, err := New(cfg, 1)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(string(act)+"/LossGrad", func(b *testing.B) { benchLossGrad(b, m) })
		b.Run(string(act)+"/LogProb", func(b *testing.B) { benchLogProb(b, m) })
	}
}

// BenchmarkFiLM compares the default softplus model with and without FiLM
// conditioning (the scale heads cost one more conditioning product per layer,
// and the scale and activation run as their own pass, filmLayer).
func BenchmarkFiLM(b *testing.B) {
	for _, film := range []bool{false, true} {
		cfg := DefaultConfig(256, 2, 1, []float64{1}, []float64{4})
		cfg.Hidden = []int{256, 256}
		cfg.FiLM = film
		m, err := New(cfg, 1)
		if err != nil {
			b.Fatal(err)
		}
		name := fmt.Sprintf("film=%v", film)
		b.Run(name+"/LossGrad", func(b *testing.B) { benchLossGrad(b, m) })
		b.Run(name+"/LogProb", func(b *testing.B) { benchLogProb(b, m) })
	}
}

// BenchmarkGroupedHeads measures a float32 training step of the benchmark
// shape with FiLM conditioning when the batch's λ come from a grid of 21
// points (the conditioning heads then run once per distinct λ, rowGroups)
// against one λ per snapshot. Compare the sub-benchmarks of one run.
func BenchmarkGroupedHeads(b *testing.B) {
	m := benchModel(b)
	m.Cfg.FiLM, m.Cfg.Precision = true, PrecisionFloat32
	m, err := New(m.Cfg, 1)
	if err != nil {
		b.Fatal(err)
	}
	for _, grid := range []int{0, 21} {
		b.Run(fmt.Sprintf("grid=%d", grid), func(b *testing.B) {
			g, err := NewGraph(m, benchBatch)
			if err != nil {
				b.Fatal(err)
			}
			xs, ps := benchData(m, benchBatch)
			if grid > 0 {
				for i := range ps {
					ps[i] = 1 + 3*float64(i%grid)/float64(grid-1)
				}
			}
			grads := zeroGrads(m)
			for b.Loop() {
				if _, err := g.LossGrad(xs, ps, benchBatch, grads); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(b.N*benchBatch)/b.Elapsed().Seconds(), "snapshots/s")
		})
	}
}

// BenchmarkPrepareMasked32 rounds W⊙M to float32 for the direct connection
// of a 64×64 lattice (4096 sites) with train's default window there (8),
// as every training step does: "rowbands" is masked32 (band of rows by
// band of rows), "blocks" walks each column block down its rows, the order
// it replaced. The ratio of the two is the figure bench/RESULTS.md quotes.
func BenchmarkPrepareMasked32(b *testing.B) {
	cfg := Config{Direct: true, DirectWindow: 8, Lattice: []int{64, 64}}
	n := 4096
	mask := make([]float64, n*n)
	for j := range n {
		for k := j + 1; k < n; k++ {
			if cfg.nearOnLattice(j, k) {
				mask[j*n+k] = 1
			}
		}
	}
	t := newTiling(mask, n, n)
	w := make([]float64, n*n)
	for i := range w {
		w[i] = float64(i%7) - 3
	}
	dst := make([]float32, n*n)
	b.Run("rowbands", func(b *testing.B) {
		for b.Loop() {
			masked32(dst, w, t, t.cols)
		}
	})
	b.Run("blocks", func(b *testing.B) {
		for b.Loop() {
			for _, c := range t.cols {
				vMasked32(dst, w, t.mask, c, t.out)
			}
		}
	})
}
