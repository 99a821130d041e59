package model

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

func TestOrders(t *testing.T) {
	tests := []struct {
		name string
		got  []int
		want []int
	}{
		{"rowmajor", RowMajorOrder(4), []int{0, 1, 2, 3}},
		{"snake3x3", SnakeOrder(3, 3), []int{0, 1, 2, 5, 4, 3, 6, 7, 8}},
		{"snake2x4", SnakeOrder(2, 4), []int{0, 1, 2, 3, 7, 6, 5, 4}},
	}
	for _, tc := range tests {
		if !equalInts(tc.got, tc.want) {
			t.Errorf("%s: %v, want %v", tc.name, tc.got, tc.want)
		}
	}
}

func TestValidate(t *testing.T) {
	good := DefaultConfig(4, 2, 1, []float64{0}, []float64{1})
	tests := []struct {
		name string
		mod  func(*Config)
		want string // substring of the error; "" for valid
	}{
		{"default", func(*Config) {}, ""},
		{"sites", func(c *Config) { c.Sites = 0 }, "sites"},
		{"alphabet", func(c *Config) { c.Alphabet = 1 }, "alphabet"},
		{"hidden", func(c *Config) { c.Hidden = nil }, "hidden"},
		{"hiddenwidth", func(c *Config) { c.Hidden = []int{4, 0} }, "hidden[1]"},
		{"cond", func(c *Config) { c.CondHidden = []int{-1} }, "cond_hidden"},
		{"activation", func(c *Config) { c.Activation = "swish" }, "activation"},
		{"cond activation", func(c *Config) { c.CondActivation = "swish" }, "cond_activation"},
		{"too large", func(c *Config) { c.Hidden = []int{1 << 30, 1 << 30} }, "at most"},
		{"orderlen", func(c *Config) { c.Order = []int{0, 1} }, "order"},
		{"orderperm", func(c *Config) { c.Order = []int{0, 1, 1, 3} }, "permutation"},
		{"symmetric", func(c *Config) { c.Alphabet = 3; c.Symmetric = true }, "symmetric"},
		{"range", func(c *Config) { c.ParamHi = []float64{-1} }, "param_lo"},
		{"rangelen", func(c *Config) { c.ParamLo = nil }, "param_lo"},
		{"nan", func(c *Config) { c.ParamLo = []float64{math.NaN()} }, "finite"},
	}
	for _, tc := range tests {
		c := cloneConfig(good)
		tc.mod(&c)
		err := c.Validate()
		switch {
		case tc.want == "" && err != nil:
			t.Errorf("%s: unexpected error %v", tc.name, err)
		case tc.want != "" && (err == nil || !strings.Contains(err.Error(), tc.want)):
			t.Errorf("%s: error %v, want one mentioning %q", tc.name, err, tc.want)
		}
	}
}

// TestBadInputs checks that bad arguments give errors, never panics.
func TestBadInputs(t *testing.T) {
	cfg := smallConfig(3, 2, 1, nil)
	m := randomModel(t, cfg, 1, 0.5)
	g, err := NewGraph(m, 2)
	if err != nil {
		t.Fatal(err)
	}
	grads := zeroGrads(m)
	rng := rand.New(rand.NewPCG(1, 1))
	tests := []struct {
		name string
		run  func() error
	}{
		{"logprob length", func() error { return m.LogProb(make([]float64, 2), make([]uint8, 5), []float64{1}) }},
		{"logprob value", func() error { return m.LogProb(make([]float64, 1), []uint8{0, 2, 1}, []float64{1}) }},
		{"logprob λ dim", func() error { return m.LogProb(make([]float64, 1), []uint8{0, 1, 1}, []float64{1, 2}) }},
		{"logprob λ nan", func() error { return m.LogProb(make([]float64, 1), []uint8{0, 1, 1}, []float64{math.NaN()}) }},
		{"matrix n", func() error { _, err := m.LogProbMatrix(make([]uint8, 6), 3, [][]float64{{1}}, 1); return err }},
		{"matrix λ", func() error { _, err := m.LogProbMatrix(make([]uint8, 6), 2, [][]float64{{1}, {}}, 1); return err }},
		{"sample len", func() error { return m.Sample(make([]uint8, 5), 2, []float64{1}, rng) }},
		{"sample rng", func() error { return m.Sample(make([]uint8, 6), 2, []float64{1}, nil) }},
		{"batch too big", func() error { _, err := g.LossGrad(make([]uint8, 9), make([]float64, 3), 3, grads); return err }},
		{"batch empty", func() error { _, err := g.LossGrad(nil, nil, 0, grads); return err }},
		{"params len", func() error { _, err := g.LossGrad(make([]uint8, 6), make([]float64, 1), 2, grads); return err }},
		{"grads", func() error { _, err := g.LossGrad(make([]uint8, 6), make([]float64, 2), 2, grads[1:]); return err }},
		{"loss value", func() error { _, err := g.Loss([]uint8{0, 0, 7}, []float64{1}, 1); return err }},
		{"weights count", func() error { _, err := FromWeights(cfg, m.Weights[1:]); return err }},
		{"weights name", func() error {
			w := append([]Tensor(nil), m.Weights...)
			w[0].Name = "x"
			_, err := FromWeights(cfg, w)
			return err
		}},
		{"weights shape", func() error {
			w := append([]Tensor(nil), m.Weights...)
			w[0].Shape = []int{w[0].Shape[0] + 1, w[0].Shape[1]}
			_, err := FromWeights(cfg, w)
			return err
		}},
		{"weights nan", func() error {
			w := append([]Tensor(nil), m.Weights...)
			w[1].Data = append([]float64(nil), w[1].Data...)
			w[1].Data[0] = math.Inf(1)
			_, err := FromWeights(cfg, w)
			return err
		}},
		{"graph batch", func() error { _, err := NewGraph(m, 0); return err }},
		{"graph nil", func() error { _, err := NewGraph(nil, 4); return err }},
	}
	for _, tc := range tests {
		if err := tc.run(); err == nil {
			t.Errorf("%s: no error", tc.name)
		} else if strings.Contains(err.Error(), "\n") {
			t.Errorf("%s: error spans several lines: %q", tc.name, err)
		}
	}
}

// TestFromWeightsRoundTrip checks that a model rebuilt from its weights
// scores identically and has the same masks.
func TestFromWeightsRoundTrip(t *testing.T) {
	cfg := smallConfig(5, 3, 1, func(c *Config) { c.Direct = true })
	m := randomModel(t, cfg, 3, 0.5)
	m2, err := FromWeights(m.Cfg, m.Weights)
	if err != nil {
		t.Fatal(err)
	}
	xs, _ := randomBatch(cfg, 20, 4)
	a, b := make([]float64, 20), make([]float64, 20)
	_ = m.LogProb(a, xs, []float64{2})
	_ = m2.LogProb(b, xs, []float64{2})
	for i := range a {
		if a[i] != b[i] {
			t.Fatalf("snapshot %d: %v before, %v after FromWeights", i, a[i], b[i])
		}
	}
	mk, mk2 := m.Masks(), m2.Masks()
	if len(mk) != len(cfg.Hidden)+2 {
		t.Fatalf("%d masks, want %d", len(mk), len(cfg.Hidden)+2)
	}
	for i := range mk {
		if mk[i].Name != mk2[i].Name || !equalInts(mk[i].Shape, mk2[i].Shape) {
			t.Fatalf("mask %d differs", i)
		}
	}
	names, shapes, err := WeightNames(cfg)
	if err != nil || len(names) != len(m.Weights) {
		t.Fatalf("WeightNames: %v, %d names", err, len(names))
	}
	for i := range names {
		if names[i] != m.Weights[i].Name || !equalInts(shapes[i], m.Weights[i].Shape) {
			t.Errorf("weight %d: %s %v, WeightNames says %s %v", i, m.Weights[i].Name, m.Weights[i].Shape, names[i], shapes[i])
		}
	}
}
