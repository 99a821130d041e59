package model

import (
	"math"
	"testing"

	G "gorgonia.org/gorgonia"
	"gorgonia.org/tensor"
)

// TestGorgoniaTinyGraph builds z = x·W + b, loss = Σ z², and checks value
// and gradient against the hand computation, so that a change in gorgonia's
// matrix product, broadcasting or autodiff shows here first.
func TestGorgoniaTinyGraph(t *testing.T) {
	g := G.NewGraph()
	xd := []float64{1, 2, 3, 4}       // x is 2×2
	wd := []float64{0.5, -1, 2, 0.25} // W is 2×2
	bd := []float64{0.1, -0.2}        // b is a 2-vector added to every row
	x := G.NewMatrix(g, tensor.Float64, G.WithShape(2, 2), G.WithName("x"), G.WithValue(tensor.New(tensor.WithShape(2, 2), tensor.WithBacking(xd))))
	w := G.NewMatrix(g, tensor.Float64, G.WithShape(2, 2), G.WithName("w"), G.WithValue(tensor.New(tensor.WithShape(2, 2), tensor.WithBacking(wd))))
	b := G.NewVector(g, tensor.Float64, G.WithShape(2), G.WithName("b"), G.WithValue(tensor.New(tensor.WithShape(2), tensor.WithBacking(bd))))
	z := G.Must(G.BroadcastAdd(G.Must(G.Mul(x, w)), b, nil, []byte{0}))
	loss := G.Must(G.Sum(G.Must(G.Square(z))))
	grads, err := G.Grad(loss, w, b)
	if err != nil {
		t.Fatal(err)
	}
	vm := G.NewTapeMachine(g)
	defer vm.Close()
	// By hand: x·W = [[1·0.5+2·2, 1·(−1)+2·0.25], [3·0.5+4·2, 3·(−1)+4·0.25]]
	// = [[4.5, −0.5], [9.5, −2]]; z = [[4.6, −0.7], [9.6, −2.2]].
	zWant := []float64{4.6, -0.7, 9.6, -2.2}
	lossWant := 4.6*4.6 + 0.7*0.7 + 9.6*9.6 + 2.2*2.2
	// dL/dz = 2z; dL/dW = xᵀ·2z; dL/db = column sums of 2z.
	gw := []float64{
		2 * (1*4.6 + 3*9.6), 2 * (1*-0.7 + 3*-2.2),
		2 * (2*4.6 + 4*9.6), 2 * (2*-0.7 + 4*-2.2),
	}
	gb := []float64{2 * (4.6 + 9.6), 2 * (-0.7 - 2.2)}
	for run := 0; run < 2; run++ { // twice: Reset must allow a rerun
		vm.Reset()
		if err := vm.RunAll(); err != nil {
			t.Fatal(err)
		}
		check := func(name string, got, want []float64) {
			t.Helper()
			for i := range want {
				if math.Abs(got[i]-want[i]) > 1e-12 {
					t.Errorf("run %d: %s[%d] = %v, want %v", run, name, i, got[i], want[i])
				}
			}
		}
		// z itself is not checked after the run: gorgonia's backward pass
		// may reuse an intermediate node's memory (here z holds 2z
		// afterwards), so only the loss and the gradients are read.
		_ = zWant
		lv, _ := scalarOf(loss)
		check("loss", []float64{lv}, []float64{lossWant})
		check("dW", grads[0].Value().Data().([]float64), gw)
		check("db", grads[1].Value().Data().([]float64), gb)
	}
}
