package indicator

import (
	"context"
	"math"
	"testing"

	"tidemark/data/density"
	"tidemark/data/density/densitytest"
)

// matrixBernoulli adds LogProbMatrix (layout out[i·K+k], as the model
// documents) to the test source, to check the batched path.
type matrixBernoulli struct{ *densitytest.Logistic }

func (s matrixBernoulli) LogProbMatrix(xs []uint8, n int, ls [][]float64, threads int) ([]float64, error) {
	out := make([]float64, n*len(ls))
	col := make([]float64, n)
	for k, l := range ls {
		if err := s.LogProb(col, xs, l); err != nil {
			return nil, err
		}
		for i, v := range col {
			out[i*len(ls)+k] = v
		}
	}
	return out, nil
}

func TestMatrixSourceMatchesLogProb(t *testing.T) {
	src := &densitytest.Logistic{N: 6, D: 1, A: 2, C: 1}
	ds := bernoulliData(src, linspace(0, 2, 7), nil, 300, 2)
	for _, exact := range []bool{false, true} {
		cfg := Config{ExactSums: exact, Threads: 2, Seed: 4, ModelSamples: 200, Bootstrap: 5}
		a, err := Run(context.Background(), []density.Source{src}, ds, cfg)
		if err != nil {
			t.Fatal(err)
		}
		b, err := Run(context.Background(), []density.Source{matrixBernoulli{src}}, ds, cfg)
		if err != nil {
			t.Fatal(err)
		}
		for i, ca := range a.Curves {
			cb := b.Curves[i]
			for j := range ca.Val {
				if math.Abs(ca.Val[j]-cb.Val[j]) > 1e-9*math.Max(1, math.Abs(ca.Val[j])) || math.Abs(ca.Err[j]-cb.Err[j]) > 1e-9 {
					t.Errorf("exact=%v %s at %v: LogProb %g ± %g, LogProbMatrix %g ± %g", exact, ca.Name, ca.Pos[j], ca.Val[j], ca.Err[j], cb.Val[j], cb.Err[j])
				}
			}
		}
	}
}

func TestMatrixRejectsNaN(t *testing.T) {
	src := &densitytest.Logistic{N: 2, D: 1, A: 1, C: 0}
	// p(λ) is fine; a λ of NaN makes every log-probability NaN.
	_, err := ComputeMatrix(src, []uint8{0, 1}, 1, [][]float64{{math.NaN()}}, MatrixOptions{})
	if err == nil {
		t.Fatal("NaN log-probabilities accepted")
	}
}
