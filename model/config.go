package model

import (
	"fmt"
	"math"
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
	Sites      int    `json:"sites"`       // N
	Alphabet   int    `json:"alphabet"`    // q ≥ 2
	ParamDim   int    `json:"param_dim"`   // d ≥ 1
	Hidden     []int  `json:"hidden"`      // masked hidden widths, e.g. [256, 256]
	CondHidden []int  `json:"cond_hidden"` // conditioning net hidden widths, e.g. [64]; may be empty
	Fourier    int    `json:"fourier"`     // F: features t, sin(πft), cos(πft), f=1..F
	Activation string `json:"activation"`  // "softplus", "relu" or "tanh", for the masked hidden layers
	// CondActivation is the conditioning net's activation; "" (the
	// default) means the same as Activation. softplus and tanh make the
	// biases smooth in λ; relu makes them piecewise linear.
	CondActivation string    `json:"cond_activation,omitempty"`
	Direct         bool      `json:"direct"`    // direct masked input→output connection
	Order          []int     `json:"order"`     // Order[i] = site at autoregressive position i (a permutation of 0..N-1)
	Symmetric      bool      `json:"symmetric"` // q=2 only: log p_sym(x) = log((p(x)+p(1-x))/2)
	ParamLo        []float64 `json:"param_lo"`  // per-axis range of the training data, mapped to [-1, 1]
	ParamHi        []float64 `json:"param_hi"`
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

// Activations lists the supported activation names.
var Activations = []string{"relu", "tanh", "softplus"}

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
// How they were chosen: two hidden layers is the depth Germain et al.
// (ICML 2015) found to help over one; the width rule is explained at
// DefaultHiddenWidth. The conditioning net only has to produce smooth
// functions of a few parameters, so 64 units are plenty and cost little next
// to the masked layers. F = 2 lets the features resolve a change over a
// quarter of the training range (a transition region) while keeping the
// feature count at 5 per axis. (The trainer's defaults, train.DefaultSettings,
// use F = 1, which interpolated held-out temperatures of the 4×4 Ising
// check better; the benchmarks keep F = 2, the shape their peer was written
// for.)
//
// softplus, log(1+e^z) (C. Dugas et al., NIPS 2000), is the default
// activation: smooth like tanh and unbounded like relu, it makes log p a
// smooth function of λ, which the indicators that compare neighbouring
// points (local, fisher) and the derivative in λ (fisher_deriv) need. relu
// fits the trained points as well but interpolates between them with
// kinks. On exact samples of the 4×4 Ising model (12 temperatures, two held
// out, 2000 snapshots each) local and fisher differed from exact by 0.37
// and 0.66 of their range with relu and 0.18 and 0.18 with softplus; with
// four times the data relu did not improve (0.48, 1.3) while softplus did
// (0.10, 0.08); tanh lay in between. On the Monte Carlo demos (10×10 and
// 12×12, against the exact density of the same snapshots) relu's local,
// fisher and fisher_deriv curves were 1.6–5.8 of their range off, softplus's
// 0.22–0.53; the lbc and pbm curves were as close or closer with softplus,
// sl a little farther (0.21–0.28 against 0.21–0.23), and the position of
// the flat-topped lbc maximum came out lower (by 1.2–3.9%, relu's by
// +0.4–0.7%). softplus costs an exp and a log per hidden unit: at N = 256,
// H = 512 a training step runs at 0.75× and scoring at 0.62× the speed of
// relu (BenchmarkActivation, one core). The direct
// connection adds a masked logistic-regression term x_<i → x_i, which alone
// already captures nearest-neighbour couplings and costs N·N weights.
//
// FiLM is on: with additive conditioning alone the net must build products
// like (1/T)·(local field) out of bias shifts, and the neighbour indicators
// showed it. On exact samples of the 4×4 Ising model (12 temperatures, two
// held out, 4000 snapshots each, 30 epochs, training seed 1) the largest
// errors of local, fisher and fisher_deriv at the grid points went from
// 0.12, 0.14 and 0.33 of their range to 0.06, 0.08 and 0.14 with FiLM, and
// to 0.05, 0.06 and 0.10 with FiLM and the lattice's symmetries as data
// augmentation (train --augment); between grid points (exact sums; every
// indicator but lbc) from 0.13–0.37 to 0.06–0.14, and to 0.05–0.13 with
// augmentation; the mean KL per site fell from
// 0.0015 to 0.0005, and the spurious ordered-phase bump of fisher went. On
// the 12×12 Monte Carlo demo data (600 snapshots per point, two seeds) FiLM
// alone brought sl closer to exact (0.14–0.20 of the range against
// 0.28–0.31) but local and fisher farther (0.41–0.56 against 0.25–0.35);
// with augmentation they were 0.21–0.31, the closest of all. So train with
// --augment wherever the system has the symmetries. A FiLM training step
// costs about 1.4× an additive one in the pure-Go build and 1.3× in the
// openblas build (BenchmarkFiLM, N = 256, H = 256, float64, one core, one
// λ per snapshot, medians of 5 at load ≈ 1: 8,987 against 12,351 and
// 11,800 against 15,184 snapshots/s; the pure-Go FiLM step keeps
// gorgonia's slower softplus so that it trains bit for bit as before, see
// film.go); on grid data, where the conditioning heads run once per
// distinct λ (rowGroups), less. Scoring costs one multiplication more per
// unit (within the noise).
func DefaultConfig(n, q, d int, lo, hi []float64) Config {
	w := DefaultHiddenWidth(n)
	return Config{
		Sites:      n,
		Alphabet:   q,
		ParamDim:   d,
		Hidden:     []int{w, w},
		CondHidden: []int{64},
		Fourier:    2,
		Activation: "softplus",
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

func actIndex(name string) int {
	for i, a := range Activations {
		if a == name {
			return i
		}
	}
	return -1
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

// condAct returns the conditioning net's activation name.
func (c Config) condAct() string {
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
