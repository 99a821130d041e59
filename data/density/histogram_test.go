package density_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/data/density/densitytest"
)

// TestHistogramConformance runs the contract's checks on a histogram of 2
// sites at its grid points, and checks that under its base weights 1/n_k the
// re-estimated histogram is the histogram itself.
func TestHistogramConformance(t *testing.T) {
	src := &densitytest.Logistic{N: 2, D: 1, A: 1, C: 1}
	pts := []float64{0, 1, 2}
	const per = 200
	ds, err := data.New(len(pts)*per, 2, []string{"T"}, 2, nil, map[string]any{"generator": "test"})
	if err != nil {
		t.Fatal(err)
	}
	for k, p := range pts {
		if err := src.Sample(ds.States[k*per*2:(k+1)*per*2], per, []float64{p}, rand.New(rand.NewPCG(1, uint64(k)))); err != nil {
			t.Fatal(err)
		}
		for i := 0; i < per; i++ {
			ds.Params[k*per+i] = p
		}
	}
	h, err := density.NewHistogram(ds)
	if err != nil {
		t.Fatal(err)
	}
	densitytest.Conformance(t, h, [][]float64{{0}, {1}, {2}})
	if !density.IsGridOnly(h) {
		t.Error("the histogram does not declare itself grid-only")
	}
	g := data.NewGrid(ds)
	w := make([][]float64, g.K())
	for k, idx := range g.Index {
		w[k] = make([]float64, len(idx))
		for i := range idx {
			w[k][i] = 1 / float64(len(idx))
		}
	}
	L := h.Resampled(ds.States, ds.M, g.Index)(w)
	lp := make([]float64, ds.M)
	for k, p := range g.Points {
		if err := h.LogProb(lp, ds.States, p); err != nil {
			t.Fatal(err)
		}
		for m := range lp {
			if got := L[m*g.K()+k]; math.Abs(got-lp[m]) > 1e-12 {
				t.Fatalf("row %d at %v: re-estimated %v, histogram %v", m, p, got, lp[m])
			}
		}
	}
}

// TestAllStates checks the order of the listed states on q = 3, N = 2
// (base-3 numbers, first site most significant).
func TestAllStates(t *testing.T) {
	got := density.AllStates(3, 2, 9)
	want := []uint8{0, 0, 0, 1, 0, 2, 1, 0, 1, 1, 1, 2, 2, 0, 2, 1, 2, 2}
	if string(got) != string(want) {
		t.Errorf("AllStates(3, 2, 9) = %v, want %v", got, want)
	}
}
