package model

import (
	"math/rand/v2"
	"testing"
)

// TestGradientDescentLearns fits a fresh model by plain full-batch gradient
// descent through the gorgonia graph to samples drawn from a random
// "teacher" model at two parameter values, and checks that the fitted
// negative log-likelihood approaches the teacher's own on the same samples
// (the teacher's NLL is close to the best a model can do on its samples).
func TestGradientDescentLearns(t *testing.T) {
	cfg := smallConfig(4, 2, 1, func(c *Config) { c.Hidden = []int{16}; c.CondHidden = []int{8}; c.Direct = true })
	teacher := randomModel(t, cfg, 21, 1.2)
	const perPoint = 256
	lams := []float64{1, 3}
	xs := make([]uint8, 0, 2*perPoint*cfg.Sites)
	ps := make([]float64, 0, 2*perPoint)
	rng := rand.New(rand.NewPCG(22, 0))
	for _, l := range lams {
		buf := make([]uint8, perPoint*cfg.Sites)
		if err := teacher.Sample(buf, perPoint, []float64{l}, rng); err != nil {
			t.Fatal(err)
		}
		xs = append(xs, buf...)
		for i := 0; i < perPoint; i++ {
			ps = append(ps, l)
		}
	}
	n := 2 * perPoint
	target := teacher.meanNLL(xs, ps, n)
	student, err := New(cfg, 23)
	if err != nil {
		t.Fatal(err)
	}
	g, err := NewGraph(student, n)
	if err != nil {
		t.Fatal(err)
	}
	grads := zeroGrads(student)
	first := 0.0
	var loss float64
	for step := 0; step < 600; step++ {
		if loss, err = g.LossGrad(xs, ps, n, grads); err != nil {
			t.Fatal(err)
		}
		if step == 0 {
			first = loss
		}
		for i, w := range student.Weights {
			for k := range w.Data {
				w.Data[k] -= 0.3 * grads[i][k]
			}
		}
	}
	t.Logf("loss %.4f (start %.4f), teacher %.4f", loss, first, target)
	if loss > target+0.05 {
		t.Errorf("after 600 steps the loss is %.4f nats (start %.4f); the teacher's NLL on its samples is %.4f", loss, first, target)
	}
}
