package study

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"time"

	"tidemark/checkpoints"
	"tidemark/data"
	"tidemark/data/density"
	"tidemark/data/ising"
	"tidemark/indicator"
	"tidemark/indicator/report"
	"tidemark/train"
)

// OnsagerTc is the critical temperature of the infinite square-lattice
// Ising model with J = 1, T_c = 2/ln(1+√2) (L. Onsager, Phys. Rev. 65, 117
// (1944)).
var OnsagerTc = 2 / math.Log(1+math.Sqrt2)

// ScanModelSamples is the default number of snapshots a scan draws from a
// source at every point of a refined or zoomed grid (fisher_deriv
// included; on the data's own grid it reads the data's snapshots).
const ScanModelSamples = 1000

// Files of the demo folder.
const (
	DemoData  = "monolayer.npz"
	DemoModel = "monolayer.ckpt"
	DemoScan  = "scan"
	DemoPage  = "report.html"
)

// ErrStopped is returned (wrapped) when the context ends a demo before it
// is complete; nothing has then been written.
var ErrStopped = errors.New("demo stopped")

// Demo is the built-in scenario: the 2-D Ising model (J = 1, h = 0) on a
// Size×Size periodic lattice, Samples snapshots at each of Points
// temperatures from TLo to THi, a model trained for at most Epochs epochs,
// and a scan with Bootstrap resamples (ModelSamples model snapshots per
// point wherever the scan draws from the model).
type Demo struct {
	Size, Points, Samples, Epochs, ModelSamples, Bootstrap int
	TLo, THi                                               float64
	// Symmetric makes the model spin-flip symmetric.
	Symmetric bool
	// Seed seeds the simulation, the training and the scan.
	Seed uint64
	// Threads is the number of worker goroutines (at least one).
	Threads int
	// Out is the output folder; an existing non-empty one is replaced only
	// with Force.
	Out   string
	Force bool
	// Software is the version recorded in the checkpoint.
	Software string
	// Progress, if set, is called at the start of every stage with its
	// name and number of steps and returns the function that receives the
	// steps done (as indicator.Config.Progress).
	Progress func(stage string, total int) func(int)
}

// DefaultDemo returns the built-in scenario. Its sizes were chosen by
// measuring the whole run on 2 shared cores.
func DefaultDemo() Demo {
	return Demo{
		Out: "tidemark-demo", Seed: 1, Threads: runtime.NumCPU(),
		Size: 12, Points: 14, Samples: 600, Epochs: 30, ModelSamples: ScanModelSamples, Bootstrap: 100,
		TLo: 1.6, THi: 3.2,
	}
}

// Outcome is what a demo found.
type Outcome struct {
	// Indicator names the indicators combined into the estimate.
	Indicator string
	// T and Err are the estimate from the model (Model.T, Model.Err).
	T, Err   float64
	Kaufman  float64 // heat-capacity peak of the finite lattice
	KaufmanF float64 // peak of C/T² (the Fisher information per site) of the finite lattice
	// Same is the estimate from the same indicators computed with the
	// exact density on the same snapshots.
	Same float64
	// Model and Exact are the combined estimates from the model and from
	// the exact density; Z is how many combined standard errors apart they
	// lie and Agreement says it in words.
	Model, Exact Estimate
	Z            float64
	Agreement    string
	Page         string
}

// Validate checks the scenario's settings, naming the flag of each.
func (d *Demo) Validate() error {
	switch {
	case d.Size < 2:
		return fmt.Errorf("--size: expected a lattice side of at least 2 sites, found %d", d.Size)
	case d.Points < 5:
		return fmt.Errorf("--points: expected at least 5 temperatures, found %d", d.Points)
	case d.Samples < 10:
		return fmt.Errorf("--samples: expected at least 10 snapshots per temperature, found %d", d.Samples)
	case d.Epochs < 1:
		return fmt.Errorf("--epochs: expected at least 1, found %d", d.Epochs)
	case d.ModelSamples < 1:
		return fmt.Errorf("--model-samples: expected at least 1, found %d", d.ModelSamples)
	case d.Bootstrap < 2:
		return fmt.Errorf("--bootstrap: expected at least 2 resamples (the estimate needs an error), found %d", d.Bootstrap)
	case !(d.TLo > 0) || !(d.THi > d.TLo):
		return fmt.Errorf("--t-lo, --t-hi: expected 0 < lo < hi, found %v and %v", d.TLo, d.THi)
	}
	return nil
}

// progress returns the step function of a new stage, or nil.
func (d *Demo) progress(stage string, total int) func(int) {
	if d.Progress == nil {
		return nil
	}
	return d.Progress(stage, total)
}

// Run simulates, trains, scans and compares, printing what it does and
// finds to w, and installs the folder d.Out only when everything is done:
// an error or a cancelled ctx (ErrStopped) leaves nothing behind.
func (d *Demo) Run(ctx context.Context, w io.Writer) (*Outcome, error) {
	if err := d.Validate(); err != nil {
		return nil, err
	}
	if err := report.CheckDir(d.Out, d.Force); err != nil {
		return nil, err
	}
	// Everything is built in a temporary folder beside the output and moved
	// into place at the end, so an interrupted demo leaves nothing behind.
	clean := filepath.Clean(d.Out)
	tmp, err := os.MkdirTemp(filepath.Dir(clean), "."+filepath.Base(clean)+".tmp-*")
	if err != nil {
		return nil, fmt.Errorf("%s: cannot create a temporary folder: %w", d.Out, err)
	}
	defer os.RemoveAll(tmp)
	p := func(format string, a ...any) { fmt.Fprintf(w, format, a...) }
	p("demo: an easy-axis magnetic monolayer imaged at %d temperatures, T = %g to %g\n", d.Points, d.TLo, d.THi)
	p("      (2-D Ising model, J = 1, h = 0, %d×%d periodic lattice, %d snapshots per temperature)\n", d.Size, d.Size, d.Samples)
	ds, err := d.simulate(ctx, w, tmp)
	if err != nil {
		return nil, err
	}
	ck, err := d.train(ctx, w, ds, tmp)
	if err != nil {
		return nil, err
	}
	res, eres, err := d.scan(ctx, w, ck, ds)
	if err != nil {
		return nil, err
	}
	out, exactPeak, err := d.compare(res, eres)
	if err != nil {
		return nil, err
	}
	sum, err := d.install(tmp, clean, out, res, exactPeak, ds, ck)
	if err != nil {
		return nil, err
	}
	d.print(w, out, res, exactPeak, sum)
	return out, nil
}

// simulate draws the snapshots and writes the dataset into dir.
func (d *Demo) simulate(ctx context.Context, w io.Writer, dir string) (*data.Dataset, error) {
	start := time.Now()
	L := d.Size
	gridText := fmt.Sprintf("T=%g:%g:%d", d.TLo, d.THi, d.Points)
	spec, err := data.ParseGridSpec(gridText)
	if err != nil {
		return nil, err
	}
	cfg := ising.Config{
		Lattice: ising.Lattice{Ly: L, Lx: L}, Fixed: ising.Couplings{Jx: 1, Jy: 1}, Axes: []string{"T"},
		Points: spec.Points(), Samples: d.Samples, Seed: d.Seed, Threads: d.Threads,
		Progress: d.progress("simulate", d.Points*d.Samples),
	}
	sim, err := ising.Simulate(ctx, cfg)
	if err != nil {
		if ctx.Err() != nil {
			return nil, ErrStopped
		}
		return nil, fmt.Errorf("simulate: %w", err)
	}
	ds, err := sim.Dataset(cfg, gridText)
	if err != nil {
		return nil, err
	}
	if err := ds.Validate(DemoData); err != nil {
		return nil, fmt.Errorf("internal check of the dataset: %w", err)
	}
	if err := ds.Write(filepath.Join(dir, DemoData), false); err != nil {
		return nil, err
	}
	maxTau := 0.0
	for _, pt := range sim.Points {
		maxTau = math.Max(maxTau, math.Max(pt.TauEnergy, pt.TauAbsM))
	}
	fmt.Fprintf(w, "simulated %d snapshots in %.1f s (Wolff clusters, samples %s apart; largest autocorrelation time %.3g sweeps)\n",
		ds.M, time.Since(start).Seconds(), "2τ", maxTau)
	return ds, nil
}

// augment lists the symmetries the demo declares: the isotropic Ising
// model on a periodic square lattice is invariant under translations,
// mirrors, quarter turns and the spin flip at every temperature (what a
// user declares with train --augment).
var augment = []density.Symmetry{density.SymTranslate, density.SymMirror, density.SymRotate, density.SymFlip}

// train fits the model and writes the checkpoint into dir.
func (d *Demo) train(ctx context.Context, w io.Writer, ds *data.Dataset, dir string) (*checkpoints.Checkpoint, error) {
	start := time.Now()
	st := train.DefaultSettings()
	st.Epochs = d.Epochs
	st.Seed = d.Seed
	st.Threads = d.Threads
	st.Arch.Symmetric = d.Symmetric
	st.Augment = augment
	opt := train.Options{Settings: st, DataPath: DemoData, Software: d.Software}
	var step func(int)
	opt.Start = func(perEpoch, epochs int) { step = d.progress("train", perEpoch*epochs) }
	opt.Progress = func(n int) {
		if step != nil {
			step(n)
		}
	}
	ck, err := train.Run(ctx, ds, opt)
	if err != nil {
		if errors.Is(err, train.ErrInterrupted) || ctx.Err() != nil {
			return nil, ErrStopped
		}
		return nil, fmt.Errorf("train: %w", err)
	}
	if err := ck.Save(filepath.Join(dir, DemoModel), false); err != nil {
		return nil, err
	}
	h := ck.Header
	fmt.Fprintf(w, "trained %d epochs in %.0f s (%s): best validation NLL %s bits per site at epoch %d, %d parameters\n",
		h.Optimizer.Epoch, time.Since(start).Seconds(), h.Stopped, checkpoints.WithError(h.BestValBitsPerSite, h.BestValStdErrBitsPerSite, 4), h.BestEpoch, ck.NumParams())
	fmt.Fprintf(w, "      (snapshots augmented by the lattice's symmetries: %s; train --augment)\n", density.JoinSymmetries(st.Augment, ", "))
	return ck, nil
}

// scan computes the indicators with the model, and the same indicators
// with the exact density of the same snapshots (Kaufman's ln Z; the lattice
// is too large to enumerate but each snapshot's probability is exact), the
// like-for-like reference for every curve.
func (d *Demo) scan(ctx context.Context, w io.Writer, ck *checkpoints.Checkpoint, ds *data.Dataset) (res, eres *indicator.Result, err error) {
	start := time.Now()
	mdl, err := ck.Model()
	if err != nil {
		return nil, nil, err
	}
	cfg := indicator.Config{ModelSamples: d.ModelSamples, Bootstrap: d.Bootstrap, Threads: d.Threads, Seed: d.Seed, Progress: d.Progress}
	// As scan does for a model of its own data: the peaks are compared on
	// the snapshots the model did not train on as well.
	if cfg.Unseen, err = train.UnseenRows(ds, ck); err != nil {
		return nil, nil, err
	}
	var stopped bool
	res, stopped, err = Scan(ctx, []density.Source{mdl}, ds, cfg)
	if stopped {
		return nil, nil, ErrStopped
	}
	if err != nil {
		return nil, nil, fmt.Errorf("scan: %w", err)
	}
	fmt.Fprintf(w, "scanned %d indicators in %.0f s (%d bootstrap resamples; fisher_deriv over the data's snapshots, as scan on the data's grid)\n",
		len(res.Curves), time.Since(start).Seconds(), res.Bootstrap)
	ksrc, err := ising.NewKaufmanSource(ising.Lattice{Ly: d.Size, Lx: d.Size}, []string{"T"}, ising.Couplings{Jx: 1, Jy: 1})
	if err != nil {
		return nil, nil, err
	}
	cfg.Progress, cfg.Unseen = nil, nil
	eres, err = indicator.Run(ctx, []density.Source{ksrc}, ds, cfg)
	if err != nil {
		return nil, nil, fmt.Errorf("exact scan: %w", err)
	}
	return res, eres, nil
}

// compare combines the indicators that have a peak above the noise both
// with the model and with the exact density into one estimate each, says
// whether they agree, and computes the exact references of the lattice.
func (d *Demo) compare(res, eres *indicator.Result) (*Outcome, map[string]indicator.Peak, error) {
	exactPeak := map[string]indicator.Peak{}
	for _, c := range eres.Curves {
		if pk, ok := TopPeak(c); ok {
			exactPeak[c.Name] = pk
		}
	}
	var names []string
	for _, c := range res.Curves {
		if _, ok := exactPeak[c.Name]; ok {
			names = append(names, c.Name)
		}
	}
	model, ok := Combine(res, names)
	if !ok {
		return nil, nil, errors.New("no indicator has a peak above the bootstrap noise with both the model and the exact density; the model may be under-trained (this should not happen with the built-in settings)")
	}
	exact, _ := Combine(eres, model.Indicators)
	out := &Outcome{Indicator: strings.Join(model.Indicators, ", "), T: model.T, Err: model.Err, Same: exact.T, Model: model, Exact: exact}
	out.Z, out.Agreement = Agreement(model, exact)
	out.Kaufman, _ = ising.KaufmanPeak(d.Size, d.Size, 1, 1, d.TLo, d.THi)
	out.KaufmanF, _ = ising.KaufmanFisherPeak(d.Size, d.Size, 1, 1, d.TLo, d.THi)
	return out, exactPeak, nil
}
