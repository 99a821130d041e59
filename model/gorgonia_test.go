package model

import (
	"math"
	"testing"

	G "gorgonia.org/gorgonia"
	"gorgonia.org/tensor"
)

// tinyGraph builds z = x·W + b and loss = Σ z² with x = [[1,2],[3,4]],
// W = [[0.5,−1],[2,0.25]] and b = [0.1,−0.2] added to every row.
func tinyGraph() (g *G.ExprGraph, w, b, z, loss *G.Node) {
	g = G.NewGraph()
	mat := func(name string, d []float64) *G.Node {
		return G.NewMatrix(g, tensor.Float64, G.WithShape(2, 2), G.WithName(name), G.WithValue(tensor.New(tensor.WithShape(2, 2), tensor.WithBacking(d))))
	}
	x := mat("x", []float64{1, 2, 3, 4})
	w = mat("w", []float64{0.5, -1, 2, 0.25})
	b = G.NewVector(g, tensor.Float64, G.WithShape(2), G.WithName("b"), G.WithValue(tensor.New(tensor.WithShape(2), tensor.WithBacking([]float64{0.1, -0.2}))))
	z = G.Must(G.BroadcastAdd(G.Must(G.Mul(x, w)), b, nil, []byte{0}))
	loss = G.Must(G.Sum(G.Must(G.Square(z))))
	return
}

// TestGorgoniaTinyGraph checks a tiny gorgonia graph's value and gradient
// against the hand computation, so that a change in gorgonia's matrix
// product, broadcasting or autodiff shows here first.
func TestGorgoniaTinyGraph(t *testing.T) {
	// By hand: x·W = [[1·0.5+2·2, 1·(−1)+2·0.25], [3·0.5+4·2, 3·(−1)+4·0.25]]
	// = [[4.5, −0.5], [9.5, −2]], so z = [[4.6, −0.7], [9.6, −2.2]].
	zWant := []float64{4.6, -0.7, 9.6, -2.2}
	lossWant := 4.6*4.6 + 0.7*0.7 + 9.6*9.6 + 2.2*2.2
	// dL/dz = 2z; dL/dW = xᵀ·2z; dL/db = column sums of 2z.
	gw := []float64{
		2 * (1*4.6 + 3*9.6), 2 * (1*-0.7 + 3*-2.2),
		2 * (2*4.6 + 4*9.6), 2 * (2*-0.7 + 4*-2.2),
	}
	gb := []float64{2 * (4.6 + 9.6), 2 * (-0.7 - 2.2)}
	check := func(name string, got, want []float64) {
		t.Helper()
		for i := range want {
			if math.Abs(got[i]-want[i]) > 1e-12 {
				t.Errorf("%s[%d] = %v, want %v", name, i, got[i], want[i])
			}
		}
	}

	// Forward only: the value of z.
	g, _, _, z, _ := tinyGraph()
	vm := G.NewTapeMachine(g)
	if err := vm.RunAll(); err != nil {
		t.Fatal(err)
	}
	check("z", z.Value().Data().([]float64), zWant)
	vm.Close()

	// With the symbolic gradient. Intermediate values such as z are not
	// read here: gorgonia's backward pass may reuse their memory.
	g, w, b, _, loss := tinyGraph()
	grads, err := G.Grad(loss, w, b)
	if err != nil {
		t.Fatal(err)
	}
	vm = G.NewTapeMachine(g)
	defer vm.Close()
	for run := 0; run < 2; run++ { // twice: Reset must allow a rerun
		vm.Reset()
		if err := vm.RunAll(); err != nil {
			t.Fatal(err)
		}
		lv, err := scalarOf(loss)
		if err != nil {
			t.Fatal(err)
		}
		check("loss", []float64{lv}, []float64{lossWant})
		check("dW", grads[0].Value().Data().([]float64), gw)
		check("db", grads[1].Value().Data().([]float64), gb)
	}
}
