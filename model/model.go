package model

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sync"
)

// Tensor is one named weight (or mask) array, stored row-major in float64.
// A weight matrix of shape [in, out] maps a row of in inputs to out outputs
// by a row-vector product x·W.
type Tensor struct {
	Name  string    `json:"name"`
	Shape []int     `json:"shape"`
	Data  []float64 `json:"-"`
}

// shapeSize is the product of the shape.
func shapeSize(s []int) int {
	n := 1
	for _, d := range s {
		n *= d
	}
	return n
}

// Model is a conditional MADE p(x|λ). Weights holds the trainable
// parameters in the fixed order given by WeightNames; the trainer may update
// their Data in place. The scoring methods are safe for concurrent use as
// long as nobody writes Weights at the same time.
type Model struct {
	Cfg     Config
	Weights []Tensor

	lay    layout
	masks  []Tensor  // one per masked layer, then the direct mask if any
	deg    []int     // autoregressive position of each site
	hdeg   [][]int   // degrees of the hidden units of each layer, ascending
	tiles  []tiling  // block structure of each mask, in the order of masks
	pool   sync.Pool // *prep
	wsPool sync.Pool // *workspace of blockRows rows
	conv   *convNet  // non-nil for a convolutional model (Config.Conv)
}

// layout records where each parameter lives in Weights.
type layout struct {
	din, dout, per int
	condW, condB   []int // per conditioning layer
	madeW, madeB   []int // per masked layer (hidden layers, then output)
	condV          []int // per masked layer: conditioning head
	condS          []int // per masked layer with FiLM: the scale head
	direct         int   // -1 without Direct
	condOut        int
	shapes         [][]int
	names          []string
}

func newLayout(c Config) layout {
	if c.Conv != nil {
		return newConvLayout(c)
	}
	l := condLayout(c)
	add := l.add
	prev := l.din
	widths := append(append([]int(nil), c.Hidden...), l.dout)
	for i, h := range widths {
		l.madeW = append(l.madeW, add(fmt.Sprintf("made.w%d", i), prev, h))
		l.madeB = append(l.madeB, add(fmt.Sprintf("made.b%d", i), h))
		l.condV = append(l.condV, add(fmt.Sprintf("cond.v%d", i), l.condOut, h))
		prev = h
	}
	if c.Direct {
		l.direct = add("made.direct", l.din, l.dout)
	}
	if c.FiLM {
		// After every other weight, so that the additive model's weights
		// keep their order.
		for i, h := range widths {
			l.condS = append(l.condS, add(fmt.Sprintf("cond.s%d", i), l.condOut, h))
		}
	}
	return *l
}

// WeightNames returns the names and shapes of the trainable parameters of a
// model with configuration c, in the order of Model.Weights.
func WeightNames(c Config) ([]string, [][]int, error) {
	if err := c.Validate(); err != nil {
		return nil, nil, err
	}
	l := newLayout(c)
	return l.names, l.shapes, nil
}

// build sets up layout, degrees and masks of m from m.Cfg.
func (m *Model) build() {
	c := m.Cfg
	m.lay = newLayout(c)
	n := c.Sites
	m.deg = make([]int, n)
	for i, s := range c.Order {
		m.deg[s] = i
	}
	if c.Conv != nil {
		m.conv = newConvNet(c)
		m.masks, m.hdeg, m.tiles = nil, nil, nil
		return
	}
	qin := c.inDim() / n
	inDeg := make([]int, m.lay.din)
	for j := range inDeg {
		inDeg[j] = m.deg[j/qin] + 1
	}
	outDeg := make([]int, m.lay.dout)
	for o := range outDeg {
		outDeg[o] = m.deg[o/m.lay.per] + 1
	}
	hidDeg := func(h int) []int {
		d := make([]int, h)
		span := max(n-1, 1)
		for k := range d {
			d[k] = 1 + k*span/h
		}
		return d
	}
	m.masks = m.masks[:0]
	m.hdeg = m.hdeg[:0]
	prev := inDeg
	for i, h := range c.Hidden {
		cur := hidDeg(h)
		m.hdeg = append(m.hdeg, cur)
		mk := Tensor{Name: fmt.Sprintf("mask.w%d", i), Shape: []int{len(prev), h}, Data: make([]float64, len(prev)*h)}
		for j, dj := range prev {
			for k, dk := range cur {
				if dk >= dj {
					mk.Data[j*h+k] = 1
				}
			}
		}
		m.masks = append(m.masks, mk)
		prev = cur
	}
	dout := m.lay.dout
	mk := Tensor{Name: fmt.Sprintf("mask.w%d", len(c.Hidden)), Shape: []int{len(prev), dout}, Data: make([]float64, len(prev)*dout)}
	for k, dk := range prev {
		for o, do := range outDeg {
			if do > dk {
				mk.Data[k*dout+o] = 1
			}
		}
	}
	m.masks = append(m.masks, mk)
	if c.Direct {
		md := Tensor{Name: "mask.direct", Shape: []int{m.lay.din, dout}, Data: make([]float64, m.lay.din*dout)}
		for j, dj := range inDeg {
			for o, do := range outDeg {
				if do > dj && c.nearOnLattice(j/qin, o/m.lay.per) {
					md.Data[j*dout+o] = 1
				}
			}
		}
		m.masks = append(m.masks, md)
	}
	m.tiles = m.tiles[:0]
	for _, mk := range m.masks {
		m.tiles = append(m.tiles, newTiling(mk.Data, mk.Shape[0], mk.Shape[1]))
	}
}

// maskOf returns the mask of weight index w, or nil for an unmasked weight.
func (m *Model) maskOf(w int) []float64 {
	if m.conv != nil {
		return nil
	}
	for i, idx := range m.lay.madeW {
		if idx == w {
			return m.masks[i].Data
		}
	}
	if w == m.lay.direct {
		return m.masks[len(m.masks)-1].Data
	}
	return nil
}

// New returns a model with configuration cfg and random weights drawn
// deterministically from seed: masked and output matrices from a normal
// distribution with variance gain/fan-in (gain 2 for relu and softplus
// hidden layers, He et al., ICCV 2015; 1 for tanh), where fan-in counts the unmasked
// inputs of a unit on average; all biases zero. Entries outside the masks
// are zero.
func New(cfg Config, seed uint64) (*Model, error) {
	if err := cfg.Validate(); err != nil {
		return nil, err
	}
	m := &Model{Cfg: cloneConfig(cfg)}
	m.build()
	rng := rand.New(rand.NewPCG(seed, 0x4d414445))
	l := m.lay
	m.Weights = make([]Tensor, len(l.names))
	for i := range l.names {
		m.Weights[i] = Tensor{Name: l.names[i], Shape: append([]int(nil), l.shapes[i]...), Data: make([]float64, shapeSize(l.shapes[i]))}
	}
	hiddenGain := 1.0
	if cfg.Activation == ReLU || cfg.Activation == Softplus {
		hiddenGain = 2
	}
	fill := func(w int, gain float64) {
		t := m.Weights[w]
		in, out := t.Shape[0], t.Shape[1]
		mask := m.maskOf(w)
		fan := float64(in)
		if mask != nil {
			ones := 0.0
			for _, v := range mask {
				ones += v
			}
			fan = math.Max(ones/float64(out), 1)
		}
		sd := math.Sqrt(gain / fan)
		for k := range t.Data {
			if mask != nil && mask[k] == 0 {
				continue
			}
			t.Data[k] = sd * rng.NormFloat64()
		}
	}
	condGain := 1.0
	if cfg.condAct() == ReLU || cfg.condAct() == Softplus {
		condGain = 2
	}
	for _, w := range l.condW {
		fill(w, condGain)
	}
	last := len(l.madeW) - 1
	for i, w := range l.madeW {
		g := hiddenGain
		if i == last {
			g = 1
			if l.direct >= 0 {
				g = 0.5 // two terms add up in the output layer
			}
		}
		fill(w, g)
	}
	for i, w := range l.condV {
		g := 0.5
		if i == last {
			g = 0.25
		}
		fill(w, g)
	}
	if l.direct >= 0 {
		fill(l.direct, 0.5)
	}
	// The FiLM scale heads stay zero: γ = 1 at the start.
	return m, nil
}

// FromWeights returns a model with configuration cfg and a copy of the
// weights w, which must have the names and shapes given by WeightNames(cfg)
// in that order and finite values.
func FromWeights(cfg Config, w []Tensor) (*Model, error) {
	if err := cfg.Validate(); err != nil {
		return nil, err
	}
	m := &Model{Cfg: cloneConfig(cfg)}
	m.build()
	l := m.lay
	if len(w) != len(l.names) {
		return nil, fmt.Errorf("model weights: expected %d tensors for this configuration, found %d", len(l.names), len(w))
	}
	m.Weights = make([]Tensor, len(w))
	for i, t := range w {
		if t.Name != l.names[i] {
			return nil, fmt.Errorf("model weights: tensor %d must be %q, found %q", i, l.names[i], t.Name)
		}
		if !equalInts(t.Shape, l.shapes[i]) {
			return nil, fmt.Errorf("model weights: tensor %q must have shape %v, found %v", t.Name, l.shapes[i], t.Shape)
		}
		if len(t.Data) != shapeSize(t.Shape) {
			return nil, fmt.Errorf("model weights: tensor %q must hold %d values, found %d", t.Name, shapeSize(t.Shape), len(t.Data))
		}
		for k, v := range t.Data {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("model weights: tensor %q must be finite, found %v at index %d", t.Name, v, k)
			}
		}
		m.Weights[i] = Tensor{Name: t.Name, Shape: append([]int(nil), t.Shape...), Data: append([]float64(nil), t.Data...)}
	}
	return m, nil
}

func equalInts(a, b []int) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

func cloneConfig(c Config) Config {
	c.Hidden = append([]int(nil), c.Hidden...)
	c.CondHidden = append([]int(nil), c.CondHidden...)
	c.Order = append([]int(nil), c.Order...)
	c.Lattice = append([]int(nil), c.Lattice...)
	c.ParamLo = append([]float64(nil), c.ParamLo...)
	c.ParamHi = append([]float64(nil), c.ParamHi...)
	if c.Conv != nil {
		cc := *c.Conv
		c.Conv = &cc
	}
	return c
}

// NumParams returns the number of trainable parameters, counting the
// entries outside the masks (which stay zero) too.
func (m *Model) NumParams() int {
	n := 0
	for _, t := range m.Weights {
		n += len(t.Data)
	}
	return n
}

// Masks returns copies of the 0/1 connectivity masks, for export: "mask.wL"
// of the shape of "made.wL" for each masked layer L, then "mask.direct" with
// a direct connection.
func (m *Model) Masks() []Tensor {
	out := make([]Tensor, len(m.masks))
	for i, t := range m.masks {
		out[i] = Tensor{Name: t.Name, Shape: append([]int(nil), t.Shape...), Data: append([]float64(nil), t.Data...)}
	}
	return out
}

// Sites returns N.
func (m *Model) Sites() int { return m.Cfg.Sites }

// Alphabet returns q.
func (m *Model) Alphabet() int { return m.Cfg.Alphabet }

// ParamDim returns d, the length of λ.
func (m *Model) ParamDim() int { return m.Cfg.ParamDim }

// condLayout starts the layout of either network: the sizes, and the
// conditioning net's weights, which come first.
func condLayout(c Config) *layout {
	l := &layout{din: c.inDim(), per: c.outPer(), direct: -1}
	l.dout = c.Sites * l.per
	in := c.featDim()
	for i, h := range c.CondHidden {
		l.condW = append(l.condW, l.add(fmt.Sprintf("cond.w%d", i), in, h))
		l.condB = append(l.condB, l.add(fmt.Sprintf("cond.b%d", i), h))
		in = h
	}
	l.condOut = in
	return l
}

// add appends a weight tensor of the given name and shape and returns its
// index.
func (l *layout) add(name string, shape ...int) int {
	l.names = append(l.names, name)
	l.shapes = append(l.shapes, shape)
	return len(l.names) - 1
}
