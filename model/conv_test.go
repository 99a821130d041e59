package model

import (
	"math"
	"math/rand/v2"
	"testing"
)

// convTestModel returns a convolutional model on an h×w lattice with all
// weights random (the FiLM scale heads too, which New leaves at zero).
func convTestModel(t *testing.T, h, w, q, window int, sym bool, seed uint64) *Model {
	t.Helper()
	cfg := DefaultConfig(h*w, q, 1, []float64{1}, []float64{3})
	cfg.Hidden = []int{5, 4}
	cfg.CondHidden = []int{6}
	cfg.Conv = &ConvConfig{Height: h, Width: w, Window: window}
	cfg.Symmetric = sym
	m, err := New(cfg, seed)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(seed, 7))
	for _, tn := range m.Weights {
		for k := range tn.Data {
			tn.Data[k] = 0.4 * rng.NormFloat64()
		}
	}
	return m
}

// TestConvNormalised checks the autoregressive masks: with random weights
// the probabilities of all q^N snapshots sum to 1 (a leak from a later
// site would break it), for both windows, periodic wrap, q = 2 and 3,
// and the flip-symmetric model.
func TestConvNormalised(t *testing.T) {
	for _, tc := range []struct {
		name      string
		h, w, q   int
		window    int
		symmetric bool
	}{
		{"3x3 q2 k1", 3, 3, 2, 1, false},
		{"3x4 q2 k2", 3, 4, 2, 2, false},
		{"3x3 q2 k2 sym", 3, 3, 2, 2, true},
		{"2x3 q3 k1", 2, 3, 3, 1, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m := convTestModel(t, tc.h, tc.w, tc.q, tc.window, tc.symmetric, 3)
			n := tc.h * tc.w
			xs := allStates(n, tc.q)
			lp := make([]float64, len(xs)/n)
			for _, lam := range []float64{1, 2.2, 3.5} {
				if err := m.LogProb(lp, xs, []float64{lam}); err != nil {
					t.Fatal(err)
				}
				s := 0.0
				for _, v := range lp {
					s += math.Exp(v)
				}
				if math.Abs(s-1) > 1e-10 {
					t.Errorf("λ=%v: Σ p = %.15f, want 1", lam, s)
				}
			}
		})
	}
}

// TestConvPeriodic checks the wrap: with window 1 the first site of row
// 1 reads the last site of row 0 (its left neighbour across the periodic
// boundary) and the first site of row 0 reads nothing.
func TestConvPeriodic(t *testing.T) {
	cc := &ConvConfig{Height: 3, Width: 4, Window: 1}
	offs := convOffsets(1, false)
	idx := convIndex(cc, offs)
	P := len(offs)
	found := false
	for p, o := range offs {
		if o == [2]int{-1, -1} && idx[4*P+p] == 3 {
			found = true
		}
	}
	if !found {
		t.Errorf("site (1,0) does not read site (0,3) through the periodic boundary: %v", idx[4*P:5*P])
	}
	for p := 0; p < P; p++ {
		if idx[p] != -1 {
			t.Errorf("site 0 reads site %d, want nothing", idx[p])
		}
	}
}

// TestConvParamsIndependentOfL checks that the weight count does not grow
// with the lattice.
func TestConvParamsIndependentOfL(t *testing.T) {
	var counts []int
	for _, l := range []int{4, 8, 32} {
		cfg := DefaultConfig(l*l, 2, 1, []float64{1}, []float64{3})
		cfg.Conv = &ConvConfig{Height: l, Width: l, Window: 3}
		cfg.Hidden = []int{16, 16}
		m, err := New(cfg, 1)
		if err != nil {
			t.Fatal(err)
		}
		counts = append(counts, m.NumParams())
	}
	if counts[0] != counts[1] || counts[1] != counts[2] {
		t.Errorf("parameter counts %v depend on L", counts)
	}
}

// TestConvGradient compares LossGrad with central finite differences of
// the scoring kernel's mean negative log-likelihood, for the plain and the
// flip-symmetric model, with one and two threads.
func TestConvGradient(t *testing.T) {
	for _, sym := range []bool{false, true} {
		for _, threads := range []int{1, 2} {
			m := convTestModel(t, 3, 3, 2, 1, sym, 5)
			rng := rand.New(rand.NewPCG(9, 9))
			n := 5
			xs := make([]uint8, n*9)
			for i := range xs {
				xs[i] = uint8(rng.IntN(2))
			}
			ps := []float64{1.2, 1.2, 2.5, 2.9, 1.7}
			bg, err := NewBatchGraph(m, n, threads)
			if err != nil {
				t.Fatal(err)
			}
			grads := make([][]float64, len(m.Weights))
			for i, w := range m.Weights {
				grads[i] = make([]float64, len(w.Data))
			}
			loss, err := bg.LossGrad(xs, ps, n, 1, grads)
			if err != nil {
				t.Fatal(err)
			}
			nll := func() float64 {
				s := 0.0
				lp := make([]float64, 1)
				for i := 0; i < n; i++ {
					if err := m.LogProb(lp, xs[i*9:(i+1)*9], ps[i:i+1]); err != nil {
						t.Fatal(err)
					}
					s -= lp[0]
				}
				return s / float64(n)
			}
			if got := nll(); math.Abs(got-loss) > 1e-10 {
				t.Fatalf("sym=%v: loss %v, scoring kernel %v", sym, loss, got)
			}
			const h = 1e-6
			for i, w := range m.Weights {
				for k := 0; k < len(w.Data); k += 1 + len(w.Data)/7 {
					old := w.Data[k]
					w.Data[k] = old + h
					up := nll()
					w.Data[k] = old - h
					dn := nll()
					w.Data[k] = old
					fd := (up - dn) / (2 * h)
					if math.Abs(fd-grads[i][k]) > 1e-6*(1+math.Abs(fd)) {
						t.Errorf("sym=%v threads=%d: %s[%d]: gradient %v, finite difference %v", sym, threads, w.Name, k, grads[i][k], fd)
					}
				}
			}
		}
	}
}

// TestConvSample checks ancestral sampling against the model's own
// probabilities on a 2×2 lattice: the frequencies of the 16 snapshots in
// 40,000 draws pass a χ² test (15 degrees of freedom; the 0.999 quantile is
// 37.7, from tables — common practice).
func TestConvSample(t *testing.T) {
	for _, sym := range []bool{false, true} {
		m := convTestModel(t, 2, 2, 2, 1, sym, 11)
		xs := allStates(4, 2)
		lp := make([]float64, 16)
		lam := []float64{2}
		if err := m.LogProb(lp, xs, lam); err != nil {
			t.Fatal(err)
		}
		const n = 40000
		dst := make([]uint8, n*4)
		if err := m.Sample(dst, n, lam, rand.New(rand.NewPCG(1, 2))); err != nil {
			t.Fatal(err)
		}
		cnt := make([]float64, 16)
		for i := 0; i < n; i++ {
			k := 0
			for s := 0; s < 4; s++ {
				k = 2*k + int(dst[i*4+s])
			}
			cnt[k]++
		}
		chi := 0.0
		for k := range cnt {
			e := n * math.Exp(lp[k])
			chi += (cnt[k] - e) * (cnt[k] - e) / e
		}
		if chi > 37.7 {
			t.Errorf("sym=%v: χ² = %.1f over 15 degrees of freedom", sym, chi)
		}
	}
}

// TestConvMatrixMatchesLogProb checks LogProbMatrix against LogProb at
// every λ, and that the thread count changes nothing.
func TestConvMatrixMatchesLogProb(t *testing.T) {
	m := convTestModel(t, 4, 4, 2, 2, false, 13)
	rng := rand.New(rand.NewPCG(4, 4))
	n := 700
	xs := make([]uint8, n*16)
	for i := range xs {
		xs[i] = uint8(rng.IntN(2))
	}
	lams := [][]float64{{1}, {2.1}, {2.9}}
	a, err := m.LogProbMatrix(xs, n, lams, 1)
	if err != nil {
		t.Fatal(err)
	}
	b, err := m.LogProbMatrix(xs, n, lams, 3)
	if err != nil {
		t.Fatal(err)
	}
	lp := make([]float64, n)
	for k, l := range lams {
		if err := m.LogProb(lp, xs, l); err != nil {
			t.Fatal(err)
		}
		for i := range lp {
			if a[i*3+k] != lp[i] || b[i*3+k] != lp[i] {
				t.Fatalf("row %d λ %v: matrix %v / %v, LogProb %v", i, l, a[i*3+k], b[i*3+k], lp[i])
			}
		}
	}
}

// TestConvFromWeights checks that a convolutional model survives the
// round trip through its weights and rejects a bad lattice.
func TestConvFromWeights(t *testing.T) {
	m := convTestModel(t, 3, 3, 2, 2, false, 17)
	m2, err := FromWeights(m.Cfg, m.Weights)
	if err != nil {
		t.Fatal(err)
	}
	xs := allStates(9, 2)[:9*20]
	a, b := make([]float64, 20), make([]float64, 20)
	_ = m.LogProb(a, xs, []float64{2})
	_ = m2.LogProb(b, xs, []float64{2})
	for i := range a {
		if a[i] != b[i] {
			t.Fatalf("row %d: %v after the round trip, %v before", i, b[i], a[i])
		}
	}
	bad := m.Cfg
	bad.Conv = &ConvConfig{Height: 2, Width: 4, Window: 1}
	if err := bad.Validate(); err == nil {
		t.Error("a 2×4 lattice for 9 sites was accepted")
	}
	bad.Conv = &ConvConfig{Height: 3, Width: 3, Window: 1}
	bad.Order = SnakeOrder(3, 3)
	if err := bad.Validate(); err == nil {
		t.Error("a snake order was accepted for a conv model")
	}
}
