package model

import (
	"fmt"
	"hash"

	"github.com/chewxy/hm"
	G "gorgonia.org/gorgonia"
	"gorgonia.org/tensor"
)

// bernoulli is the state of the gorgonia operations of the q = 2
// log-likelihood: lp_i = Σ_s x_is·z_is − log(1+e^z_is) of inputs x (0/1)
// and logits z [rows, N], and its gradient dz_is = g_i·(x_is − σ(z_is)).
// One hand-written operation replaces the five elementwise gorgonia
// operations (and their gradients) of the same formula and reuses its
// buffers; the sums are float64.
type bernoulli struct {
	name   string
	n      int // sites
	lp, dz []float64
	e      []float64 // e^−|z| of the forward pass, reused by the gradient
	t      []float64 // scratch of one row
}

// bernoulliOp is kind 0 (lp from x, z) or kind 1 (dz from x, z, g).
type bernoulliOp struct {
	b    *bernoulli
	kind int
}

var vecF64 = G.TensorType{Dims: 1, Of: tensor.Float64}

func (op bernoulliOp) Arity() int { return 2 + op.kind }

func (op bernoulliOp) Type() hm.Type {
	if op.kind == 0 {
		return hm.NewFnType(matF64, matF64, vecF64)
	}
	return hm.NewFnType(matF64, matF64, vecF64, matF64)
}

func (op bernoulliOp) InferShape(in ...G.DimSizer) (tensor.Shape, error) {
	s0, err := matrixInput(op, in)
	if err != nil {
		return nil, err
	}
	if op.kind == 0 {
		return tensor.Shape{s0[0]}, nil
	}
	return tensor.Shape{s0[0], op.b.n}, nil
}

func (op bernoulliOp) Do(inputs ...G.Value) (G.Value, error) {
	if len(inputs) != op.Arity() {
		return nil, fmt.Errorf("model: %v needs %d inputs, found %d", op, op.Arity(), len(inputs))
	}
	x, sx, err := f64Of(inputs[0])
	if err != nil {
		return nil, err
	}
	z, _, err := f64Of(inputs[1])
	if err != nil {
		return nil, err
	}
	rows, n := sx[0], op.b.n
	if op.kind == 0 {
		if cap(op.b.lp) < rows {
			op.b.lp = make([]float64, rows)
		}
		if cap(op.b.e) < rows*n {
			op.b.e = make([]float64, rows*n)
		}
		if len(op.b.t) < n {
			op.b.t = make([]float64, n)
		}
		lp := op.b.lp[:rows]
		vBernFwd(lp, op.b.e[:rows*n], x[:rows*n], z[:rows*n], rows, n, op.b.t)
		return tensor.New(tensor.WithShape(rows), tensor.WithBacking(lp)), nil
	}
	g, _, err := f64Of(inputs[2])
	if err != nil {
		return nil, err
	}
	if cap(op.b.dz) < rows*n {
		op.b.dz = make([]float64, rows*n)
	}
	dz := op.b.dz[:rows*n]
	// σ(z) from the e^−|z| of the forward pass of this step, which always
	// runs first (g depends on it).
	vBernBwd(dz, x[:rows*n], z[:rows*n], op.b.e[:rows*n], g[:rows], rows, n)
	return tensor.New(tensor.WithShape(rows, n), tensor.WithBacking(dz)), nil
}

func (op bernoulliOp) ReturnsPtr() bool     { return false }
func (op bernoulliOp) CallsExtern() bool    { return false }
func (op bernoulliOp) OverwritesInput() int { return -1 }

func (op bernoulliOp) WriteHash(h hash.Hash) { fmt.Fprint(h, op.String()) }

func (op bernoulliOp) Hashcode() uint32 { return opHash(op) }

func (op bernoulliOp) String() string { return fmt.Sprintf("bernoulli%d(%s)", op.kind, op.b.name) }

// DiffWRT says the log-likelihood is differentiated by the logits only.
func (op bernoulliOp) DiffWRT(int) []bool {
	if op.kind != 0 {
		return []bool{false, false, false}
	}
	return []bool{false, true}
}

// SymDiff returns the gradient node of the logits.
func (op bernoulliOp) SymDiff(inputs G.Nodes, output, grad *G.Node) (G.Nodes, error) {
	if op.kind != 0 {
		return nil, fmt.Errorf("model: %v is not differentiable", op)
	}
	dz, err := G.ApplyOp(bernoulliOp{op.b, 1}, inputs[0], inputs[1], grad)
	if err != nil {
		return nil, err
	}
	return G.Nodes{nil, dz}, nil
}

// bernoulliLogProb adds the per-snapshot q = 2 log-likelihood of the 0/1
// inputs x under the logits z to the graph.
func bernoulliLogProb(x, z *G.Node, name string, n int) (*G.Node, error) {
	return G.ApplyOp(bernoulliOp{&bernoulli{name: name, n: n}, 0}, x, z)
}
