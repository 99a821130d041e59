package model

import (
	"fmt"
	"math"

	G "gorgonia.org/gorgonia"
	"gorgonia.org/tensor"
)

// filmComposed builds FiLM layers from gorgonia's own operations instead
// of filmLayer; only the test that compares the two sets it.
var filmComposed = false

// groupRows lets the conditioning heads run once per distinct λ of a batch
// (see rowGroups); the test that compares the grouped and the row-by-row
// products clears it.
var groupRows = true

// Graph is a gorgonia expression graph of a model's training loss for a
// fixed maximum batch size. Its weight nodes share their backing arrays with
// Model.Weights[i].Data, so in-place updates by a trainer are seen by the
// next call; replacing a Data slice is detected and reported. A Graph is not
// safe for concurrent use.
type Graph struct {
	m     *Model
	batch int
	g     *G.ExprGraph
	vm    G.VM
	loss  *G.Node
	grads []*G.Node
	back  []*float64 // first element of each weight's backing array
	// byWeight lists the masked-product operations of each weight; a
	// weight with exactly one writes its gradient straight into the
	// caller's slice (no copy).
	byWeight [][]*maskedLinear
	// prepared says a BatchGraph has already computed W⊙M for this run
	// (in buffers shared by its graphs).
	prepared bool
	// grp groups the batch's rows by their conditioning features, for the
	// conditioning heads.
	grp rowGroups

	x, xf, phi, wr []float64 // input backing arrays
}

// NewGraph builds the training graph of m for batches of at most batch
// snapshots: the mean negative log-likelihood in nats per snapshot and its
// symbolic gradient with respect to every weight.
func NewGraph(m *Model, batch int) (gr *Graph, err error) {
	defer recoverTo(&err)
	if m == nil {
		return nil, fmt.Errorf("model: NewGraph needs a model, found nil")
	}
	if batch < 1 {
		return nil, fmt.Errorf("model: NewGraph needs a batch size ≥ 1, found %d", batch)
	}
	if m.conv != nil {
		return nil, fmt.Errorf("model: NewGraph builds dense models only; a convolutional model trains through NewBatchGraph")
	}
	c := m.Cfg
	l := m.lay
	B := batch
	gr = &Graph{m: m, batch: B, g: G.NewGraph(), byWeight: make([][]*maskedLinear, len(m.Weights))}
	g := gr.g
	must := func(n *G.Node, e error) *G.Node {
		if e != nil {
			panic(e)
		}
		return n
	}
	matrix := func(name string, data []float64, r, cols int) *G.Node {
		return G.NewMatrix(g, tensor.Float64, G.WithShape(r, cols), G.WithName(name),
			G.WithValue(tensor.New(tensor.WithShape(r, cols), tensor.WithBacking(data))))
	}
	vector := func(name string, data []float64) *G.Node {
		return G.NewVector(g, tensor.Float64, G.WithShape(len(data)), G.WithName(name),
			G.WithValue(tensor.New(tensor.WithShape(len(data)), tensor.WithBacking(data))))
	}
	// Weights, sharing backing arrays with m.Weights.
	wn := make([]*G.Node, len(m.Weights))
	gr.back = make([]*float64, len(m.Weights))
	for i, t := range m.Weights {
		gr.back[i] = &t.Data[0]
		if len(t.Shape) == 1 {
			wn[i] = vector(t.Name, t.Data)
		} else {
			wn[i] = matrix(t.Name, t.Data, t.Shape[0], t.Shape[1])
		}
	}
	// Masked products: hand-written gorgonia operations that skip the
	// all-zero blocks of each mask (see maskedLinear).
	// Each pass through the network (two with Symmetric) has its own
	// operations, because they own their output buffers.
	f32 := c.Precision == PrecisionFloat32
	hiddenAct := c.Activation.kernelCode()
	tiles := m.tiles
	linears := func(pass string) ([]*maskedLinear, *maskedLinear) {
		lin := make([]*maskedLinear, len(l.madeW))
		for i, w := range l.madeW {
			lin[i] = &maskedLinear{name: m.Weights[w].Name + pass, t: tiles[i], needDX: i > 0, f32: f32}
			gr.byWeight[w] = append(gr.byWeight[w], lin[i])
		}
		var linD *maskedLinear
		if l.direct >= 0 {
			linD = &maskedLinear{name: m.Weights[l.direct].Name + pass, t: tiles[len(tiles)-1], f32: f32}
			gr.byWeight[l.direct] = append(gr.byWeight[l.direct], linD)
		}
		return lin, linD
	}
	// actNode applies the activation as a gorgonia operation.
	actNode := func(a Activation, n *G.Node) *G.Node {
		switch a {
		case Tanh:
			return must(G.Tanh(n))
		case Softplus:
			return must(G.Softplus(n))
		}
		return must(G.Rectify(n))
	}
	addBias := func(n, b *G.Node) *G.Node { return must(G.BroadcastAdd(n, b, nil, []byte{0})) }

	// Inputs.
	gr.x = make([]float64, B*l.din)
	gr.phi = make([]float64, B*c.featDim())
	gr.wr = make([]float64, B)
	X := matrix("x", gr.x, B, l.din)
	Phi := matrix("phi", gr.phi, B, c.featDim())
	Wr := vector("rowweight", gr.wr)

	// Conditioning net and its additive bias for every masked layer.
	u := Phi
	for i, w := range l.condW {
		u = actNode(c.condAct(), addBias(must(G.Mul(u, wn[w])), wn[l.condB[i]]))
	}
	// The conditioning heads u·V are dense products; they go through the
	// same hand-written operation (in the model's precision). The biases
	// made.bL are added inside the masked layers.
	heads := make([]*G.Node, len(l.madeW))
	for i := range l.madeW {
		v := m.Weights[l.condV[i]]
		hl := &maskedLinear{name: v.Name, t: denseTiling(v.Shape[0], v.Shape[1]), needDX: len(c.CondHidden) > 0, f32: f32, grp: &gr.grp}
		gr.byWeight[l.condV[i]] = append(gr.byWeight[l.condV[i]], hl)
		heads[i] = must(maskedMul(u, wn[l.condV[i]], hl))
	}
	// FiLM: the scale heads u·S; a pre-activation a becomes a + a⊙(u·S).
	var scales []*G.Node
	for i := range l.condS {
		v := m.Weights[l.condS[i]]
		sl := &maskedLinear{name: v.Name, t: denseTiling(v.Shape[0], v.Shape[1]), needDX: len(c.CondHidden) > 0, f32: f32, grp: &gr.grp}
		gr.byWeight[l.condS[i]] = append(gr.byWeight[l.condS[i]], sl)
		scales = append(scales, must(maskedMul(u, wn[l.condS[i]], sl)))
	}
	scale := func(a *G.Node, i int) *G.Node {
		if scales == nil {
			return a
		}
		return must(G.Add(a, must(G.HadamardProd(a, scales[i]))))
	}
	L := len(c.Hidden)
	logp := func(x *G.Node, pass string) *G.Node {
		lin, linD := linears(pass)
		h := x
		if scales == nil {
			// Each fused layer writes the float32 input of the next.
			for i := 0; i < L; i++ {
				lin[i].next = lin[i+1]
			}
			for i := 0; i < L; i++ {
				h = must(maskedLayer(h, wn[l.madeW[i]], heads[i], wn[l.madeB[i]], lin[i], hiddenAct))
			}
		} else if filmComposed {
			// The reference: gorgonia's own operations after each
			// product (TestFiLMFusedMatchesComposed).
			for i := 0; i < L; i++ {
				a := must(maskedLayer(h, wn[l.madeW[i]], heads[i], wn[l.madeB[i]], lin[i], actNone))
				h = actNode(c.Activation, scale(a, i))
			}
		} else {
			// The scale comes between the sum and the activation: one
			// filmLayer operation applies both after the product.
			for i := 0; i < L; i++ {
				a := must(maskedLayer(h, wn[l.madeW[i]], heads[i], wn[l.madeB[i]], lin[i], actNone))
				f := &filmLayer{name: lin[i].name, act: hiddenAct, below: []*maskedLinear{lin[i]}, next: lin[i+1]}
				h = must(filmNode(a, scales[i], f))
			}
		}
		z := must(maskedLayer(h, wn[l.madeW[L]], heads[L], wn[l.madeB[L]], lin[L], actNone))
		below := []*maskedLinear{lin[L]}
		if linD != nil {
			z = must(G.Add(z, must(maskedMul(x, wn[l.direct], linD))))
			below = append(below, linD)
		}
		if scales != nil && !filmComposed {
			z = must(filmNode(z, scales[L], &filmLayer{name: lin[L].name, act: actNone, below: below}))
		} else {
			z = scale(z, L)
		}
		if c.Alphabet == 2 {
			// log p = Σ_s x·z − log(1+e^z) (Bernoulli with logit z).
			return must(bernoulliLogProb(x, z, "logp"+pass, c.Sites))
		}
		// log p = Σ_s (z[s, x_s] − logΣ_v exp z[s, v]). The log-sum-exp is
		// shifted by the per-site maximum for stability; the shift's
		// gradient cancels exactly. (gorgonia's LogSoftMax is not used: its
		// gradient failed the finite-difference test in v0.9.18.)
		r := must(G.Reshape(z, tensor.Shape{B * c.Sites, c.Alphabet}))
		mx := must(G.Max(r, 1))
		e := must(G.Exp(must(G.BroadcastSub(r, mx, nil, []byte{1}))))
		lse := must(G.Add(mx, must(G.Log(must(G.Sum(e, 1))))))
		lse = must(G.Reshape(lse, tensor.Shape{B, c.Sites}))
		return must(G.Sub(must(G.Sum(must(G.HadamardProd(z, x)), 1)), must(G.Sum(lse, 1))))
	}
	lp := logp(X, "")
	if c.Symmetric {
		// log((p(x)+p(1−x))/2) = a + softplus(b−a) − log 2; the constant is
		// added outside the graph.
		gr.xf = make([]float64, B*l.din)
		Xf := matrix("xflip", gr.xf, B, l.din)
		b := logp(Xf, "/flip")
		lp = must(G.Add(lp, must(G.Softplus(must(G.Sub(b, lp))))))
	}
	gr.loss = must(G.Neg(must(G.Sum(must(G.HadamardProd(lp, Wr))))))
	if gr.grads, err = G.Grad(gr.loss, wn...); err != nil {
		return nil, fmt.Errorf("model: building the gradient graph: %w", err)
	}
	gr.vm = G.NewTapeMachine(g)
	for _, mls := range gr.byWeight {
		shareW(mls)
	}
	return gr, nil
}

// prepare computes W⊙M of every masked weight once for the next run, for
// all the operations (passes) that read it.
func (gr *Graph) prepare() {
	for w, mls := range gr.byWeight {
		if len(mls) > 0 {
			mls[0].prepareW(gr.m.Weights[w].Data)
		}
	}
}

// Batch returns the maximum number of snapshots per call.
func (gr *Graph) Batch() int { return gr.batch }

// fill validates a batch and writes it into the graph's inputs.
func (gr *Graph) fill(xs []uint8, params []float64, n int) error {
	m := gr.m
	c := m.Cfg
	N, d := c.Sites, c.ParamDim
	if n < 1 || n > gr.batch {
		return fmt.Errorf("model: batch must hold 1..%d snapshots, found %d", gr.batch, n)
	}
	if len(xs) != n*N {
		return fmt.Errorf("model: batch needs %d·%d site values, found %d", n, N, len(xs))
	}
	if len(params) != n*d {
		return fmt.Errorf("model: batch needs %d·%d parameter values, found %d", n, d, len(params))
	}
	for i := range m.Weights {
		if len(m.Weights[i].Data) == 0 || &m.Weights[i].Data[0] != gr.back[i] {
			return fmt.Errorf("model: weight %q no longer shares its array with the graph (update Data in place, or build a new Graph)", m.Weights[i].Name)
		}
	}
	if err := m.checkStates(xs, n); err != nil {
		return err
	}
	for i := 0; i < n; i++ {
		if err := m.checkLambda(params[i*d : (i+1)*d]); err != nil {
			return fmt.Errorf("snapshot %d: %w", i, err)
		}
	}
	clear(gr.x)
	din := m.lay.din
	for i := 0; i < n; i++ {
		for s, v := range xs[i*N : (i+1)*N] {
			if c.Alphabet == 2 {
				gr.x[i*din+s] = float64(v)
			} else {
				gr.x[i*din+s*c.Alphabet+int(v)] = 1
			}
		}
	}
	if gr.xf != nil {
		for i := range gr.xf {
			gr.xf[i] = 0
			if i < n*din {
				gr.xf[i] = 1 - gr.x[i]
			}
		}
	}
	clear(gr.phi)
	fd := c.featDim()
	for i := 0; i < n; i++ {
		c.features(gr.phi[i*fd:(i+1)*fd], params[i*d:(i+1)*d])
	}
	if groupRows {
		gr.grp.set(gr.phi, gr.batch, fd)
	} else {
		gr.grp.on = false
	}
	for i := range gr.wr {
		gr.wr[i] = 0
		if i < n {
			gr.wr[i] = 1 / float64(n)
		}
	}
	return nil
}

// LossGrad computes the mean negative log-likelihood (nats per snapshot) of
// the n ≤ Batch() snapshots xs (n·N values) at their parameters params (n·d
// values) and writes its gradient with respect to m.Weights[i].Data into
// grads[i] (same lengths). Rows beyond n contribute nothing.
func (gr *Graph) LossGrad(xs []uint8, params []float64, n int, grads [][]float64) (loss float64, err error) {
	defer recoverTo(&err)
	if len(grads) != len(gr.m.Weights) {
		return 0, fmt.Errorf("model: LossGrad needs %d gradient slices, found %d", len(gr.m.Weights), len(grads))
	}
	for i, t := range gr.m.Weights {
		if len(grads[i]) != len(t.Data) {
			return 0, fmt.Errorf("model: gradient slice %d (%q) must have length %d, found %d", i, t.Name, len(t.Data), len(grads[i]))
		}
	}
	if err := gr.fill(xs, params, n); err != nil {
		return 0, err
	}
	for i, ops := range gr.byWeight {
		if len(ops) == 1 {
			ops[0].dst = grads[i]
		}
	}
	defer func() {
		for _, ops := range gr.byWeight {
			for _, ml := range ops {
				ml.dst = nil
			}
		}
	}()
	if !gr.prepared {
		gr.prepare()
	}
	gr.vm.Reset()
	if err := gr.vm.RunAll(); err != nil {
		return 0, fmt.Errorf("model: running the training graph: %w", err)
	}
	loss, err = scalarOf(gr.loss)
	if err != nil {
		return 0, err
	}
	for i, gn := range gr.grads {
		v := gn.Value()
		if v == nil {
			return 0, fmt.Errorf("model: no gradient value for %q", gr.m.Weights[i].Name)
		}
		data, ok := v.Data().([]float64)
		if !ok || len(data) != len(grads[i]) {
			return 0, fmt.Errorf("model: gradient of %q has an unexpected form", gr.m.Weights[i].Name)
		}
		if &data[0] != &grads[i][0] {
			copy(grads[i], data)
		}
	}
	if gr.m.Cfg.Symmetric {
		loss += math.Ln2
	}
	return loss, nil
}

// ForwardLoss computes the same loss as LossGrad by running the gorgonia
// graph, without copying gradients out. It exists to check the graph
// against the scoring kernel.
func (gr *Graph) ForwardLoss(xs []uint8, params []float64, n int) (loss float64, err error) {
	defer recoverTo(&err)
	if err := gr.fill(xs, params, n); err != nil {
		return 0, err
	}
	gr.prepare()
	gr.vm.Reset()
	if err := gr.vm.RunAll(); err != nil {
		return 0, fmt.Errorf("model: running the training graph: %w", err)
	}
	loss, err = scalarOf(gr.loss)
	if err == nil && gr.m.Cfg.Symmetric {
		loss += math.Ln2
	}
	return loss, err
}

func scalarOf(n *G.Node) (float64, error) {
	v := n.Value()
	if v == nil {
		return 0, fmt.Errorf("model: the loss node has no value")
	}
	switch d := v.Data().(type) {
	case float64:
		return d, nil
	case []float64:
		if len(d) == 1 {
			return d[0], nil
		}
	}
	return 0, fmt.Errorf("model: the loss is not a scalar (%T)", v.Data())
}

// Loss computes the mean negative log-likelihood (nats per snapshot) of the
// n ≤ Batch() snapshots with the scoring kernel, without gradients.
func (gr *Graph) Loss(xs []uint8, params []float64, n int) (loss float64, err error) {
	defer recoverTo(&err)
	if err := gr.fill(xs, params, n); err != nil {
		return 0, err
	}
	return gr.m.meanNLL(xs, params, n), nil
}

// meanNLL is the mean negative log-likelihood of n snapshots at their own λ
// by the scoring kernel.
func (m *Model) meanNLL(xs []uint8, params []float64, n int) float64 {
	lp := make([]float64, n)
	m.logProbRows(lp, xs, params, n)
	s := 0.0
	for _, v := range lp {
		s -= v
	}
	return s / float64(n)
}
