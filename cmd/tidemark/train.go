package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"tidemark/checkpoints"
	"tidemark/cmd/internal/progress"
	"tidemark/data"
	"tidemark/train"
)

func init() { commands = append(commands, newTrainCmd) }

type trainOptions struct {
	hidden, condHidden string
	arch               string
	window             int
	fourier            int
	activation         string
	condActivation     string
	direct             bool
	order              string
	symmetric          bool
	film               bool
	precision          string
	augment            string

	epochs, batch   int
	lr, minLR       float64
	seed            uint64
	valFrac         float64
	patience        int
	schedule        string
	average         float64
	weightDecay     float64
	clip            float64
	threads         int
	holdout, resume string
	stopAfter       int
	force, quiet    bool
	out             string
}

func newTrainCmd() *cobra.Command {
	var o trainOptions
	d := train.DefaultSettings()
	c := &cobra.Command{
		Use:   "train DATA.npz -o MODEL.ckpt",
		Short: "Fit one parameter-conditioned autoregressive model to all snapshots of a dataset",
		Long: `train fits a conditional MADE p(x|λ) to every snapshot of DATA at its own grid
point λ, by minibatch Adam (Kingma & Ba 2015; with --weight-decay, AdamW) on the
negative log-likelihood, with global-norm gradient clipping.

Each grid point keeps --val-frac of its samples (at least one) for validation,
chosen from the seed; training stops when the validation NLL has not improved
for --patience epochs, or after --epochs. With the default plateau schedule the
learning rate is halved after 3 epochs without improvement (down to --min-lr);
--schedule cosine decays it from --lr to --min-lr over --epochs instead.
--holdout keeps whole grid points out of training and validation, to test how
the model interpolates ("T=2.2;2.3" lists values, "T=2.1:2.4" selects a range).

One line per epoch goes to stdout: training and validation NLL in bits per site,
samples per second and the learning rate. The training figure is the average
over the epoch while the weights changed; the validation figure uses the
weights at the end of the epoch, or with --average τ their moving average over
the last ≈ τ epochs of steps (Polyak averaging), which is then what is kept:
it smooths out the noise of the last minibatches.

MODEL.ckpt is rewritten after every epoch. It holds the best weights (lowest
validation NLL; used by score, check and scan), the last weights and the
optimiser state, so --resume MODEL.ckpt continues exactly where it stopped
(on the same data only). SIGINT or SIGTERM saves the state after the last
complete epoch and exits with status 130.

Runs are reproducible bit for bit with the same seed and --threads; other
thread counts change results only by floating-point summation order.`,
		Example: `  tidemark train film.npz -o film.ckpt
  tidemark train film.npz -o film.ckpt --hidden 256,256 --epochs 100 --holdout "T=2.2;2.3"
  tidemark train film.npz -o film.ckpt --resume film.ckpt --epochs 150`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runTrain(cmd, args[0], &o)
		},
	}
	f := c.Flags()
	f.StringVar(&o.hidden, "hidden", "", "masked hidden layer widths in units, comma-separated (default: two layers of the smallest multiple of 32 ≥ sites, 32 to 256)")
	f.StringVar(&o.arch, "arch", train.ArchDense, "network: dense (masked MADE over all sites; any data) or conv (masked convolution with weights shared across a periodic 2-D lattice; its --hidden are channels, default 16,16)")
	f.IntVar(&o.window, "window", 0, "conv network: rows above and columns either side each masked layer reads (0: 2, the measured setting)")
	f.StringVar(&o.condHidden, "cond-hidden", "64", `hidden widths of the conditioning net in units, comma-separated, or "none"`)
	f.IntVar(&o.fourier, "fourier", d.Arch.Fourier, "Fourier frequencies of the normalised parameters fed to the conditioning net")
	f.StringVar(&o.activation, "activation", d.Arch.Activation, "activation of the masked hidden layers: softplus (smooth in the parameters), relu or tanh")
	f.StringVar(&o.condActivation, "cond-activation", d.Arch.CondActivation, "activation of the conditioning net: softplus, relu or tanh; default: as --activation")
	f.BoolVar(&o.direct, "direct", d.Arch.Direct, "add the masked direct input→output connection")
	f.StringVar(&o.order, "order", d.Arch.Order, "autoregressive site order: rowmajor or snake (boustrophedon, 2-D lattices)")
	f.BoolVar(&o.film, "film", d.Arch.FiLM, "let the conditioning net scale every masked layer's pre-activation as well as shift it (FiLM; --film=false for shifts only)")
	f.BoolVar(&o.symmetric, "symmetric", false, "make the model invariant under flipping every spin (alphabet 2 only)")
	f.StringVar(&o.precision, "precision", "float64", "arithmetic of the masked matrix products: float64, or float32 (faster, above all in the OpenBLAS build; sums stay float64)")
	f.StringVar(&o.augment, "augment", "none", `symmetries of the system to augment the training snapshots with, comma-separated: translate (periodic boundaries), mirror, rotate (square lattices), flip (alphabet 2); name only symmetries every grid point has (default: those the source record of a simulated dataset states, none for imported data)`)
	f.IntVar(&o.epochs, "epochs", d.Epochs, "maximum number of passes over the training samples")
	f.IntVar(&o.batch, "batch", d.Batch, "minibatch size in snapshots")
	f.Float64Var(&o.lr, "lr", d.LR, "initial learning rate (per Adam step)")
	f.Float64Var(&o.minLR, "min-lr", d.MinLR, "lowest learning rate the schedule goes down to")
	f.Uint64Var(&o.seed, "seed", d.Seed, "random seed for the initial weights, the validation split and the shuffles")
	f.Float64Var(&o.valFrac, "val-frac", d.ValFrac, "fraction of each grid point's samples kept for validation (at least one)")
	f.IntVar(&o.patience, "patience", d.Patience, "stop after this many epochs without a better validation NLL")
	f.StringVar(&o.schedule, "schedule", d.Schedule, "learning-rate schedule: plateau (halve after 3 epochs without improvement), cosine or constant")
	f.Float64Var(&o.average, "average", d.Average, "time constant in epochs of the moving average of the weights that is validated and kept (Polyak averaging; 0 for the optimiser's own weights)")
	f.Float64Var(&o.weightDecay, "weight-decay", 0, "decoupled weight decay per unit learning rate (AdamW), on weight matrices; 0 for none")
	f.Float64Var(&o.clip, "clip", d.Clip, "largest global L2 norm of the gradient of the NLL per site (nats); 0 for no clipping")
	f.IntVar(&o.threads, "threads", 0, "minibatch shards computed in parallel (0: number of CPUs; 2 threads ran 1.4× faster on 2 cores); results are bit-reproducible for a fixed value, not across values")
	f.StringVar(&o.holdout, "holdout", "", `grid points kept out of training and validation: "T=2.2;2.3" (values) or "T=2.1:2.4" (a range); axes joined by ","`)
	f.StringVar(&o.resume, "resume", "", "continue the run saved in this checkpoint (same dataset; its settings are kept, --epochs, --patience and --threads may change)")
	f.IntVar(&o.stopAfter, "stop-after", 0, "stop after this many epochs of this invocation, keeping the run resumable (0: no limit)")
	f.BoolVar(&o.force, "force", false, "overwrite the output file if it exists")
	f.BoolVar(&o.quiet, "quiet", false, "print no per-epoch lines and draw no progress bar")
	f.StringVarP(&o.out, "output", "o", "", "output checkpoint file (.ckpt); with --resume it defaults to the resumed file")
	return c
}

// parseWidths parses "256,256" into widths; "none" or "" gives an empty list.
func parseWidths(flag, s string) ([]int, error) {
	s = strings.TrimSpace(s)
	if s == "" || s == "none" {
		return []int{}, nil
	}
	var w []int
	for _, p := range strings.Split(s, ",") {
		v, err := strconv.Atoi(strings.TrimSpace(p))
		if err != nil || v < 1 {
			return nil, fmt.Errorf("--%s: expected comma-separated positive widths like 256,256, found %q", flag, p)
		}
		w = append(w, v)
	}
	return w, nil
}

func (o *trainOptions) settings() (train.Settings, error) {
	st := train.DefaultSettings()
	if o.hidden != "" {
		h, err := parseWidths("hidden", o.hidden)
		if err != nil {
			return st, err
		}
		if len(h) == 0 {
			return st, fmt.Errorf("--hidden: expected at least one width, found %q", o.hidden)
		}
		st.Arch.Hidden = h
	}
	ch, err := parseWidths("cond-hidden", o.condHidden)
	if err != nil {
		return st, err
	}
	st.Arch.CondHidden = ch
	if o.fourier < 0 {
		return st, fmt.Errorf("--fourier: expected a count ≥ 0, found %d", o.fourier)
	}
	st.Arch.Fourier = o.fourier
	st.Arch.Kind, st.Arch.Window = o.arch, o.window
	st.Arch.Activation = o.activation
	st.Arch.CondActivation = o.condActivation
	st.Arch.Direct = o.direct
	st.Arch.Order = o.order
	st.Arch.Symmetric = o.symmetric
	st.Arch.FiLM = o.film
	st.Arch.Precision = o.precision
	aug, err := train.ParseAugment(o.augment)
	if err != nil {
		return st, fmt.Errorf("--%w", err)
	}
	st.Augment = aug
	st.Epochs, st.Batch, st.LR, st.MinLR, st.Seed = o.epochs, o.batch, o.lr, o.minLR, o.seed
	st.ValFrac, st.Patience, st.Schedule = o.valFrac, o.patience, o.schedule
	st.WeightDecay, st.Clip, st.Average = o.weightDecay, o.clip, o.average
	st.Threads = threadsOrDefault(o.threads)
	if st.MinLR > st.LR {
		st.MinLR = st.LR
	}
	if err := st.Validate(); err != nil {
		return st, fmt.Errorf("--%w", err)
	}
	return st, nil
}

func runTrain(cmd *cobra.Command, dataPath string, o *trainOptions) error {
	if o.stopAfter < 0 {
		return fmt.Errorf("--stop-after: expected a number of epochs ≥ 0, found %d", o.stopAfter)
	}
	opt := train.Options{DataPath: dataPath, Software: version, StopAfter: o.stopAfter}
	var resumed *checkpoints.Checkpoint
	if o.resume != "" {
		ck, err := checkpoints.Load(o.resume)
		if err != nil {
			return fmt.Errorf("--resume: %w", err)
		}
		resumed = ck
		res := &train.Resume{From: ck}
		fl := cmd.Flags()
		if fl.Changed("epochs") {
			res.Epochs = o.epochs
		}
		if fl.Changed("patience") {
			res.Patience = o.patience
		}
		if fl.Changed("threads") {
			res.Threads = threadsOrDefault(o.threads)
		}
		for _, name := range []string{"arch", "window", "hidden", "cond-hidden", "fourier", "activation", "cond-activation", "direct", "order", "symmetric", "film", "precision", "augment", "batch", "lr", "min-lr", "seed", "val-frac", "schedule", "weight-decay", "clip", "holdout"} {
			if fl.Changed(name) {
				return fmt.Errorf("--%s: cannot be changed when resuming; the run keeps the settings saved in %s (only --epochs, --patience and --threads may change)", name, o.resume)
			}
		}
		opt.Resume = res
		if o.out == "" {
			o.out = o.resume
		}
	} else {
		st, err := o.settings()
		if err != nil {
			return err
		}
		opt.Settings = st
		opt.Holdout = o.holdout
	}
	if o.out == "" {
		return errors.New("train: expected an output checkpoint file (-o MODEL.ckpt), found none")
	}
	sameFile := o.resume != "" && samePath(o.out, o.resume)
	if !sameFile {
		if err := checkOutput(o.out, o.force); err != nil {
			return err
		}
	}
	ds, err := data.Read(dataPath)
	if err != nil {
		return err
	}
	// Without --augment, the symmetries a simulated dataset's source record
	// states are applied (see isingSymmetries); imported data get none.
	var autoAug []string
	if resumed == nil && !cmd.Flags().Changed("augment") {
		if syms, ok := isingSymmetries(ds.Meta.Source); ok {
			opt.Settings.Augment, autoAug = syms, syms
		}
	}
	stdout, stderr := cmd.OutOrStdout(), cmd.ErrOrStderr()
	var bar *progress.Bar
	opt.Start = func(perEpoch, epochs int) {
		// Notes only once the settings and data have passed every check, so
		// a bad input gets its one-line error alone.
		if len(autoAug) > 0 {
			fmt.Fprintf(stderr, "tidemark: train: note: augmenting with %s, the symmetries this dataset's source record states (--augment none to switch off)\n", strings.Join(autoAug, ","))
		}
		if resumed == nil {
			for _, n := range augmentNotes(ds.Meta.Source, opt.Settings.Augment) {
				fmt.Fprintf(stderr, "tidemark: train: note: %s\n", n)
			}
		}
		bar = progress.New(perEpoch*epochs, "train", o.quiet)
		if !o.quiet {
			what := "training"
			if resumed != nil {
				what = fmt.Sprintf("resuming after epoch %d:", resumed.Header.Optimizer.Epoch)
			}
			fmt.Fprintf(stdout, "%s %d snapshots per epoch, up to %d epochs\n", what, perEpoch, epochs)
		}
	}
	opt.Progress = func(n int) { bar.Add(n) }
	opt.Warn = func(msg string) { fmt.Fprintf(stderr, "tidemark: train: %s\n", msg) }
	written := false
	opt.OnEpoch = func(m checkpoints.EpochMetrics, ck *checkpoints.Checkpoint) error {
		if !o.quiet {
			mark := ""
			if ck.Header.BestEpoch == m.Epoch {
				mark = "  *best"
			}
			line := fmt.Sprintf("epoch %4d  train %.5f  val %.5f bits/site  %8.0f samples/s  lr %.3g%s\n",
				m.Epoch, m.TrainBitsPerSite, m.ValBitsPerSite, m.SamplesPerS, m.LR, mark)
			io.WriteString(stdout, line)
		}
		if err := ck.Save(o.out, written || sameFile || o.force); err != nil {
			return err
		}
		written = true
		return nil
	}
	ctx, stop := signalContext()
	defer stop()
	ck, err := train.Run(ctx, ds, opt)
	bar.Done()
	if errors.Is(err, train.ErrInterrupted) && ck != nil {
		if serr := ck.Save(o.out, written || sameFile || o.force); serr != nil {
			return fmt.Errorf("train: interrupted, and saving failed: %v: %w", serr, errInterrupted)
		}
		return fmt.Errorf("train: interrupted; saved the state after epoch %d to %s (continue with --resume %s): %w",
			ck.Header.Optimizer.Epoch, o.out, o.out, errInterrupted)
	}
	if err != nil {
		if written {
			return fmt.Errorf("train: %w (the last completed epoch is saved in %s)", err, o.out)
		}
		return fmt.Errorf("train: %w", err)
	}
	if err := ck.Save(o.out, written || sameFile || o.force); err != nil {
		return err
	}
	h := ck.Header
	if !o.quiet {
		fmt.Fprintf(stdout, "stopped: %s after epoch %d; best epoch %d, validation %.5f bits/site", h.Stopped, h.Optimizer.Epoch, h.BestEpoch, h.BestValBitsPerSite)
		if h.HeldOutBitsPerSite != nil {
			fmt.Fprintf(stdout, ", held-out points %.5f bits/site", *h.HeldOutBitsPerSite)
		}
		fmt.Fprintf(stdout, "\nsaved %s (%d parameters)\n", o.out, ck.NumParams())
		if h.Stopped == "max epochs" && h.BestEpoch == h.Optimizer.Epoch {
			fmt.Fprintf(stdout, "note: the validation NLL was still improving at the last epoch; more --epochs (with --resume %s) may fit better\n", o.out)
		}
	}
	return nil
}

// samePath reports whether two paths name the same file (or would).
func samePath(a, b string) bool {
	if a == b {
		return true
	}
	sa, errA := os.Stat(a)
	sb, errB := os.Stat(b)
	if errA == nil && errB == nil {
		return os.SameFile(sa, sb)
	}
	aa, _ := filepath.Abs(a)
	bb, _ := filepath.Abs(b)
	return aa == bb
}
