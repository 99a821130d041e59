package model

import (
	"math"
	"testing"
)

// TestBatchGraphMatchesGraph checks that splitting a batch over 1, 2 and 3
// graphs with shared, jointly prepared weights gives the loss and gradient
// of one graph over the whole batch (to summation rounding), bit for bit
// with one thread, and that scale multiplies the gradient, on the second
// step of a BatchGraph.
func TestBatchGraphMatchesGraph(t *testing.T) {
	type tc struct {
		name string
		cfg  Config
		tol  float64 // relative, of the loss and of the gradient
	}
	var tests []tc
	for _, c := range cases() {
		tests = append(tests, tc{c.name, c.cfg, 1e-10})
	}
	big := DefaultConfig(100, 2, 1, []float64{1}, []float64{3})
	big.Hidden = []int{160, 96} // several column blocks per weight
	tests = append(tests, tc{"N100-f64", big, 1e-10})
	big32 := big
	big32.Precision = PrecisionFloat32
	// In float32 a chunk's weight gradient is summed in float32 over its
	// rows, so splitting the batch changes it by float32 rounding
	// (2^-24 ≈ 6e-8 times the number of rows, common practice).
	tests = append(tests, tc{"N100-f32", big32, 1e-5})
	sym32 := big32
	sym32.Symmetric = true
	tests = append(tests, tc{"N100-f32-sym", sym32, 1e-5})
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			m := randomModel(t, tc.cfg, 31, 0.3)
			for _, n := range []int{1, 7, 40} {
				xs, ps := randomBatch(tc.cfg, n, 32)
				// The same batch size as the one graph of a 1-thread
				// BatchGraph: OpenBLAS may round differently for other
				// matrix sizes.
				g, err := NewGraph(m, 40)
				if err != nil {
					t.Fatal(err)
				}
				want := zeroGrads(m)
				wl, err := g.LossGrad(xs, ps, n, want)
				if err != nil {
					t.Fatal(err)
				}
				for _, threads := range []int{1, 2, 3} {
					bg, err := NewBatchGraph(m, 40, threads)
					if err != nil {
						t.Fatal(err)
					}
					const scale = 0.25 // a power of two: scaling is exact
					got := zeroGrads(m)
					// A step on other data first: the second step reuses
					// the graphs' buffers (and the zeros written outside
					// the mask blocks).
					xo, po := randomBatch(tc.cfg, 40, 33)
					if _, err := bg.LossGrad(xo, po, 40, scale, got); err != nil {
						t.Fatal(err)
					}
					gl, err := bg.LossGrad(xs, ps, n, scale, got)
					if err != nil {
						t.Fatal(err)
					}
					if threads == 1 && gl != wl || !relClose(gl, wl, tc.tol) {
						t.Fatalf("n=%d threads=%d: loss %v, one graph gives %v", n, threads, gl, wl)
					}
					for i := range want {
						s := 0.0
						for _, v := range want[i] {
							s = math.Max(s, math.Abs(v))
						}
						for j, v := range want[i] {
							d := math.Abs(got[i][j] - scale*v)
							if threads == 1 && d != 0 || d > tc.tol*s {
								t.Fatalf("n=%d threads=%d: gradient %s[%d] = %v, one graph gives %v·%v", n, threads, m.Weights[i].Name, j, got[i][j], scale, v)
							}
						}
					}
				}
			}
		})
	}
}

// TestBatchGraphErrors checks the one-line errors of NewBatchGraph and of
// batches that do not fit.
func TestBatchGraphErrors(t *testing.T) {
	m := randomModel(t, smallConfig(10, 2, 1, nil), 1, 0.3)
	if _, err := NewBatchGraph(m, 8, 0); err == nil {
		t.Error("0 threads: no error")
	}
	if _, err := NewBatchGraph(m, 0, 2); err == nil {
		t.Error("batch 0: no error")
	}
	bg, err := NewBatchGraph(m, 8, 2)
	if err != nil {
		t.Fatal(err)
	}
	xs, ps := randomBatch(m.Cfg, 9, 2)
	if _, err := bg.LossGrad(xs, ps, 9, 1, zeroGrads(m)); err == nil {
		t.Error("9 snapshots in a batch of 8: no error")
	}
	if _, err := bg.LossGrad(xs[:8*10], ps[:8], 8, 1, zeroGrads(m)[1:]); err == nil {
		t.Error("too few gradient slices: no error")
	}
}
