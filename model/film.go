package model

import (
	"fmt"
	"hash"
	"math"

	"github.com/chewxy/hm"
	G "gorgonia.org/gorgonia"
	"gorgonia.org/tensor"
)

// filmLayer is the scale and activation of one FiLM layer in the training
// graph: O = act(P + P⊙S), with P the layer's pre-activation (masked
// product plus shift) and S its scale head u·S (Perez et al., AAAI 2018).
// One hand-written operation does the pass that gorgonia would spread over
// a product, a sum and an activation, each allocating its result; it also
// writes the float32 copies the products next to it read in single
// precision, as the fused masked layers of the additive model do.
//
// The arithmetic is gorgonia's, operation for operation (a + a·s, then
// gorgonia's ReLU, softplus or tanh and their derivatives), so a FiLM
// model trains to the same weights, bit for bit, as with the composed
// operations (TestFiLMFusedMatchesComposed). The one exception is softplus,
// which both builds run vectorised with its derivative (model/vmath in the
// default build, vec_openblas.c in the openblas build) instead of
// gorgonia's scalar functions; those are accurate to a few ulp (vmath) or
// 8 units of 2^-53 absolute (C), so one step's gradients agree with the
// composed operations' to 1e-8 of their largest entry.
type filmLayer struct {
	name string
	act  int
	// below are the products whose summed output is P; the dP operation
	// writes their float32 copy of dY.
	below []*maskedLinear
	// next is the product that reads O, if any; the forward operation
	// writes its float32 input.
	next *maskedLinear
	a    []float64    // A = P + P⊙S with softplus, kept for its derivative
	bufs [3][]float64 // O, dP, and dS (written by the dP operation)
}

func (f *filmLayer) buf(i, n int) []float64 {
	if len(f.bufs[i]) < n {
		f.bufs[i] = make([]float64, n)
	}
	return f.bufs[i][:n]
}

// filmOp is one of the gorgonia operations of a filmLayer: kind 0 is
// O = act(P + P⊙S) with inputs (P, S); kind 1 is dP = dA + dA⊙S with
// inputs (dO, S, O, P), dA = dO⊙act'(A), and computes dS = dA⊙P in the
// same pass; kind 2, with inputs (dP, P), returns that dS (its input dP
// makes it run after kind 1).
type filmOp struct {
	f    *filmLayer
	kind int
}

func (op filmOp) Arity() int {
	if op.kind == 1 {
		return 4
	}
	return 2
}

func (op filmOp) Type() hm.Type {
	if op.kind == 1 {
		return hm.NewFnType(matF64, matF64, matF64, matF64, matF64)
	}
	return hm.NewFnType(matF64, matF64, matF64)
}

func (op filmOp) InferShape(in ...G.DimSizer) (tensor.Shape, error) {
	s0, err := matrixInput(op, in)
	if err != nil {
		return nil, err
	}
	return s0.Clone(), nil
}

// reluTimes is v·1 where the sign bit of x is clear and v·0 where it is
// set, without a branch (on random signs a branch mispredicts half the
// time). For finite v, v·0 is the zero with v's sign, which is what the
// masking leaves. With x = v it is gorgonia's ReLU, x⊙(x ≥ 0), except at
// x = −0, where both give −0, and at a NaN x with its sign bit set, which
// becomes −0 (a diverging run still shows in its loss, which the output
// layer, without ReLU, carries); with x a ReLU output it is gorgonia's
// derivative.
func reluTimes(v, x float64) float64 {
	keep := uint64(int64(math.Float64bits(x))>>63) >> 1 // magnitude bits to clear
	return math.Float64frombits(math.Float64bits(v) &^ keep)
}

// filmForward writes o = act(p + p⊙s) and, unless o32 is nil, its float32
// rounding; with softplus it keeps p + p⊙s in a. One loop per activation,
// so that none branches per entry on the activation.
func filmForward(o []float64, o32 []float32, a, p, s []float64, act int) {
	n := len(o)
	switch act {
	case actRelu, actNone:
		vFilmFwd(o, o32, p, s, act == actRelu)
		return
	case actSoftplus:
		a = a[:n]
		vFilmFwd(a, nil, p, s, false)
		vFilmSoftplus(o, a)
	case actTanh:
		vFilmFwd(o, nil, p, s, false)
		for i, v := range o {
			o[i] = math.Tanh(v)
		}
	}
	if o32 != nil {
		o32 = o32[:n]
		for i, v := range o {
			o32[i] = float32(v)
		}
	}
}

// filmBackward writes dp = dA + dA⊙s and ds = dA⊙p with dA = d⊙act'(A),
// the way gorgonia's derivatives compute it, and the float32 rounding of
// dp into d32 unless it is nil. ReLU's and tanh's derivatives read the
// output o (where A < 0 ReLU gave −0; A = −0 exactly, which gorgonia
// passes, is the one difference), softplus's reads a.
func filmBackward(dp, ds []float64, d32 []float32, d, s, o, p, a []float64, act int) {
	n := len(dp)
	d, o = d[:n], o[:n]
	switch act {
	case actRelu, actNone:
		vFilmBwd(dp, ds, d32, d, s, o, p, act == actRelu)
	case actSoftplus:
		// dA overwrites A, which is read for the last time.
		a = a[:n]
		vFilmSoftplusGrad(a, d, a, o)
		vFilmBwd(dp, ds, d32, a, s, nil, p, false)
	case actTanh:
		// dA goes into dp first; vFilmBwd reads each entry before it
		// writes it.
		for i, v := range d {
			dp[i] = (1 - o[i]*o[i]) * v
		}
		vFilmBwd(dp, ds, d32, dp, s, nil, p, false)
	}
}

func (op filmOp) Do(inputs ...G.Value) (G.Value, error) {
	if len(inputs) != op.Arity() {
		return nil, fmt.Errorf("model: %v needs %d inputs, found %d", op, op.Arity(), len(inputs))
	}
	var in [4][]float64
	var shape tensor.Shape
	for i, v := range inputs {
		d, s, err := f64Of(v)
		if err != nil {
			return nil, err
		}
		in[i], shape = d, s
	}
	f := op.f
	n := shape[0] * shape[1]
	var res []float64
	switch op.kind {
	case 0:
		// (P, S).
		res = f.buf(0, n)
		if f.act == actSoftplus && len(f.a) < n {
			f.a = make([]float64, n)
		}
		var o32 []float32
		if nx := f.next; nx != nil && nx.f32 {
			nx.fx32 = grow32(nx.fx32, n)
			o32, nx.fxOK = nx.fx32, true
		}
		filmForward(res, o32, f.a, in[0], in[1], f.act)
	case 1:
		// (dO, S, O, P); without an activation P stands in for O.
		res = f.buf(1, n)
		var d32 []float32
		if len(f.below) > 0 && f.below[0].f32 {
			b := f.below[0]
			b.dy32 = grow32(b.dy32, n)
			d32 = b.dy32[:n]
		}
		filmBackward(res, f.buf(2, n), d32, in[0], in[1], in[2], in[3], f.a, f.act)
		if d32 != nil {
			// Every product below reads the same dY.
			for _, b := range f.below {
				b.dy32, b.dyOK = d32, true
			}
		}
	default:
		// (dP, P): dS, written by kind 1.
		res = f.buf(2, n)
	}
	return tensor.New(tensor.WithShape(shape.Clone()...), tensor.WithBacking(res)), nil
}

func (op filmOp) ReturnsPtr() bool     { return false }
func (op filmOp) CallsExtern() bool    { return false }
func (op filmOp) OverwritesInput() int { return -1 }

func (op filmOp) WriteHash(h hash.Hash) { fmt.Fprint(h, op.String()) }

func (op filmOp) Hashcode() uint32 { return opHash(op) }

func (op filmOp) String() string { return fmt.Sprintf("film%d(%s)", op.kind, op.f.name) }

// DiffWRT: the forward operation is differentiated by P and S.
func (op filmOp) DiffWRT(int) []bool {
	if op.kind != 0 {
		return []bool{false, false}
	}
	return []bool{true, true}
}

// SymDiff returns the gradient nodes dP and dS of the forward operation.
func (op filmOp) SymDiff(inputs G.Nodes, output, grad *G.Node) (G.Nodes, error) {
	if op.kind != 0 {
		return nil, fmt.Errorf("model: %v is not differentiable", op)
	}
	// The activations' derivatives read the output O. Without an
	// activation O is not read and P stands in: making the output layer's O an input of
	// its own gradient changed the order in which gorgonia sums the
	// loss's gradient contributions (by one rounding, in the q > 2 loss),
	// which TestFiLMFusedMatchesComposed caught.
	o := output
	if op.f.act == actNone {
		o = inputs[0]
	}
	dp, err := G.ApplyOp(filmOp{op.f, 1}, grad, inputs[1], o, inputs[0])
	if err != nil {
		return nil, err
	}
	ds, err := G.ApplyOp(filmOp{op.f, 2}, dp, inputs[0])
	if err != nil {
		return nil, err
	}
	return G.Nodes{dp, ds}, nil
}

// filmNode adds act(p + p⊙s) to the graph as one operation of f.
func filmNode(p, s *G.Node, f *filmLayer) (*G.Node, error) {
	return G.ApplyOp(filmOp{f, 0}, p, s)
}
