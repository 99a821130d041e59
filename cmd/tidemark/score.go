package main

import (
	"errors"
	"fmt"

	"github.com/spf13/cobra"

	"tidemark/checkpoints"
	"tidemark/cmd/internal/progress"
	"tidemark/data"
	"tidemark/indicator/scorestat"
)

func init() { commands = append(commands, newScoreCmd) }

type scoreOptions struct {
	out       string
	at        string
	last      bool
	posterior bool
	grid      string
	seed      uint64
	threads   int
	force     bool
	quiet     bool
}

func newScoreCmd() *cobra.Command {
	var o scoreOptions
	c := &cobra.Command{
		Use:   "score MODEL.ckpt DATA.npz -o SCORES.npz|SCORES.csv",
		Short: "Score every snapshot of a dataset with the model, or infer the parameters it came from",
		Long: `score writes log p(x|λ) in nats (natural log) of every snapshot of DATA under the
model, each at its own parameters λ, or with --at at one given λ for all of them
(then DATA may be unlabelled). For each point λ it prints the number of
snapshots, their mean negative log-likelihood (NLL, nats per snapshot), its
standard deviation and standard error, and the mean in bits per site.

Snapshots are flagged when their NLL lies outside the 0.1%–99.9% range of the
NLLs of 500 snapshots the model draws itself at that λ (stream (--seed, point
index)): such a snapshot is unlike anything the model expects there (the
checkpoint keeps no per-snapshot validation scores, so the model's own samples
are the reference). With a few thousand snapshots a handful of flags is
expected by chance (0.2% of them).

The output format follows the extension: .npz holds the arrays "logp" (M),
"params" (M × d, the λ used), "bits_per_site" (M), "flagged" (M, 0/1) and the
per-point table (point_params, point_count, point_mean_nll, point_std_nll,
point_sem_nll, point_ref_lo, point_ref_hi, point_flagged); .csv has a header
line and one row per snapshot (index, the parameters, logp in nats and
bits_per_site), and the per-point table goes to SCORES.points.csv beside it.

--posterior --grid "T=1.5:3.5:81" asks instead which parameters the snapshots
came from: with a uniform prior over the grid points, the posterior of every
snapshot, and of every group of snapshots that share a label (or of the whole
file when DATA is unlabelled), is the product of their likelihoods normalised
over the grid. For each it reports the grid value of largest posterior and a
central (equal-tailed) 68% credible interval per axis, limited by the grid
spacing. Groups are printed; .npz holds grid, log_posterior (M × K), map, lo68,
hi68 (M × d) and the group_* arrays; .csv holds one row per snapshot (index,
label, map_, lo68_, hi68_ per axis) and the groups go to SCORES.groups.csv.

Scoring reads DATA in blocks of 16384 snapshots, scoring each while the
next is read, so memory holds a few blocks of states and a few dozen bytes
per snapshot for the results, not the whole file; --posterior reads DATA
whole (M×N bytes of states). A damaged file is reported when its block is reached, and
nothing is written then.

DATA must match the model: the same number of sites, alphabet, lattice and
parameter names. Scoring at a λ outside the range the model was trained on
(printed by "tidemark inspect MODEL.ckpt") extrapolates and may mislead; so
does a posterior grid that reaches beyond it.`,
		Example: `  tidemark score film.ckpt film.npz -o scores.npz
  tidemark score film.ckpt film.npz --at "T=2.5" -o at25.csv
  tidemark score film.ckpt old-images.npz --posterior --grid "T=1.5:3.5:81" -o which-T.csv`,
		Args: cobra.ExactArgs(2),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runScore(cmd, args[0], args[1], &o)
		},
	}
	f := c.Flags()
	f.StringVarP(&o.out, "output", "o", "", "output file: .npz (arrays logp, params) or .csv")
	f.StringVar(&o.at, "at", "", `score every snapshot at this parameter point, e.g. "T=2.5" or "T=2.3,h=0.1"`)
	f.BoolVar(&o.last, "last", false, "use the weights of the last epoch instead of the best")
	f.BoolVar(&o.posterior, "posterior", false, "infer the parameters of each snapshot and each label group: posterior over the points of --grid")
	f.StringVar(&o.grid, "grid", "", `parameter grid of --posterior, e.g. "T=1.5:3.5:81" (the model's parameter names)`)
	f.Uint64Var(&o.seed, "seed", 1, "seed of the model's reference samples behind the outlier flags")
	f.IntVar(&o.threads, "threads", 0, "goroutines (0: number of CPUs); results do not depend on it")
	f.BoolVar(&o.force, "force", false, "overwrite the output file if it exists")
	f.BoolVar(&o.quiet, "quiet", false, "draw no progress bar")
	return c
}

func runScore(cmd *cobra.Command, ckPath, dataPath string, o *scoreOptions) error {
	ext, files, err := scorestat.Outputs(o.out, o.posterior)
	if err != nil {
		return err
	}
	for _, f := range files {
		if err := checkOutput(f, o.force); err != nil {
			return err
		}
	}
	if o.posterior && o.at != "" {
		return errors.New("score: --posterior and --at exclude each other (--posterior scores every snapshot at every point of --grid)")
	}
	if !o.posterior && o.grid != "" {
		return errors.New("score: --grid is the grid of --posterior; without --posterior every snapshot is scored at its own λ or at --at")
	}
	ck, err := checkpoints.Load(ckPath)
	if err != nil {
		return err
	}
	names := ck.Header.ParamNames
	var at []float64
	if o.at != "" {
		if at, err = data.ParsePoint(o.at, names); err != nil {
			return fmt.Errorf("--at %q: %w", o.at, err)
		}
	}
	var grid [][]float64
	if o.posterior {
		if o.grid == "" {
			return fmt.Errorf(`--posterior: expected --grid with the model's parameters %q, e.g. "%s=1.5:3.5:81", found none`, names, names[0])
		}
		if grid, err = data.ParsePoints(o.grid, names); err != nil {
			return fmt.Errorf("--grid %q: %w", o.grid, err)
		}
		if len(grid) < 2 {
			return fmt.Errorf("--grid %q: expected at least 2 points, found %d", o.grid, len(grid))
		}
	}
	// --posterior holds the whole dataset (it groups the snapshots by
	// label); scoring reads the states block by block.
	opt := data.ReadOptions{Unlabelled: at != nil || o.posterior}
	var ds *data.Dataset
	var st *data.Stream
	if o.posterior {
		ds, err = data.ReadWith(dataPath, opt)
	} else {
		st, err = data.OpenStream(dataPath, opt)
		if st != nil {
			defer st.Close()
			ds = st.Head
		}
	}
	if err != nil {
		return err
	}
	if err := ck.CheckDatasetAs(ds); err != nil {
		return fmt.Errorf("score: %s and %s: %w", ckPath, dataPath, err)
	}
	if ck.Header.BestEpoch == 0 {
		fmt.Fprintf(cmd.ErrOrStderr(), "tidemark: note: %s has no completed epoch; its weights are the untrained initial ones\n", ckPath)
	}
	m, err := ck.Model()
	if o.last {
		m, err = ck.LastModel()
	}
	if err != nil {
		return fmt.Errorf("%s: %w", ckPath, err)
	}
	// Say so where the user reads it when the scores extrapolate.
	warnOutside := func(what string, pts ...[]float64) {
		if note := ck.ExtrapolationNote(what, pts...); note != "" {
			fmt.Fprintln(cmd.ErrOrStderr(), "tidemark: "+note)
		}
	}
	if at != nil {
		warnOutside("--at", at)
	}
	if o.posterior {
		warnOutside("--grid", grid...)
		return runPosterior(cmd, m, ds, grid, names, ckPath, dataPath, ext, o)
	}
	bar := progress.New(ds.M, "score", o.quiet)
	logp, params, err := scorestat.ScoreStream(m, st, at, 0, threadsOrDefault(o.threads), bar.Func())
	bar.Done()
	if err != nil {
		var ve *data.ValidationError
		if errors.As(err, &ve) {
			return err // a damaged file, reported as data.Read reports it
		}
		return fmt.Errorf("score: %w", err)
	}
	npts := 1
	if at == nil {
		npts = data.NewGrid(ds).K()
	}
	pbar := progress.New(npts, "reference", o.quiet)
	pts, flags, err := scorestat.Stats(m, logp, params, len(names), o.seed, pbar.Func())
	pbar.Done()
	if err != nil {
		return fmt.Errorf("score: %w", err)
	}
	meta := map[string]any{"param_names": names, "checkpoint": ckPath, "data": dataPath, "units": "nats", "software_version": version}
	if err := scorestat.WriteFiles(o.out, o.force, meta, names, logp, params, flags, pts, ds.N); err != nil {
		return err
	}
	w := cmd.OutOrStdout()
	scorestat.WriteTable(w, names, pts, ds.N)
	nflag := scorestat.Flagged(flags)
	mean, _, se := scorestat.MeanErr(logp)
	fmt.Fprintf(w, "wrote %s: log p of %d snapshots, mean %.4f ± %.2g nats (%.5f ± %.2g bits per site); %d flagged\n",
		o.out, len(logp), mean, se, scorestat.BitsPerSite(-mean, ds.N), scorestat.BitsPerSite(se, ds.N), nflag)
	if ext == ".csv" {
		fmt.Fprintf(w, "wrote %s: the per-point table\n", scorestat.Sidecar(o.out, "points"))
	}
	return nil
}
