package model

import (
	"fmt"
	"math"
	"slices"
)

// Config is the architecture of a model and the normalisation of its
// control parameters. It is a plain value and JSON-serialisable.
//
// Each parameter axis is mapped affinely from [ParamLo, ParamHi] (the range
// of the training data) to t ∈ [−1, 1] and expanded into the features t,
// sin(πft), cos(πft) for f = 1..Fourier. The sine and cosine features are
// periodic in λ with period (ParamHi−ParamLo), so far outside the training
// range the model sees features it also saw inside it: probabilities there
// stay exactly normalised but are extrapolations, not predictions.
type Config struct {
	Sites      int        `json:"sites"`       // N
	Alphabet   int        `json:"alphabet"`    // q ≥ 2
	ParamDim   int        `json:"param_dim"`   // d ≥ 1
	Hidden     []int      `json:"hidden"`      // masked hidden widths, e.g. [256, 256]
	CondHidden []int      `json:"cond_hidden"` // conditioning net hidden widths, e.g. [64]; may be empty
	Fourier    int        `json:"fourier"`     // F: features t, sin(πft), cos(πft), f=1..F
	Activation Activation `json:"activation"`  // Softplus, ReLU or Tanh, for the masked hidden layers
	// CondActivation is the conditioning net's activation; "" (the
	// default) means the same as Activation. softplus and tanh make the
	// biases smooth in λ; relu makes them piecewise linear.
	CondActivation Activation `json:"cond_activation,omitempty"`
	Direct         bool       `json:"direct"` // direct masked input→output connection
	// DirectWindow, when positive, limits the direct connection of each
	// site to the earlier sites within that distance on Lattice (the
	// largest periodic distance along any axis, see Config.nearOnLattice);
	// 0, the value of every older checkpoint, lets every earlier site in.
	// The hidden layers still see every earlier site either way.
	DirectWindow int `json:"direct_window,omitempty"`
	// Lattice is the shape of the sites in row-major order (its product is
	// Sites); DirectWindow needs it, and it is unused otherwise.
	Lattice   []int     `json:"lattice,omitempty"`
	Order     []int     `json:"order"`     // Order[i] = site at autoregressive position i (a permutation of 0..N-1)
	Symmetric bool      `json:"symmetric"` // q=2 only: log p_sym(x) = log((p(x)+p(1-x))/2)
	ParamLo   []float64 `json:"param_lo"`  // per-axis range of the training data, mapped to [-1, 1]
	ParamHi   []float64 `json:"param_hi"`
	// Precision is the arithmetic of the masked matrix products, where
	// nearly all the work is: "" or "float64" (the default), or "float32"
	// (products rounded to single precision, about 1e-6 relative; every
	// per-site term, log-likelihood sum and gradient outside the products
	// stays float64).
	Precision string `json:"precision,omitempty"`
	// FiLM makes the conditioning net scale every masked layer's
	// pre-activation as well as shift it (feature-wise linear modulation,
	// Perez et al., AAAI 2018): a = γ(λ) ⊙ (h·(W⊙M) + b(λ)), with
	// γ = 1 + u·S and u the conditioning net's output; at the output layer
	// the direct term is inside the brackets, so γ there is a per-site
	// inverse temperature of the conditionals. S starts at zero, so a new
	// model starts as the additive one. See DefaultConfig for why.
	FiLM bool `json:"film,omitempty"`
	// Conv, when set, makes the model a masked convolutional network on
	// a periodic lattice instead of a dense MADE (see ConvConfig); nil,
	// the value of every older checkpoint, is the dense MADE.
	Conv *ConvConfig `json:"conv,omitempty"`
}

// The accepted Config.Precision values.
const (
	PrecisionFloat64 = "float64"
	PrecisionFloat32 = "float32"
)

// DefaultHiddenWidth returns the default masked hidden width for n sites:
// the smallest multiple of 32 that is at least n, clamped to [32, 256].
// A width of at least N−1 lets every autoregressive degree own a hidden unit
// (Germain et al. 2015 assign degrees 1..N−1); beyond 256 the cost grows
// faster than the gain on the lattice sizes tidemark targets, and the
// direct input→output connection still lets every output see every earlier
// site.
func DefaultHiddenWidth(n int) int {
	w := (n + 31) / 32 * 32
	return min(max(w, 32), 256)
}

// DefaultConfig fills defaults for n sites, alphabet q, d params and the
// given per-axis parameter ranges: two masked hidden layers of
// DefaultHiddenWidth(n) units, a conditioning net with one hidden layer of
// 64 units, F = 2 Fourier frequencies, softplus, FiLM conditioning, a
// direct connection, row-major order and no flip symmetry. lo and hi are
// copied.
//
// Why: two hidden layers is the depth Germain et al. (ICML 2015) found to
// help over one; the width rule is explained at DefaultHiddenWidth. The
// conditioning net only has to produce smooth functions of a few
// parameters, so 64 units are plenty. F = 2 lets the features resolve a
// change over a quarter of the training range while keeping 5 features per
// axis (train.DefaultSettings uses F = 1). softplus, log(1+e^z) (C. Dugas
// et al., NIPS 2000), makes log p a smooth function of λ, which the
// indicators that compare neighbouring points (local, fisher) and the
// derivative in λ (fisher_deriv) need. The direct connection adds a masked
// logistic-regression term x_<i → x_i, which alone already captures
// nearest-neighbour couplings and costs N·N weights. FiLM lets the
// conditioning net build products like (1/T)·(local field) that additive
// conditioning must assemble out of bias shifts. The measurements behind
// each choice are in bench/RESULTS.md ("Why the defaults").
func DefaultConfig(n, q, d int, lo, hi []float64) Config {
	w := DefaultHiddenWidth(n)
	return Config{
		Sites:      n,
		Alphabet:   q,
		ParamDim:   d,
		Hidden:     []int{w, w},
		CondHidden: []int{64},
		Fourier:    2,
		Activation: Softplus,
		Direct:     true,
		FiLM:       true,
		Order:      RowMajorOrder(n),
		ParamLo:    append([]float64(nil), lo...),
		ParamHi:    append([]float64(nil), hi...),
	}
}

// RowMajorOrder returns the identity ordering 0, 1, …, n−1 (row-major sites).
func RowMajorOrder(n int) []int {
	if n < 0 {
		n = 0
	}
	o := make([]int, n)
	for i := range o {
		o[i] = i
	}
	return o
}

// SnakeOrder returns the boustrophedon ordering of an ly×lx lattice stored
// row-major: row 0 left to right, row 1 right to left, and so on, so that
// consecutive positions are always lattice neighbours.
func SnakeOrder(ly, lx int) []int {
	if ly < 0 || lx < 0 {
		return nil
	}
	o := make([]int, 0, ly*lx)
	for y := 0; y < ly; y++ {
		for j := 0; j < lx; j++ {
			x := j
			if y%2 == 1 {
				x = lx - 1 - j
			}
			o = append(o, y*lx+x)
		}
	}
	return o
}

// Validate reports the first inconsistency in c, or nil.
func (c Config) Validate() error {
	if c.Sites < 1 {
		return fmt.Errorf("model config: sites must be ≥ 1, found %d", c.Sites)
	}
	if c.Alphabet < 2 || c.Alphabet > 256 {
		return fmt.Errorf("model config: alphabet must be in 2..256, found %d", c.Alphabet)
	}
	if c.ParamDim < 1 {
		return fmt.Errorf("model config: param_dim must be ≥ 1, found %d", c.ParamDim)
	}
	if len(c.Hidden) < 1 {
		return fmt.Errorf("model config: hidden must list at least one width, found none")
	}
	for i, h := range c.Hidden {
		if h < 1 {
			return fmt.Errorf("model config: hidden[%d] must be ≥ 1, found %d", i, h)
		}
	}
	for i, h := range c.CondHidden {
		if h < 1 {
			return fmt.Errorf("model config: cond_hidden[%d] must be ≥ 1, found %d", i, h)
		}
	}
	if c.Fourier > 1<<10 || c.ParamDim > 1<<10 {
		return fmt.Errorf("model config: expected at most 1024 parameters and Fourier frequencies, found %d and %d", c.ParamDim, c.Fourier)
	}
	// A bound on the weight count keeps a damaged or hostile configuration
	// from exhausting memory before anything else is checked.
	if n := c.approxParams(); n > MaxParams {
		return fmt.Errorf("model config: expected at most %d weights (%d GB), found about %.3g", int64(MaxParams), int64(MaxParams)*8>>30, n)
	}
	if c.Fourier < 0 {
		return fmt.Errorf("model config: fourier must be ≥ 0, found %d", c.Fourier)
	}
	if actIndex(c.Activation) < 0 {
		return fmt.Errorf("model config: activation must be one of %v, found %q", Activations, c.Activation)
	}
	if c.CondActivation != "" && actIndex(c.CondActivation) < 0 {
		return fmt.Errorf("model config: cond_activation must be one of %v, found %q", Activations, c.CondActivation)
	}
	if len(c.Order) != c.Sites {
		return fmt.Errorf("model config: order must have %d entries (one per site), found %d", c.Sites, len(c.Order))
	}
	seen := make([]bool, c.Sites)
	for i, s := range c.Order {
		if s < 0 || s >= c.Sites || seen[s] {
			return fmt.Errorf("model config: order must be a permutation of 0..%d, found %d at position %d", c.Sites-1, s, i)
		}
		seen[s] = true
	}
	if c.Precision != "" && c.Precision != PrecisionFloat64 && c.Precision != PrecisionFloat32 {
		return fmt.Errorf("model config: precision must be %q or %q, found %q", PrecisionFloat64, PrecisionFloat32, c.Precision)
	}
	if c.Conv != nil {
		if err := c.Conv.validate(c.Sites, c.Order); err != nil {
			return err
		}
	}
	if err := c.validateDirectWindow(); err != nil {
		return err
	}
	if c.Symmetric && c.Alphabet != 2 {
		return fmt.Errorf("model config: symmetric needs alphabet 2, found %d", c.Alphabet)
	}
	if len(c.ParamLo) != c.ParamDim || len(c.ParamHi) != c.ParamDim {
		return fmt.Errorf("model config: param_lo and param_hi must have %d entries, found %d and %d", c.ParamDim, len(c.ParamLo), len(c.ParamHi))
	}
	for i := range c.ParamLo {
		lo, hi := c.ParamLo[i], c.ParamHi[i]
		if math.IsNaN(lo) || math.IsInf(lo, 0) || math.IsNaN(hi) || math.IsInf(hi, 0) || hi < lo {
			return fmt.Errorf("model config: parameter axis %d needs finite param_lo ≤ param_hi, found [%v, %v]", i, lo, hi)
		}
	}
	return nil
}

func actIndex(a Activation) int {
	return slices.Index(Activations, a)
}

// inDim is the number of input units: N for q = 2, N·q otherwise.
func (c Config) inDim() int {
	if c.Alphabet == 2 {
		return c.Sites
	}
	return c.Sites * c.Alphabet
}

// outPer is the number of logits per site: 1 for q = 2, q otherwise.
func (c Config) outPer() int {
	if c.Alphabet == 2 {
		return 1
	}
	return c.Alphabet
}

// featDim is the number of conditioning features d·(1+2F).
func (c Config) featDim() int { return c.ParamDim * (1 + 2*c.Fourier) }

// features writes the conditioning features of lambda into dst (len
// featDim): per axis t = 2(λ−lo)/(hi−lo) − 1 (t = λ−lo for a degenerate
// axis), then sin(πft) and cos(πft) for f = 1..F.
func (c Config) features(dst, lambda []float64) {
	k := 0
	for a, l := range lambda {
		lo, hi := c.ParamLo[a], c.ParamHi[a]
		var t float64
		if hi > lo {
			t = 2*(l-lo)/(hi-lo) - 1
		} else {
			t = l - lo
		}
		dst[k] = t
		k++
		for f := 1; f <= c.Fourier; f++ {
			s, co := math.Sincos(math.Pi * float64(f) * t)
			dst[k] = s
			dst[k+1] = co
			k += 2
		}
	}
}

// condAct returns the conditioning net's activation.
func (c Config) condAct() Activation {
	if c.CondActivation == "" {
		return c.Activation
	}
	return c.CondActivation
}

// MaxParams bounds a model's weight count (2 GB of float64 weights).
const MaxParams = 1 << 28

// approxParams estimates the weight count in float64, so that absurd widths
// cannot overflow the estimate.
func (c Config) approxParams() float64 {
	in := float64(c.Sites) * float64(c.Alphabet)
	out := in
	if c.Alphabet == 2 {
		in, out = float64(c.Sites), float64(c.Sites)
	}
	feat := float64(c.ParamDim) * float64(1+2*c.Fourier)
	var n float64
	prev := feat
	for _, h := range c.CondHidden {
		n += (prev + 1) * float64(h)
		prev = float64(h)
	}
	cond := prev
	prev = in
	for _, h := range c.Hidden {
		n += (prev+1)*float64(h) + cond*float64(h)
		if c.FiLM {
			n += cond * float64(h)
		}
		prev = float64(h)
	}
	n += (prev+1)*out + cond*out
	if c.FiLM {
		n += cond * out
	}
	if c.Direct {
		n += in * out
	}
	return n
}

// validateDirectWindow checks DirectWindow against Direct and Lattice.
func (c Config) validateDirectWindow() error {
	switch {
	case c.DirectWindow < 0:
		return fmt.Errorf("model config: direct_window must be ≥ 0 (0: every earlier site), found %d", c.DirectWindow)
	case c.DirectWindow == 0:
		return nil
	case !c.Direct:
		return fmt.Errorf("model config: direct_window %d needs the direct connection, found direct false", c.DirectWindow)
	case c.Conv != nil:
		return fmt.Errorf("model config: direct_window is for the dense MADE; the conv network has its own window")
	}
	prod := 1
	for _, l := range c.Lattice {
		if l < 1 || l > c.Sites {
			return fmt.Errorf("model config: lattice sizes must be in 1..%d, found %v", c.Sites, c.Lattice)
		}
		prod *= l
	}
	if len(c.Lattice) == 0 || prod != c.Sites {
		return fmt.Errorf("model config: direct_window needs a lattice whose sizes multiply to the %d sites, found %v", c.Sites, c.Lattice)
	}
	return nil
}

// nearOnLattice reports whether sites a and b (row-major on Lattice) lie
// within DirectWindow of each other: along every axis the distance, taken
// the shorter way round a periodic axis, is at most the window. Treating
// every axis as periodic includes, on an open lattice, a few far pairs
// across the edge as well; it never drops a neighbour.
func (c Config) nearOnLattice(a, b int) bool {
	if c.DirectWindow <= 0 {
		return true
	}
	for k := len(c.Lattice) - 1; k >= 0; k-- {
		l := c.Lattice[k]
		d := a%l - b%l
		if d < 0 {
			d = -d
		}
		if min(d, l-d) > c.DirectWindow {
			return false
		}
		a, b = a/l, b/l
	}
	return true
}
