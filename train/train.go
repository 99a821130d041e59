package train

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"time"

	"tidemark/checkpoints"
	"tidemark/data"
	"tidemark/data/density"
	"tidemark/model"
)

// Arch is the architecture a new run builds.
type Arch struct {
	// Kind is the network: "" or "dense" for the dense MADE, "conv" for
	// the masked convolutional network on the dataset's 2-D lattice
	// (model.ConvConfig), whose Hidden are channels (default
	// DefaultConvChannels).
	Kind ArchKind
	// Window is the conv network's window (model.ConvConfig.Window);
	// 0 means DefaultConvWindow.
	Window int
	// Hidden lists the masked hidden widths; nil means two layers of
	// model.DefaultHiddenWidth(N).
	Hidden []int
	// CondHidden lists the conditioning net's hidden widths; nil means the
	// model's default, an empty non-nil slice means none.
	CondHidden []int
	// Fourier is the number of Fourier frequencies of the λ features.
	Fourier int
	// Activation is the masked hidden layers' activation.
	Activation model.Activation
	// CondActivation is the conditioning net's activation; "" means the
	// same as Activation.
	CondActivation model.Activation
	// Direct adds the masked direct input→output connection.
	Direct bool
	// DirectWindow limits the direct connection of each site to the
	// earlier sites within this distance on the dataset's lattice
	// (model.Config.DirectWindow): 0 chooses (DirectWindowFor), a negative
	// value lets every earlier site in.
	DirectWindow int
	// Order is the autoregressive order of the sites.
	Order Order
	// Symmetric makes a q = 2 model invariant under flipping every site.
	Symmetric bool
	// FiLM lets the conditioning net scale the masked layers' inputs to
	// their activations as well as shift them (see model.Config.FiLM).
	FiLM bool
	// Precision is the arithmetic of the masked products: "" or "float64"
	// (the default), or "float32" (faster, above all in the OpenBLAS build;
	// see model.Config.Precision).
	Precision string
}

// Settings are the settings of a new run.
type Settings struct {
	// Arch is the architecture.
	Arch Arch
	// Epochs is the maximum number of passes over the training samples.
	Epochs int
	// Batch is the minibatch size in snapshots.
	Batch int
	// LR is the initial learning rate; MinLR the floor of the schedule.
	LR, MinLR float64
	// Seed seeds every random choice.
	Seed uint64
	// ValFrac is the fraction of each grid point's samples kept for
	// validation (at least one sample per point).
	ValFrac float64
	// Patience is the number of epochs without a validation improvement
	// after which training stops.
	Patience int
	// Schedule is the learning-rate schedule; PlateauPatience and
	// PlateauFactor shape SchedulePlateau.
	Schedule        Schedule
	PlateauPatience int
	PlateauFactor   float64
	// WeightDecay is the decoupled (AdamW) weight decay per unit learning
	// rate, applied to weight matrices, not biases.
	WeightDecay float64
	// Clip is the maximum global L2 norm of the gradient of the mean NLL per
	// site; ≤ 0 disables clipping.
	Clip float64
	// Beta1, Beta2 and Eps are Adam's constants.
	Beta1, Beta2, Eps float64
	// Average is the time constant τ, in epochs, of an exponential moving
	// average of the weights over the optimiser's steps (Polyak averaging,
	// B. T. Polyak and A. B. Juditsky, SIAM J. Control Optim. 30, 838
	// (1992), in the exponential form of Kingma & Ba, ICLR 2015, §7.2):
	// with d = 1 − 1/(τ·steps per epoch), validation, early stopping and the
	// saved best model use θ̄_t = (1−d) Σ_s d^(t−s) θ_s / (1 − d^t), which
	// smooths out the minibatch noise of the last steps. Zero disables it.
	// It is off by default; the measurements behind that are in
	// bench/RESULTS.md ("Why the defaults").
	Average float64
	// Threads is the number of gorgonia graphs each minibatch is split
	// across (≥ 1).
	Threads int
	// Augment names the symmetries of the data's distribution (see
	// ParseAugment): each training snapshot
	// enters its minibatch mapped through a random element of the group they
	// generate. Only symmetries the system has at every grid point may be
	// named; a wrong one biases the model.
	Augment []density.Symmetry
	// Member, when non-nil, makes the run one member of an ensemble: it
	// trains on a bootstrap resample of the training snapshots (see
	// MemberSettings and ensemble.go).
	Member *Member
}

// DefaultSettings returns settings that train the demo-sized systems
// (4×4 to 16×16 Ising, 10–20 grid points, 500–2000 samples each) without
// tuning.
func DefaultSettings() Settings {
	return Settings{
		Arch:            Arch{Fourier: 1, Activation: model.Softplus, Direct: true, Order: OrderRowMajor, FiLM: true},
		Epochs:          60,
		Batch:           128,
		LR:              2e-3,
		MinLR:           1e-5,
		Seed:            1,
		ValFrac:         0.1,
		Patience:        10,
		Schedule:        SchedulePlateau,
		PlateauPatience: 3,
		PlateauFactor:   0.5,
		Clip:            1,
		Beta1:           0.9,
		Beta2:           0.999,
		Eps:             1e-8,
		Threads:         1,
	}
}

// Validate reports the first bad setting.
func (s Settings) Validate() error {
	switch {
	case s.Epochs < 1:
		return fmt.Errorf("epochs: expected at least 1, found %d", s.Epochs)
	case s.Batch < 1:
		return fmt.Errorf("batch: expected at least 1 snapshot, found %d", s.Batch)
	case !(s.LR > 0) || math.IsInf(s.LR, 0):
		return fmt.Errorf("lr: expected a positive learning rate, found %v", s.LR)
	case s.MinLR < 0 || s.MinLR > s.LR:
		return fmt.Errorf("min-lr: expected 0 ≤ min-lr ≤ lr = %v, found %v", s.LR, s.MinLR)
	case !(s.ValFrac > 0 && s.ValFrac < 1):
		return fmt.Errorf("val-frac: expected a fraction strictly between 0 and 1, found %v", s.ValFrac)
	case s.Patience < 1:
		return fmt.Errorf("patience: expected at least 1 epoch, found %d", s.Patience)
	case !(s.Average >= 0) || math.IsInf(s.Average, 0):
		return fmt.Errorf("average: expected a time constant ≥ 0 epochs (0: off), found %v", s.Average)
	case !slices.Contains(Schedules, s.Schedule):
		return fmt.Errorf("schedule: expected plateau, cosine or constant, found %q", s.Schedule)
	case s.Schedule == SchedulePlateau && (s.PlateauPatience < 1 || !(s.PlateauFactor > 0 && s.PlateauFactor < 1)):
		return fmt.Errorf("plateau schedule: expected patience ≥ 1 and a factor in (0, 1), found %d and %v", s.PlateauPatience, s.PlateauFactor)
	case s.WeightDecay < 0 || math.IsNaN(s.WeightDecay):
		return fmt.Errorf("weight-decay: expected a rate ≥ 0, found %v", s.WeightDecay)
	case math.IsNaN(s.Clip):
		return fmt.Errorf("clip: expected a gradient norm (≤ 0 for none), found %v", s.Clip)
	case !(s.Beta1 >= 0 && s.Beta1 < 1 && s.Beta2 >= 0 && s.Beta2 < 1 && s.Eps > 0):
		return fmt.Errorf("adam: expected 0 ≤ β1, β2 < 1 and ε > 0, found %v, %v, %v", s.Beta1, s.Beta2, s.Eps)
	case s.Threads < 1:
		return fmt.Errorf("threads: expected at least 1, found %d", s.Threads)
	case s.Arch.Kind != "" && !slices.Contains(ArchKinds, s.Arch.Kind):
		return fmt.Errorf("arch: expected one of %v, found %q", ArchKinds, s.Arch.Kind)
	case s.Arch.Window < 0 || s.Arch.Window > model.MaxConvWindow:
		return fmt.Errorf("window: expected 0 (default) to %d sites, found %d", model.MaxConvWindow, s.Arch.Window)
	case s.Arch.DirectWindow > 0 && (!s.Arch.Direct || s.Arch.Kind == ArchConv):
		return fmt.Errorf("direct-window: a window needs the dense network's direct connection, found direct %v, arch %s", s.Arch.Direct, s.Arch.Kind)
	case s.Arch.Kind == ArchConv && s.Arch.Order == OrderSnake:
		return fmt.Errorf("order: the conv network needs rowmajor, found snake")
	case !slices.Contains(Orders, s.Arch.Order):
		return fmt.Errorf("order: expected rowmajor or snake, found %q", s.Arch.Order)
	}
	if err := s.Member.check(); err != nil {
		return err
	}
	for _, a := range s.Augment {
		if !slices.Contains(density.Symmetries, a) {
			return fmt.Errorf("augment: expected symmetries among %s, found %q", density.JoinSymmetries(density.Symmetries, ", "), a)
		}
	}
	return nil
}

// Resume continues a run from a checkpoint. Settings come from the
// checkpoint; the fields set here (non-zero) replace them.
type Resume struct {
	// From is the checkpoint to continue.
	From *checkpoints.Checkpoint
	// Epochs, Patience and Threads, when > 0, replace the recorded values.
	Epochs, Patience, Threads int
}

// Options configure Run.
type Options struct {
	// Settings of a new run (ignored when resuming).
	Settings Settings
	// Holdout is the --holdout text of a new run (see ParseHoldout).
	Holdout string
	// Resume, if non-nil, continues a previous run instead.
	Resume *Resume
	// StopAfter, when > 0, stops after this many epochs of this call
	// (for tests and staged runs); the result can be resumed.
	StopAfter int
	// DataPath and Software are recorded in the checkpoint.
	DataPath, Software string
	// Start, if set, is called once before the first epoch with the number
	// of training snapshots per epoch and the epochs still allowed.
	Start func(trainSnapshots, epochsLeft int)
	// Progress, if set, is called with the number of training snapshots
	// processed after each minibatch.
	Progress func(n int)
	// OnEpoch, if set, is called after every completed epoch with its
	// metrics and the checkpoint of that moment; an error stops training.
	// The checkpoint's tensors share the run's buffers: they hold that
	// moment only until OnEpoch returns (save or clone them there).
	// With SaveShare > 0 the checkpoint is complete only on the epochs
	// where a save is due (ck.Best != nil); on the others it holds only
	// the header (ck.Best and ck.Last nil), which is all a progress line
	// needs.
	OnEpoch func(m checkpoints.EpochMetrics, ck *checkpoints.Checkpoint) error
	// SaveShare, when > 0, bounds the share of wall time spent building
	// and saving checkpoints: a complete checkpoint goes to OnEpoch only
	// once the time since the last one is at least 1/SaveShare times what
	// the last one cost (building it and OnEpoch), or MaxSaveInterval has
	// passed. The run's last state is returned by Run in any case; a
	// process killed without warning loses at most that interval. 0 gives
	// a complete checkpoint after every epoch.
	SaveShare float64
	// Warn, if set, receives messages about recoveries (a non-finite loss).
	Warn func(msg string)
	// Stages, if set, accumulates the wall time of each stage of the
	// epochs (for profiling the command; see bench/trainstages).
	Stages *Stages
}

// Stages is the wall time a run spent in each stage of its epochs.
type Stages struct {
	// Assemble is copying (and augmenting) the minibatches' snapshots.
	Assemble time.Duration
	// Step is the loss and gradient (BatchGraph.LossGrad).
	Step time.Duration
	// Update is gradient clipping, the Adam update and the weights'
	// moving average.
	Update time.Duration
	// Progress is the Progress callback (the progress bar).
	Progress time.Duration
	// Validate is the validation pass after every epoch.
	Validate time.Duration
	// Checkpoint is building the checkpoint handed to OnEpoch.
	Checkpoint time.Duration
	// OnEpoch is the OnEpoch callback (the command prints a line and
	// writes the checkpoint file there).
	OnEpoch time.Duration
}

// lap adds the time since *t to *d and resets *t.
func (s *Stages) lap(d *time.Duration, t *time.Time) {
	now := time.Now()
	*d += now.Sub(*t)
	*t = now
}

// MaxSaveInterval is the longest time between two complete checkpoints
// with Options.SaveShare > 0.
const MaxSaveInterval = 60 * time.Second

// ErrInterrupted is returned (wrapped) when the context is cancelled; the
// checkpoint returned with it holds the state after the last completed
// epoch (the interrupted epoch is discarded and is repeated on resume).
var ErrInterrupted = errors.New("training interrupted")

// maxNonFinite is the number of consecutive non-finite epochs after which
// training gives up.
const maxNonFinite = 3

// faultHook, set only by tests, makes the first minibatch loss of an epoch
// non-finite when it returns true.
var faultHook func(epoch int) bool

// shuffleSalt separates the epoch-shuffle streams from the per-point split
// streams drawn from the same seed.
const shuffleSalt = 0x7464_6d6b_7368_7566

// augmentSalt separates the augmentation streams from the others.
const augmentSalt = 0x7464_6d6b_6175_6721

type run struct {
	ds       *data.Dataset
	grid     *data.Grid
	st       Settings
	opt      Options
	m        *model.Model
	bg       *model.BatchGraph // the minibatch split over Threads graphs
	aug      *augmenter        // nil without Settings.Augment
	adam     *Adam
	w        [][]float64 // views of m.Weights[i].Data
	best     [][]float64
	avg      [][]float64 // the moving average's accumulator (nil without Settings.Average)
	keep     saved       // save's in-memory buffers, reused every epoch
	decay    float64     // the moving average's decay per step
	gsum     [][]float64 // gradient of the mean NLL per site of a minibatch
	trainIdx []int
	valIdx   [][]int // per grid point
	heldIdx  [][]int // per held-out point
	held     []int
	hdr      checkpoints.Header
	lr       float64
	bestVal  float64 // nats per site
}

// Run trains a model on ds and returns its checkpoint. On cancellation of
// ctx it returns the checkpoint of the last completed epoch together with an
// error wrapping ErrInterrupted.
func Run(ctx context.Context, ds *data.Dataset, opt Options) (*checkpoints.Checkpoint, error) {
	if err := ds.Validate(opt.DataPath); err != nil {
		return nil, err
	}
	if opt.Stages == nil {
		opt.Stages = new(Stages) // timed in any case; nobody reads it
	}
	r := &run{ds: ds, grid: data.NewGrid(ds), opt: opt}
	fp := checkpoints.Fingerprint(ds)
	var err error
	if opt.Resume != nil {
		err = r.resume(fp)
	} else {
		err = r.start(fp)
	}
	if err != nil {
		return nil, err
	}
	return r.loop(ctx)
}

// split makes the per-point validation split, deterministic in (seed, k).
func (r *run) split() {
	for _, k := range r.held {
		r.heldIdx = append(r.heldIdx, r.grid.Index[k])
	}
	r.valIdx, r.trainIdx = splitRows(r.grid, r.held, r.st)
}

// splitRows returns the validation rows of every grid point (nil at the
// held-out points) and the training rows, sorted: each point's rows are
// shuffled by the stream (split seed, k) and the first ValFrac of them
// validate.
func splitRows(g *data.Grid, held []int, st Settings) (val [][]int, train []int) {
	isHeld := map[int]bool{}
	for _, k := range held {
		isHeld[k] = true
	}
	val = make([][]int, g.K())
	for k, idx := range g.Index {
		if isHeld[k] {
			continue
		}
		idx = slices.Clone(idx)
		rng := rand.New(rand.NewPCG(st.splitSeed(), uint64(k)))
		rng.Shuffle(len(idx), func(i, j int) { idx[i], idx[j] = idx[j], idx[i] })
		nv := int(math.Round(st.ValFrac * float64(len(idx))))
		nv = min(max(nv, 1), len(idx)-1)
		v := slices.Clone(idx[:nv])
		slices.Sort(v)
		val[k] = v
		train = append(train, st.Member.bag(k, idx[nv:])...)
	}
	slices.Sort(train)
	return val, train
}

func (r *run) start(fp string) error {
	st := r.opt.Settings
	if err := st.Validate(); err != nil {
		return err
	}
	r.st = st
	held, err := ParseHoldout(r.opt.Holdout, r.grid)
	if err != nil {
		return err
	}
	r.held = held
	ds := r.ds
	lo, hi := make([]float64, ds.D), make([]float64, ds.D)
	for a, ax := range r.grid.Axes {
		lo[a], hi[a] = ax[0], ax[len(ax)-1]
	}
	cfg := model.DefaultConfig(ds.N, ds.Meta.Alphabet, ds.D, lo, hi)
	a := st.Arch
	if a.Hidden != nil {
		cfg.Hidden = slices.Clone(a.Hidden)
	}
	if a.CondHidden != nil {
		cfg.CondHidden = slices.Clone(a.CondHidden)
	}
	cfg.Fourier = a.Fourier
	if a.Activation != "" {
		cfg.Activation = a.Activation
	}
	if a.CondActivation != "" {
		cfg.CondActivation = a.CondActivation
	}
	cfg.Direct = a.Direct
	if a.Direct && a.Kind != ArchConv {
		if w := DirectWindowFor(a.DirectWindow, ds.Meta.Lattice); w > 0 {
			cfg.DirectWindow, cfg.Lattice = w, slices.Clone(ds.Meta.Lattice)
		}
	}
	cfg.Symmetric = a.Symmetric
	cfg.FiLM = a.FiLM
	cfg.Precision = a.Precision
	if a.Kind == ArchConv {
		lat := ds.Meta.Lattice
		if len(lat) != 2 || lat[0]*lat[1] != ds.N {
			return fmt.Errorf("arch conv: expected a 2-D lattice of %d sites in the dataset, found lattice %v", ds.N, lat)
		}
		w := a.Window
		if w == 0 {
			w = DefaultConvWindow
		}
		cfg.Conv = &model.ConvConfig{Height: lat[0], Width: lat[1], Window: w}
		if a.Hidden == nil {
			cfg.Hidden = slices.Clone(DefaultConvChannels)
		}
	}
	if a.Order == OrderSnake {
		lat := ds.Meta.Lattice
		if len(lat) != 2 {
			return fmt.Errorf("order snake: expected a 2-D lattice, found lattice %v", lat)
		}
		cfg.Order = model.SnakeOrder(lat[0], lat[1])
	}
	if err := cfg.Validate(); err != nil {
		return err
	}
	m, err := model.New(cfg, st.Seed)
	if err != nil {
		return err
	}
	r.m = m
	r.split()
	r.adam = NewAdam(r.sizes(), st.Beta1, st.Beta2, st.Eps, st.WeightDecay)
	r.lr = st.LR
	r.bestVal = math.Inf(1)
	r.hdr = checkpoints.Header{
		Software:    r.opt.Software,
		Model:       cfg,
		ParamNames:  slices.Clone(ds.Meta.ParamNames),
		Alphabet:    ds.Meta.Alphabet,
		Lattice:     slices.Clone(ds.Meta.Lattice),
		Dataset:     checkpoints.DatasetInfo{Fingerprint: fp, Path: r.opt.DataPath, Snapshots: ds.M, Sites: ds.N, Points: r.grid.K(), Source: ds.Meta.Source},
		HoldoutSpec: r.opt.Holdout,
		HeldOut:     [][]float64{},
		Metrics:     []checkpoints.EpochMetrics{},
		Training:    r.trainingRecord(),
		Optimizer:   checkpoints.OptimizerState{Method: r.method()},
	}
	for _, k := range held {
		r.hdr.HeldOut = append(r.hdr.HeldOut, slices.Clone(r.grid.Points[k]))
	}
	r.hdr.Ensemble = st.Member.record()
	return r.finishSetup(nil)
}

func (r *run) method() string {
	if r.st.WeightDecay > 0 {
		return "adamw"
	}
	return "adam"
}

func (r *run) sizes() []int {
	s := make([]int, len(r.m.Weights))
	for i, t := range r.m.Weights {
		s[i] = len(t.Data)
	}
	return s
}

func (r *run) trainingRecord() checkpoints.Training {
	st := r.st
	nv, nh := 0, 0
	for _, v := range r.valIdx {
		nv += len(v)
	}
	for _, v := range r.heldIdx {
		nh += len(v)
	}
	return checkpoints.Training{
		Epochs: st.Epochs, Batch: st.Batch, LR: st.LR, MinLR: st.MinLR, Seed: st.Seed,
		ValFrac: st.ValFrac, Patience: st.Patience, Schedule: string(st.Schedule),
		PlateauPatience: st.PlateauPatience, PlateauFactor: st.PlateauFactor,
		WeightDecay: st.WeightDecay, Clip: st.Clip, Beta1: st.Beta1, Beta2: st.Beta2, Eps: st.Eps,
		Threads: st.Threads, OrderName: string(st.Arch.Order), Augment: symmetryNames(st.Augment),
		AverageEpochs: st.Average, TrainSnapshots: len(r.trainIdx), ValSnapshots: nv, HeldSnapshots: nh,
	}
}

func (r *run) resume(fp string) error {
	res := r.opt.Resume
	ck := res.From
	h := ck.Header
	if h.Dataset.Fingerprint != fp {
		return fmt.Errorf("resume: the checkpoint was trained on a different dataset (fingerprint %.12s…, file %q), this one's fingerprint is %.12s…; resuming needs exactly the same data", h.Dataset.Fingerprint, h.Dataset.Path, fp)
	}
	if err := ck.CheckDataset(r.ds); err != nil {
		return fmt.Errorf("resume: %w", err)
	}
	if ck.AdamM == nil || ck.AdamV == nil {
		return errors.New("resume: the checkpoint holds no optimiser state")
	}
	r.st = SavedSettings(ck)
	if res.Epochs > 0 {
		r.st.Epochs = res.Epochs
	}
	if res.Patience > 0 {
		r.st.Patience = res.Patience
	}
	if res.Threads > 0 {
		r.st.Threads = res.Threads
	}
	if err := r.st.Validate(); err != nil {
		return fmt.Errorf("resume: %w", err)
	}
	for _, p := range h.HeldOut {
		k := r.grid.Find(p)
		if k < 0 {
			return fmt.Errorf("resume: held-out point %s is not a grid point of the dataset", data.FormatPoint(h.ParamNames, p))
		}
		r.held = append(r.held, k)
	}
	m, err := ck.LastModel()
	if err != nil {
		return fmt.Errorf("resume: %w", err)
	}
	r.m = m
	r.split()
	r.adam = NewAdam(r.sizes(), r.st.Beta1, r.st.Beta2, r.st.Eps, r.st.WeightDecay)
	for i := range r.adam.M {
		if len(ck.AdamM[i].Data) != len(r.adam.M[i]) || len(ck.AdamV[i].Data) != len(r.adam.V[i]) {
			return fmt.Errorf("resume: optimiser state of %q has the wrong size", ck.AdamM[i].Name)
		}
		copy(r.adam.M[i], ck.AdamM[i].Data)
		copy(r.adam.V[i], ck.AdamV[i].Data)
	}
	if (h.Training.AverageEpochs > 0) != (ck.Average != nil) {
		return fmt.Errorf("resume: the checkpoint records weight averaging over %v epochs but holds %d averaged tensors", h.Training.AverageEpochs, len(ck.Average))
	}
	if ck.Average != nil {
		r.avg = make([][]float64, len(ck.Average))
		for i, t := range ck.Average {
			if len(t.Data) != len(r.adam.M[i]) {
				return fmt.Errorf("resume: averaged weights of %q have the wrong size", t.Name)
			}
			r.avg[i] = slices.Clone(t.Data)
		}
	}
	o := h.Optimizer
	r.adam.Step = o.Step
	r.lr = o.LR
	r.bestVal = o.BestVal
	if h.BestEpoch == 0 {
		r.bestVal = math.Inf(1)
	}
	r.hdr = h
	r.hdr.Software = r.opt.Software
	r.hdr.Stopped = ""
	r.hdr.Training = r.trainingRecord()
	r.hdr.Metrics = slices.Clone(h.Metrics)
	best := make([][]float64, len(ck.Best))
	for i, t := range ck.Best {
		best[i] = slices.Clone(t.Data)
	}
	return r.finishSetup(best)
}

// finishSetup builds the graphs and buffers; best, if non-nil, are the
// best weights so far.
func (r *run) finishSetup(best [][]float64) error {
	for _, t := range r.m.Weights {
		r.w = append(r.w, t.Data)
	}
	r.adam.Decay = make([]bool, len(r.m.Weights))
	for i, t := range r.m.Weights {
		r.adam.Decay[i] = len(t.Shape) >= 2
	}
	r.adam.SetActive(r.m.ActiveRuns())
	if best == nil {
		best = make([][]float64, len(r.w))
		for i, w := range r.w {
			best[i] = slices.Clone(w)
		}
	}
	r.best = best
	if r.st.Average > 0 {
		steps := (len(r.trainIdx) + r.st.Batch - 1) / r.st.Batch
		r.decay = 1 - 1/math.Max(r.st.Average*float64(steps), 1)
		if r.avg == nil {
			r.avg = make([][]float64, len(r.w))
			for i, w := range r.w {
				r.avg[i] = make([]float64, len(w))
			}
		}
	}
	bg, err := model.NewBatchGraph(r.m, r.st.Batch, r.st.Threads)
	if err != nil {
		return err
	}
	r.bg = bg
	if r.aug, err = newAugmenter(r.st.Augment, r.ds.Meta.Lattice, r.ds.Meta.Alphabet); err != nil {
		return err
	}
	r.gsum = make([][]float64, len(r.w))
	for i, w := range r.w {
		r.gsum[i] = make([]float64, len(w))
	}
	if len(r.trainIdx) == 0 {
		return errors.New("no training samples left after the validation split and holdout")
	}
	return nil
}

// accumulate adds the current weights to the moving average, if any.
func (r *run) accumulate() {
	if r.avg == nil {
		return
	}
	d := r.decay
	for i, w := range r.w {
		a := r.avg[i]
		for j, v := range w {
			a[j] = d*a[j] + (1-d)*v
		}
	}
}

// averaged writes the averaged weights, debiased for the steps taken, into
// dst.
func (r *run) averaged(dst [][]float64) {
	c := 1 / (1 - math.Pow(r.decay, float64(r.adam.Step)))
	for i, a := range r.avg {
		for j, v := range a {
			dst[i][j] = v * c
		}
	}
}

// saved is the optimiser state before an epoch: in memory, or for a
// large model (above spillValues weights) in a temporary file.
type saved struct {
	w, m, v, avg [][]float64
	file         *spill
	step         int
}

func clone2(a [][]float64) [][]float64 {
	out := make([][]float64, len(a))
	for i, x := range a {
		out[i] = slices.Clone(x)
	}
	return out
}

func copy2(dst, src [][]float64) {
	for i := range dst {
		copy(dst[i], src[i])
	}
}

func (r *run) save() saved {
	n := 0
	for _, w := range r.w {
		n += len(w)
	}
	if n > spillValues {
		// A file that cannot be written leaves the copy in memory.
		if f, err := newSpill(r.w, r.adam.M, r.adam.V, r.avg); err == nil {
			return saved{file: f, step: r.adam.Step}
		}
	}
	// The same buffers serve every epoch (only the last state before an
	// epoch is ever restored): fresh 3×15 MB copies at N = 1024 cost
	// 0.1 s an epoch in page faults.
	if r.keep.w == nil {
		r.keep = saved{w: clone2(r.w), m: clone2(r.adam.M), v: clone2(r.adam.V), avg: clone2(r.avg)}
	} else {
		copy2(r.keep.w, r.w)
		copy2(r.keep.m, r.adam.M)
		copy2(r.keep.v, r.adam.V)
		copy2(r.keep.avg, r.avg)
	}
	s := r.keep
	s.step = r.adam.Step
	return s
}

func (r *run) restore(s saved) error {
	if s.file != nil {
		if err := s.file.load(r.w, r.adam.M, r.adam.V, r.avg); err != nil {
			return err
		}
	} else {
		copy2(r.w, s.w)
		copy2(r.adam.M, s.m)
		copy2(r.adam.V, s.v)
		copy2(r.avg, s.avg)
	}
	r.adam.Step = s.step
	return nil
}

func (r *run) warn(format string, args ...any) {
	if r.opt.Warn != nil {
		r.opt.Warn(fmt.Sprintf(format, args...))
	}
}

// stopReason says whether the run stops before epoch, done epochs into
// this call of Train.
func (r *run) stopReason(epoch, done int) StopReason {
	switch {
	case epoch > r.st.Epochs:
		return StopMaxEpochs
	case r.hdr.Optimizer.SinceBest >= r.st.Patience:
		return StopEarly
	case r.opt.StopAfter > 0 && done >= r.opt.StopAfter:
		return StopAfterLimit
	}
	return NotStopped
}

// symmetryNames returns the names of syms for a checkpoint's record.
func symmetryNames(syms []density.Symmetry) []string {
	if syms == nil {
		return nil
	}
	out := make([]string, len(syms))
	for i, s := range syms {
		out[i] = string(s)
	}
	return out
}

// symmetriesOf reads the symmetry names of a checkpoint's record.
func symmetriesOf(names []string) []density.Symmetry {
	if names == nil {
		return nil
	}
	out := make([]density.Symmetry, len(names))
	for i, n := range names {
		out[i] = density.Symmetry(n)
	}
	return out
}

func (r *run) loop(ctx context.Context) (*checkpoints.Checkpoint, error) {
	N := float64(r.ds.N)
	nonFinite := 0
	done := 0
	if r.opt.Start != nil {
		left := max(r.st.Epochs-r.hdr.Optimizer.Epoch, 0)
		if r.opt.StopAfter > 0 {
			left = min(left, r.opt.StopAfter)
		}
		r.opt.Start(len(r.trainIdx), left)
	}
	sched := newSchedule(r.st)
	lastSave, saveCost := time.Now(), time.Duration(0)
	for {
		epoch := r.hdr.Optimizer.Epoch + 1
		if stop := r.stopReason(epoch, done); stop != NotStopped {
			r.hdr.Stopped = stop.String()
			break
		}
		r.lr = sched.epochRate(epoch, r.lr, r.hdr.Optimizer.LRScale)
		before := r.save()
		t0 := time.Now()
		trainNLL, err := r.epoch(ctx, epoch)
		if errors.Is(err, ErrInterrupted) {
			rerr := r.restore(before)
			before.file.close()
			if rerr != nil {
				return nil, rerr
			}
			r.hdr.Stopped = StopInterrupted.String()
			ck, cerr := r.checkpoint()
			if cerr != nil {
				return nil, cerr
			}
			return ck, err
		}
		if err != nil {
			before.file.close()
			return nil, err
		}
		trainSec := time.Since(t0).Seconds()
		ts := r.opt.Stages
		tv := time.Now()
		val, valSE, current, err := r.validate(trainNLL)
		ts.lap(&ts.Validate, &tv)
		if err != nil {
			before.file.close()
			return nil, err
		}
		if math.IsNaN(trainNLL) || math.IsInf(trainNLL, 0) || math.IsNaN(val) || math.IsInf(val, 0) {
			nonFinite++
			err := r.recoverNonFinite(before, epoch, nonFinite)
			before.file.close()
			if err != nil {
				return nil, err
			}
			continue
		}
		before.file.close()
		nonFinite = 0
		sec := time.Since(t0).Seconds()
		met := checkpoints.EpochMetrics{
			Epoch:            epoch,
			TrainBitsPerSite: trainNLL / N / math.Ln2,
			ValBitsPerSite:   val / math.Ln2,
			SamplesPerS:      float64(len(r.trainIdx)) / math.Max(trainSec, 1e-9),
			Seconds:          sec,
			LR:               r.lr,
		}
		met.ValStdErrBitsPerSite = bitsOrZero(valSE)
		r.hdr.Metrics = append(r.hdr.Metrics, met)
		r.keepBest(epoch, val, sched)
		if r.hdr.BestEpoch == epoch {
			r.hdr.BestValStdErrBitsPerSite = met.ValStdErrBitsPerSite
		}
		if current != nil {
			copy2(r.w, current)
		}
		done++
		if r.opt.OnEpoch != nil {
			tv = time.Now()
			saveStart := tv
			since := tv.Sub(lastSave)
			due := r.opt.SaveShare <= 0 || since >= MaxSaveInterval ||
				since.Seconds()*r.opt.SaveShare >= saveCost.Seconds()
			ck := &checkpoints.Checkpoint{Header: r.hdr}
			if due {
				if ck, err = r.checkpoint(); err != nil {
					return nil, err
				}
			}
			ts.lap(&ts.Checkpoint, &tv)
			if err := r.opt.OnEpoch(met, ck); err != nil {
				return nil, err
			}
			ts.lap(&ts.OnEpoch, &tv)
			if due {
				lastSave = time.Now()
				saveCost = lastSave.Sub(saveStart)
			}
		}
	}
	return r.checkpoint()
}

// validate is the validation stage of an epoch whose training NLL was
// trainNLL: the validation NLL in nats per site and its standard error, NaN
// when the training loss was already NaN. With averaging the averaged weights are validated (and
// kept as the best); the optimiser's own are returned as current, to be
// restored after.
func (r *run) validate(trainNLL float64) (val, valSE float64, current [][]float64, err error) {
	if math.IsNaN(trainNLL) {
		return math.NaN(), math.NaN(), nil, nil
	}
	if r.avg != nil {
		current = clone2(r.w)
		r.averaged(r.w)
	}
	val, valSE, err = r.nllStats(r.valIdx, r.grid.Points, r.m)
	if err != nil {
		return 0, 0, nil, err
	}
	return val, valSE, current, nil
}

// recoverNonFinite restores the weights before an epoch whose loss was not
// finite (the nonFinite-th in a row) and halves the learning rate, or gives
// up after maxNonFinite such epochs.
func (r *run) recoverNonFinite(before saved, epoch, nonFinite int) error {
	if err := r.restore(before); err != nil {
		return err
	}
	if nonFinite >= maxNonFinite {
		return fmt.Errorf("training diverged: the loss was not finite in %d epochs in a row (at epoch %d, learning rate %.3g); try a smaller --lr or --clip", nonFinite, epoch, r.lr)
	}
	r.lr /= 2
	if r.hdr.Optimizer.LRScale == 0 {
		r.hdr.Optimizer.LRScale = 1
	}
	r.hdr.Optimizer.LRScale /= 2
	r.warn("epoch %d: the loss became non-finite; restored the weights of the last good epoch and halved the learning rate to %.3g", epoch, r.lr)
	return nil
}

// keepBest records epoch's validation NLL val: a clear improvement keeps the
// weights as the best, otherwise the schedule sees one more epoch without
// improvement.
func (r *run) keepBest(epoch int, val float64, sched lrSchedule) {
	o := &r.hdr.Optimizer
	o.Epoch = epoch
	if val < r.bestVal-1e-4*math.Abs(r.bestVal) || r.hdr.BestEpoch == 0 {
		r.bestVal = val
		copy2(r.best, r.w)
		r.hdr.BestEpoch = epoch
		r.hdr.BestValBitsPerSite = val / math.Ln2
		o.SinceBest, o.SincePlateau = 0, 0
		return
	}
	o.SinceBest++
	o.SincePlateau++
	var restart bool
	if r.lr, restart = sched.stalled(r.lr, o.SincePlateau); restart {
		o.SincePlateau = 0
	}
}

// epoch runs one pass over the shuffled training samples and returns the
// mean training NLL in nats per snapshot, NaN if a loss or gradient was not
// finite.
func (r *run) epoch(ctx context.Context, epoch int) (float64, error) {
	ds := r.ds
	N, D := ds.N, ds.D
	order := slices.Clone(r.trainIdx)
	rng := rand.New(rand.NewPCG(r.st.Seed^shuffleSalt, uint64(epoch)))
	rng.Shuffle(len(order), func(i, j int) { order[i], order[j] = order[j], order[i] })
	// The symmetry elements come from their own stream, so that adding
	// augmentation leaves the shuffle unchanged.
	arng := rand.New(rand.NewPCG(r.st.Seed^augmentSalt, uint64(epoch)))
	B := r.st.Batch
	xs := make([]uint8, B*N)
	ps := make([]float64, B*D)
	sum := 0.0
	ts := r.opt.Stages
	t := time.Now()
	for b := 0; b < len(order); b += B {
		if ctx.Err() != nil {
			return 0, fmt.Errorf("%w at epoch %d", ErrInterrupted, epoch)
		}
		idx := order[b:min(b+B, len(order))]
		n := len(idx)
		for i, m := range idx {
			if r.aug != nil {
				r.aug.apply(xs[i*N:(i+1)*N], ds.States[m*N:(m+1)*N], arng)
			} else {
				copy(xs[i*N:(i+1)*N], ds.States[m*N:(m+1)*N])
			}
			copy(ps[i*D:(i+1)*D], ds.Params[m*D:(m+1)*D])
		}
		ts.lap(&ts.Assemble, &t)
		// The minibatch is split over the threads' graphs; gsum is the
		// gradient of the mean NLL per site (the mean per snapshot over N).
		loss, err := r.bg.LossGrad(xs[:n*N], ps[:n*D], n, 1/float64(N), r.gsum)
		if err != nil {
			return 0, err
		}
		ts.lap(&ts.Step, &t)
		if b == 0 && faultHook != nil && faultHook(epoch) {
			loss = math.NaN()
		}
		norm := ClipGlobalNorm(r.gsum, r.st.Clip)
		if math.IsNaN(loss) || math.IsInf(loss, 0) || math.IsNaN(norm) || math.IsInf(norm, 0) {
			return math.NaN(), nil
		}
		r.adam.UpdateThreads(r.w, r.gsum, r.lr, r.st.Threads)
		r.accumulate()
		sum += loss * float64(n)
		ts.lap(&ts.Update, &t)
		if r.opt.Progress != nil {
			r.opt.Progress(n)
		}
		ts.lap(&ts.Progress, &t)
	}
	return sum / float64(len(order)), nil
}

// checkpoint builds the checkpoint of the current state. Its tensors are
// views of the run's own buffers, not copies (at 4096 sites a copy of all
// four is over 600 MB): they are valid until training continues, which is
// all OnEpoch and the end of Run need.
func (r *run) checkpoint() (*checkpoints.Checkpoint, error) {
	mk := func(src [][]float64) []model.Tensor {
		out := make([]model.Tensor, len(src))
		for i, t := range r.m.Weights {
			out[i] = model.Tensor{Name: t.Name, Shape: slices.Clone(t.Shape), Data: src[i]}
		}
		return out
	}
	ck := &checkpoints.Checkpoint{Best: mk(r.best), Last: mk(r.w), AdamM: mk(r.adam.M), AdamV: mk(r.adam.V)}
	if r.avg != nil {
		ck.Average = mk(r.avg)
	}
	h := r.hdr
	h.Created = time.Now().UTC().Format(time.RFC3339)
	h.Metrics = slices.Clone(r.hdr.Metrics)
	h.Optimizer.Step = r.adam.Step
	h.Optimizer.LR = r.lr
	h.Optimizer.Method = r.method()
	h.Optimizer.BestVal = 0
	if r.hdr.BestEpoch > 0 {
		h.Optimizer.BestVal = r.bestVal
	}
	h.Optimizer.RNG = "derived: validation split of grid point k from PCG(seed, k); shuffle of epoch e from PCG(seed^0x74646d6b73687566, e); initial weights from the seed"
	h.HeldOutBitsPerSite = nil
	if len(r.held) > 0 && r.hdr.BestEpoch > 0 {
		bm, err := model.FromWeights(r.m.Cfg, ck.Best)
		if err != nil {
			return nil, err
		}
		pts := make([][]float64, len(r.held))
		for i, k := range r.held {
			pts[i] = r.grid.Points[k]
		}
		v, err := r.nll(r.heldIdx, pts, bm)
		if err != nil {
			return nil, err
		}
		if !math.IsNaN(v) && !math.IsInf(v, 0) {
			b := v / math.Ln2
			h.HeldOutBitsPerSite = &b
		}
	}
	return &checkpoints.Checkpoint{Header: h, Best: ck.Best, Last: ck.Last, AdamM: ck.AdamM, AdamV: ck.AdamV, Average: ck.Average}, nil
}

// DefaultDirectWindow is the smallest window DirectWindowFor gives the
// direct connection on a 2-D lattice when the settings leave it to the
// trainer: each site's logits read the earlier sites up to four rows above
// and four columns either side linearly, while the hidden layers still read
// every earlier site (on a lattice of 9×9 or less the window holds every
// site, so nothing changes there). Measured on Ising data
// (bench/RESULTS.md, "A local direct connection"): with every earlier site
// in the direct connection the lbc, pbm, local and Fisher curves of 32×32
// lattices peaked up to 0.02 from the exact density's peaks on the same
// snapshots; with a window of 4 they lay within 0.01. A window of 1/16 of
// the lattice (2 on 32×32, 4 on 64×64) fitted the ordered phase badly, and
// 2 put extra Fisher peaks in at 16×16.
const DefaultDirectWindow = 4

// DirectWindowFor resolves Arch.DirectWindow w for a dataset on lattice:
// w > 0 is kept, w < 0 means no window (0), and w = 0 gives, on a 2-D
// lattice, an eighth of its longer side but at least DefaultDirectWindow
// (4 up to 32×32, 8 on 64×64), and no window otherwise (a chain, or
// imported data whose geometry tidemark does not know).
func DirectWindowFor(w int, lattice []int) int {
	switch {
	case w > 0:
		return w
	case w < 0 || len(lattice) != 2:
		return 0
	}
	return max(DefaultDirectWindow, (max(lattice[0], lattice[1])+7)/8)
}

// DefaultConvWindow is the conv network's default window: the first layer
// reads the sites up to this many rows above and columns either side.
const DefaultConvWindow = 2

// DefaultConvChannels are the conv network's default hidden channels.
var DefaultConvChannels = []int{16, 16}
