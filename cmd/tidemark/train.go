package main

import (
	"fmt"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"tidemark/model"
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
	directWindow       string
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
	ensemble        int
	member          int
	bag             bool
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

MODEL.ckpt is written after the first epoch, then as often as keeps writing under
5% of the time (at least every minute), and at the end. It holds the best weights
(lowest validation NLL; used by score, check and scan), the last weights and the
optimiser state, so --resume MODEL.ckpt continues exactly where it stopped
(on the same data only; without DATA it reads the dataset recorded in the
checkpoint). Settings repeated with --resume must keep their saved values. SIGINT or SIGTERM saves the state after the last
complete epoch and exits with status 130.

Runs are reproducible bit for bit with the same seed and --threads; other
thread counts change results only by floating-point summation order.`,
		Example: `  tidemark train film.npz -o film.ckpt
  tidemark train film.npz -o film.ckpt --hidden 256,256 --epochs 100 --holdout "T=2.2;2.3"
  tidemark train --resume film.ckpt --epochs 150`,
		Args: cobra.RangeArgs(0, 1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runTrain(cmd, strings.Join(args, ""), &o)
		},
	}
	f := c.Flags()
	f.StringVar(&o.hidden, "hidden", "", "masked hidden layer widths in units, comma-separated (default: two layers of the smallest multiple of 32 ≥ sites, 32 to 256)")
	f.StringVar(&o.arch, "arch", string(train.ArchDense), "network: dense (masked MADE over all sites; any data) or conv (masked convolution with weights shared across a periodic 2-D lattice; its --hidden are channels, default 16,16)")
	f.IntVar(&o.window, "window", 0, "conv network: rows above and columns either side each masked layer reads (0: 2, the measured setting)")
	f.StringVar(&o.condHidden, "cond-hidden", "64", `hidden widths of the conditioning net in units, comma-separated, or "none"`)
	f.IntVar(&o.fourier, "fourier", d.Arch.Fourier, "Fourier frequencies of the normalised parameters fed to the conditioning net")
	f.StringVar(&o.activation, "activation", string(d.Arch.Activation), "activation of the masked hidden layers: softplus (smooth in the parameters), relu or tanh")
	f.StringVar(&o.condActivation, "cond-activation", string(d.Arch.CondActivation), "activation of the conditioning net: softplus, relu or tanh; default: as --activation")
	f.BoolVar(&o.direct, "direct", d.Arch.Direct, "add the masked direct input→output connection")
	f.StringVar(&o.directWindow, "direct-window", "auto", fmt.Sprintf("sites the direct connection reads: an integer r (earlier sites within r rows and r columns on the dataset's lattice, wrapping round), all (every earlier site), or auto (on a 2-D lattice an eighth of its longer side, at least %d; all otherwise)", train.DefaultDirectWindow))
	f.StringVar(&o.order, "order", string(d.Arch.Order), "autoregressive site order: rowmajor or snake (boustrophedon, 2-D lattices)")
	f.BoolVar(&o.film, "film", d.Arch.FiLM, "let the conditioning net scale every masked layer's pre-activation as well as shift it (FiLM; --film=false for shifts only)")
	f.BoolVar(&o.symmetric, "symmetric", false, "make the model invariant under flipping every spin (alphabet 2 only)")
	f.StringVar(&o.precision, "precision", "float32", "arithmetic of the masked matrix products: float32 (the default: measured to move no indicator peak beyond its error, and faster) or float64; sums stay float64")
	f.StringVar(&o.augment, "augment", "auto", `symmetries of the system to augment the training snapshots with, comma-separated: translate (periodic boundaries), mirror, rotate (square lattices), flip (alphabet 2), or none; name only symmetries every grid point has; auto: those the source record of a simulated dataset states (none for imported data)`)
	f.IntVar(&o.epochs, "epochs", d.Epochs, "maximum number of passes over the training samples")
	f.IntVar(&o.batch, "batch", d.Batch, "minibatch size in snapshots")
	f.Float64Var(&o.lr, "lr", d.LR, "initial learning rate (per Adam step)")
	f.Float64Var(&o.minLR, "min-lr", d.MinLR, "lowest learning rate the schedule goes down to")
	f.Uint64Var(&o.seed, "seed", d.Seed, "random seed for the initial weights, the validation split and the shuffles")
	f.Float64Var(&o.valFrac, "val-frac", d.ValFrac, "fraction of each grid point's samples kept for validation (at least one)")
	f.IntVar(&o.patience, "patience", d.Patience, "stop after this many epochs without a better validation NLL")
	f.StringVar(&o.schedule, "schedule", string(d.Schedule), "learning-rate schedule: plateau (halve after 3 epochs without improvement), cosine or constant")
	f.Float64Var(&o.average, "average", d.Average, "time constant in epochs of the moving average of the weights that is validated and kept (Polyak averaging; 0 for the optimiser's own weights)")
	f.Float64Var(&o.weightDecay, "weight-decay", 0, "decoupled weight decay per unit learning rate (AdamW), on weight matrices; 0 for none")
	f.Float64Var(&o.clip, "clip", d.Clip, "largest global L2 norm of the gradient of the NLL per site (nats); 0 for no clipping")
	f.IntVar(&o.threads, "threads", 0, "minibatch shards computed in parallel (0: number of CPUs; 2 threads ran 1.4× faster on 2 cores); results are bit-reproducible for a fixed value, not across values")
	f.StringVar(&o.holdout, "holdout", "", `grid points kept out of training and validation: "T=2.2;2.3" (values) or "T=2.1:2.4" (a range); axes joined by ","`)
	f.StringVar(&o.resume, "resume", "", "continue the run saved in this checkpoint (same dataset; its settings are kept, --epochs, --patience and --threads may change)")
	f.IntVar(&o.ensemble, "ensemble", train.DefaultEnsemble, "train this many models on bootstrap resamples of the training snapshots, with seeds derived from --seed; OUT holds member 1, OUT.e<k>.ckpt member k, and scan --model OUT uses them all, their spread joining the errors")
	f.BoolVar(&o.bag, "bag", false, "with --ensemble: train each member on a bootstrap resample of the training snapshots (bagging; default: on all of them, the members differing by seed only, which measured closer to exact)")
	f.IntVar(&o.member, "member", 0, "with --ensemble K: train only member k (1 to K), the same model the whole ensemble's run gives with the same --threads")
	f.IntVar(&o.stopAfter, "stop-after", 0, "stop after this many epochs of this invocation, keeping the run resumable (0: no limit)")
	f.BoolVar(&o.force, "force", false, "overwrite the output file if it exists")
	f.BoolVar(&o.quiet, "quiet", false, "print no per-epoch lines and draw no progress bar")
	f.StringVarP(&o.out, "output", "o", "", "output checkpoint file (.ckpt); with --resume it defaults to the resumed file")
	return c
}

func (o *trainOptions) settings() (train.Settings, error) {
	st := train.DefaultSettings()
	if o.hidden != "" {
		h, err := train.ParseWidths(o.hidden)
		if err != nil {
			return st, fmt.Errorf("--hidden: %w", err)
		}
		if len(h) == 0 {
			return st, fmt.Errorf("--hidden: expected at least one width, found %q", o.hidden)
		}
		st.Arch.Hidden = h
	}
	ch, err := train.ParseWidths(o.condHidden)
	if err != nil {
		return st, fmt.Errorf("--cond-hidden: %w", err)
	}
	st.Arch.CondHidden = ch
	if o.fourier < 0 {
		return st, fmt.Errorf("--fourier: expected a count ≥ 0, found %d", o.fourier)
	}
	st.Arch.Fourier = o.fourier
	st.Arch.Kind, st.Arch.Window = train.ArchKind(o.arch), o.window
	st.Arch.Activation = model.Activation(o.activation)
	st.Arch.CondActivation = model.Activation(o.condActivation)
	st.Arch.Direct = o.direct
	if st.Arch.DirectWindow, err = parseDirectWindow(o.directWindow); err != nil {
		return st, err
	}
	st.Arch.Order = train.Order(o.order)
	st.Arch.Symmetric = o.symmetric
	st.Arch.FiLM = o.film
	st.Arch.Precision = o.precision
	spec := o.augment
	if spec == "auto" {
		spec = "" // chosen from the dataset once it is read
	}
	aug, err := train.ParseAugment(spec)
	if err != nil {
		return st, fmt.Errorf("--%w", err)
	}
	st.Augment = aug
	st.Epochs, st.Batch, st.LR, st.MinLR, st.Seed = o.epochs, o.batch, o.lr, o.minLR, o.seed
	st.ValFrac, st.Patience, st.Schedule = o.valFrac, o.patience, train.Schedule(o.schedule)
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

// parseDirectWindow reads --direct-window: auto (0), all (−1) or r ≥ 1.
func parseDirectWindow(v string) (int, error) {
	switch v {
	case "auto":
		return 0, nil
	case "all":
		return -1, nil
	}
	r, err := strconv.Atoi(v)
	if err != nil || r < 1 {
		return 0, fmt.Errorf("--direct-window: expected auto, all or a whole number of sites ≥ 1, found %q", v)
	}
	return r, nil
}
