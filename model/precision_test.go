package model

import (
	"math"
	"testing"
)

// TestFloat32AgreesWithFloat64 scores the same snapshots with the same
// weights in both precisions and checks that log p agrees to 1e-5 relative
// (per site and in total; float32 rounding is about 6e-8, and the products
// sum a few hundred terms), and that the training loss and gradient agree
// too. The tolerance is the float32 unit roundoff 2^-24 ≈ 6e-8 times the
// length of the sums (common practice: rounding error of a dot product grows
// at most linearly with its length).
func TestFloat32AgreesWithFloat64(t *testing.T) {
	tests := []struct {
		name string
		mod  func(c *Config)
	}{
		{"q2-relu", func(c *Config) { c.Activation = "relu" }},
		{"q2-tanh-sym", func(c *Config) { c.Activation = "tanh"; c.Symmetric = true }},
		{"q2-softplus", func(c *Config) { c.Activation = "softplus" }},
		{"q3-snake", func(c *Config) { c.Alphabet = 3; c.Order = SnakeOrder(10, 10) }},
		{"q2-softplus-film", func(c *Config) { c.Activation = "softplus"; c.FiLM = true }},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			cfg := DefaultConfig(100, 2, 1, []float64{1}, []float64{3})
			cfg.Hidden = []int{160, 96}
			cfg.FiLM = false // the additive model unless a case turns FiLM on
			tc.mod(&cfg)
			m64 := randomModel(t, cfg, 21, 0.3)
			cfg32 := cfg
			cfg32.Precision = PrecisionFloat32
			m32, err := FromWeights(cfg32, m64.Weights)
			if err != nil {
				t.Fatal(err)
			}
			const n = 150
			xs, ps := randomBatch(cfg, n, 22)
			ls := [][]float64{{1}, {1.7}, {2.9}}
			a, err := m64.LogProbMatrix(xs, n, ls, 2)
			if err != nil {
				t.Fatal(err)
			}
			b, err := m32.LogProbMatrix(xs, n, ls, 2)
			if err != nil {
				t.Fatal(err)
			}
			worst := 0.0
			for i := range a {
				rel := math.Abs(a[i]-b[i]) / math.Abs(a[i])
				worst = math.Max(worst, rel)
				if rel > 1e-5 {
					t.Errorf("snapshot %d λ %d: float32 log p %v, float64 %v (relative %.2g)", i/len(ls), i%len(ls), b[i], a[i], rel)
				}
				if d := math.Abs(a[i]-b[i]) / float64(cfg.Sites); d > 1e-5 {
					t.Errorf("snapshot %d λ %d: float32 and float64 differ by %.2g nats per site", i/len(ls), i%len(ls), d)
				}
			}
			if worst == 0 {
				t.Error("float32 and float64 scores are identical: the float32 path was not taken")
			}
			t.Logf("largest relative difference of log p: %.2g", worst)

			g64, err := NewGraph(m64, n)
			if err != nil {
				t.Fatal(err)
			}
			g32, err := NewGraph(m32, n)
			if err != nil {
				t.Fatal(err)
			}
			d64, d32 := zeroGrads(m64), zeroGrads(m32)
			l64, err := g64.LossGrad(xs, ps, n, d64)
			if err != nil {
				t.Fatal(err)
			}
			l32, err := g32.LossGrad(xs, ps, n, d32)
			if err != nil {
				t.Fatal(err)
			}
			if rel := math.Abs(l32-l64) / math.Abs(l64); rel > 1e-5 {
				t.Errorf("loss: float32 %v, float64 %v (relative %.2g)", l32, l64, rel)
			}
			num, den := 0.0, 0.0
			for i := range d64 {
				for k := range d64[i] {
					num += (d32[i][k] - d64[i][k]) * (d32[i][k] - d64[i][k])
					den += d64[i][k] * d64[i][k]
				}
			}
			if rel := math.Sqrt(num / den); rel > 1e-4 {
				t.Errorf("gradient: float32 differs from float64 by %.2g relative (norm)", rel)
			} else {
				t.Logf("gradient relative difference (norm): %.2g", rel)
			}
		})
	}
}

// TestPrecisionValidate checks that an unknown precision is refused.
func TestPrecisionValidate(t *testing.T) {
	for _, tc := range []struct {
		p  string
		ok bool
	}{{"", true}, {"float64", true}, {"float32", true}, {"float16", false}, {"double", false}} {
		c := DefaultConfig(4, 2, 1, []float64{0}, []float64{1})
		c.Precision = tc.p
		if err := c.Validate(); (err == nil) != tc.ok {
			t.Errorf("precision %q: Validate error %v, want ok=%v", tc.p, err, tc.ok)
		}
	}
}

// TestFloat32Derivative checks what float32 products do to a central
// difference in λ with a small step (the indicators differentiate log p in
// λ this way, with h = 1/100 of the grid spacing): the rounding of the two
// shifted scores does not cancel, so the derivative picks up an error of
// about (relative rounding · |log p|)/h. With h = 1e-3 of the parameter range
// it must stay below 1e-3 of the spread of the derivative over snapshots.
func TestFloat32Derivative(t *testing.T) {
	cfg := DefaultConfig(256, 2, 1, []float64{1}, []float64{3})
	cfg.Hidden = []int{256, 256}
	m64 := randomModel(t, cfg, 31, 0.3)
	cfg32 := cfg
	cfg32.Precision = PrecisionFloat32
	m32, err := FromWeights(cfg32, m64.Weights)
	if err != nil {
		t.Fatal(err)
	}
	const n, lam, h = 200, 2.0, 2e-3
	xs, _ := randomBatch(cfg, n, 32)
	ls := [][]float64{{lam + h}, {lam - h}}
	a, err := m64.LogProbMatrix(xs, n, ls, 2)
	if err != nil {
		t.Fatal(err)
	}
	b, err := m32.LogProbMatrix(xs, n, ls, 2)
	if err != nil {
		t.Fatal(err)
	}
	var mean, sq, diff float64
	d64 := make([]float64, n)
	for i := range d64 {
		d64[i] = (a[2*i] - a[2*i+1]) / (2 * h)
		mean += d64[i] / n
	}
	for i := range d64 {
		d32 := (b[2*i] - b[2*i+1]) / (2 * h)
		sq += (d64[i] - mean) * (d64[i] - mean) / n
		diff = math.Max(diff, math.Abs(d32-d64[i]))
	}
	spread := math.Sqrt(sq)
	if diff > 1e-3*spread {
		t.Errorf("∂λ log p: float32 differs from float64 by up to %.3g, spread over snapshots %.3g", diff, spread)
	}
	t.Logf("∂λ log p by central difference (h=%g): largest float32 error %.3g, spread over snapshots %.3g", h, diff, spread)
}
