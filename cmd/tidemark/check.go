package main

import (
	"errors"
	"fmt"
	"io"
	"math"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"tidemark/checkpoints"
	"tidemark/cmd/internal/progress"
	"tidemark/data"
	"tidemark/data/density"
	"tidemark/data/ising"
	"tidemark/model"
)

func init() { commands = append(commands, newCheckCmd) }

type checkOptions struct {
	data    string
	json    bool
	threads int
	quiet   bool
}

func newCheckCmd() *cobra.Command {
	var o checkOptions
	c := &cobra.Command{
		Use:   "check MODEL.ckpt --data DATA.npz",
		Short: "Compare a trained model with the exact distribution (every state, or Kaufman's entropy for large Ising lattices)",
		Long: `check compares the model with the exact snapshot distribution of the system the
dataset was generated from, at every grid point of DATA and every point held out
in training (flagged), by summing over all q^N states. It needs an exact
reference that can list its states: an Ising dataset of at most 24 sites, or a
spin chain measured in a fixed basis with at most 16 sites (at most 2^25 states
in all). It refuses, saying why, when the dataset has none.

Per point it prints, in nats per site:
  KL        the Kullback–Leibler divergence KL(p_exact ‖ p_model) / N
  TV        the total-variation distance ½ Σ |p_exact − p_model| (no unit, 0..1)
  NLL − H   the model's mean negative log-likelihood on the dataset's samples
            at that point minus the exact entropy, per site: an estimate of KL
            from the samples alone, so it carries sampling noise and can be
            slightly negative.
A held-out point measures how well the model interpolates between the points it
was trained on.

An Ising dataset at zero field with more than 24 sites cannot be enumerated;
check then compares the model's NLL on the dataset's samples with the exact
entropy from Kaufman's partition function of the finite periodic lattice
(Phys. Rev. 76, 1232 (1949)): NLL − S estimates the KL divergence per site.
A spin chain made with the MPS solver has exact log-probabilities but too many
states; check then estimates the entropy S as the mean of −log p over the
dataset's samples and NLL − S as the mean of log p − log q over the same
samples, with its standard error.`,
		Example: `  tidemark check film.ckpt --data exact4.npz
  tidemark check film16.ckpt --data fresh16.npz
  tidemark check film.ckpt --data exact4.npz --json | jq .mean_kl_per_site`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runCheck(cmd, args[0], &o)
		},
	}
	f := c.Flags()
	f.StringVar(&o.data, "data", "", "dataset (.npz) whose meta.source names the exact reference and whose samples give NLL − H")
	f.BoolVar(&o.json, "json", false, "print one JSON object instead of a table")
	f.IntVar(&o.threads, "threads", 0, "goroutines for the enumeration (0: number of CPUs); results do not depend on it")
	f.BoolVar(&o.quiet, "quiet", false, "draw no progress bar")
	return c
}

// checkPoint is one row of the check report (nats per site).
type checkPoint struct {
	Params          []float64 `json:"params"`
	Label           string    `json:"label"`
	HeldOut         bool      `json:"held_out"`
	KLPerSite       *float64  `json:"kl_per_site"`
	TV              float64   `json:"tv"`
	EntropyPerSite  float64   `json:"entropy_per_site"`
	NLLMinusEntropy *float64  `json:"nll_minus_entropy_per_site"`
	Samples         int       `json:"samples"`
}

// checkReport is the JSON output of check; its keys are stable.
type checkReport struct {
	Checkpoint     string       `json:"checkpoint"`
	Data           string       `json:"data"`
	Generator      string       `json:"generator"`
	Sites          int          `json:"sites"`
	States         int          `json:"states"`
	Units          string       `json:"units"`
	SameData       bool         `json:"same_data_as_training"`
	Points         []checkPoint `json:"points"`
	MeanKLPerSite  *float64     `json:"mean_kl_per_site"`
	MeanKLTrained  *float64     `json:"mean_kl_per_site_trained"`
	MeanKLHeldOut  *float64     `json:"mean_kl_per_site_held_out"`
	MaxKLPerSite   *float64     `json:"max_kl_per_site"`
	ModelMassError float64      `json:"max_model_mass_error"`
}

// finite returns &v, or nil for NaN and ±Inf (which JSON cannot hold).
func finite(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

func runCheck(cmd *cobra.Command, path string, o *checkOptions) error {
	if o.data == "" {
		return errors.New("check: expected a dataset (--data DATA.npz), found none")
	}
	ck, err := checkpoints.Load(path)
	if err != nil {
		return err
	}
	ds, err := data.Read(o.data)
	if err != nil {
		return err
	}
	if err := ck.CheckDataset(ds); err != nil {
		return fmt.Errorf("check: %s and %s: %w", path, o.data, err)
	}
	src, err := density.ReferenceFor(ds.Meta)
	if _, large := src.(*ising.KaufmanSource); large {
		// Too many sites to enumerate: the zero-field Ising model still has
		// an exact entropy (Kaufman), against which the model's
		// cross-entropy measures its misfit.
		m, merr := ck.Model()
		if merr != nil {
			return fmt.Errorf("%s: %w", path, merr)
		}
		if handled, kerr := checkKaufman(cmd.OutOrStdout(), o.json, path, o.data, ck, m, ds); handled || kerr != nil {
			return kerr
		}
	}
	if err != nil {
		return fmt.Errorf("check: %s has no exact reference to compare with: %w", o.data, err)
	}
	if en, ok := src.(density.Enumerable); (!ok || !en.Enumerable()) && ds.Meta.Generator() == "chain" {
		// A chain beyond exact diagonalisation: the MPS gives log p of any
		// snapshot, so S and NLL − S are estimated on the samples.
		m, merr := ck.Model()
		if merr != nil {
			return fmt.Errorf("%s: %w", path, merr)
		}
		return checkSampled(cmd.OutOrStdout(), o.json, path, o.data, ck, m, ds, src)
	}
	if en, ok := src.(density.Enumerable); !ok || !en.Enumerable() {
		return fmt.Errorf("check: %s: the exact reference (%s) cannot list its states, so there is nothing to sum over", o.data, ds.Meta.Generator())
	}
	states := density.States(ds.Meta.Alphabet, ds.N)
	if states < 0 {
		return fmt.Errorf("check: %s: %d^%d states exceed the limit of %d that check enumerates", o.data, ds.Meta.Alphabet, ds.N, density.MaxDivergenceStates)
	}
	if ck.Header.BestEpoch == 0 {
		fmt.Fprintf(cmd.ErrOrStderr(), "tidemark: note: %s has no completed epoch; its weights are the untrained initial ones\n", path)
	}
	m, err := ck.Model()
	if err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	rep, err := checkModel(ck, m, ds, src, threadsOrDefault(o.threads), o.quiet)
	if err != nil {
		return fmt.Errorf("check: %w", err)
	}
	rep.Checkpoint, rep.Data, rep.Generator = path, o.data, ds.Meta.Generator()
	rep.SameData = checkpoints.Fingerprint(ds) == ck.Header.Dataset.Fingerprint
	if o.json {
		return writeJSON(cmd.OutOrStdout(), rep)
	}
	return printCheck(cmd.OutOrStdout(), rep)
}

// checkModel compares m with the exact source at every grid point of ds and
// every held-out point of ck.
func checkModel(ck *checkpoints.Checkpoint, m *model.Model, ds *data.Dataset, src density.Source, threads int, quiet bool) (*checkReport, error) {
	g := data.NewGrid(ds)
	type pt struct {
		p       []float64
		held    bool
		samples []int
	}
	var pts []pt
	isHeld := func(p []float64) bool {
		for _, h := range ck.Header.HeldOut {
			if nearPoint(h, p) {
				return true
			}
		}
		return false
	}
	for k, p := range g.Points {
		pts = append(pts, pt{p: p, held: isHeld(p), samples: g.Index[k]})
	}
	for _, h := range ck.Header.HeldOut {
		found := false
		for _, p := range g.Points {
			found = found || nearPoint(h, p)
		}
		if !found {
			pts = append(pts, pt{p: h, held: true})
		}
	}
	N := ds.N
	states := density.States(ds.Meta.Alphabet, N)
	bar := progress.New(len(pts)*states, "check", quiet)
	defer bar.Done()
	rep := &checkReport{Sites: N, States: states, Units: "nats per site (tv: none)", Points: []checkPoint{}}
	var sum, sumT, sumH float64
	var nT, nH int
	maxKL := 0.0
	for _, q := range pts {
		d, err := density.ExhaustiveDivergence(src, m, q.p, threads, bar.Func())
		if err != nil {
			return nil, fmt.Errorf("at %s: %w", data.FormatPoint(ds.Meta.ParamNames, q.p), err)
		}
		kl := d.KL / float64(N)
		row := checkPoint{
			Params: q.p, Label: data.FormatPoint(ds.Meta.ParamNames, q.p), HeldOut: q.held,
			KLPerSite: finite(kl), TV: d.TV, EntropyPerSite: d.Entropy / float64(N), Samples: len(q.samples),
		}
		rep.ModelMassError = math.Max(rep.ModelMassError, math.Abs(d.ModelMass-1))
		if len(q.samples) > 0 {
			xs := make([]uint8, 0, len(q.samples)*N)
			for _, s := range q.samples {
				xs = append(xs, ds.Row(s)...)
			}
			lp := make([]float64, len(q.samples))
			if err := m.LogProb(lp, xs, q.p); err != nil {
				return nil, err
			}
			nll := 0.0
			for _, v := range lp {
				nll -= v
			}
			row.NLLMinusEntropy = finite(nll/float64(len(lp))/float64(N) - d.Entropy/float64(N))
		}
		rep.Points = append(rep.Points, row)
		sum += kl
		maxKL = math.Max(maxKL, kl)
		if q.held {
			sumH += kl
			nH++
		} else {
			sumT += kl
			nT++
		}
	}
	rep.MeanKLPerSite = finite(sum / float64(len(pts)))
	rep.MaxKLPerSite = finite(maxKL)
	if nT > 0 {
		rep.MeanKLTrained = finite(sumT / float64(nT))
	}
	if nH > 0 {
		rep.MeanKLHeldOut = finite(sumH / float64(nH))
	}
	return rep, nil
}

// nearPoint reports whether two parameter points agree to a relative 1e-9.
func nearPoint(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Abs(a[i]-b[i]) > 1e-9*math.Max(1, math.Max(math.Abs(a[i]), math.Abs(b[i]))) {
			return false
		}
	}
	return true
}

func fmtOpt(v *float64, format string) string {
	if v == nil {
		return "—"
	}
	return fmt.Sprintf(format, *v)
}

func printCheck(w io.Writer, r *checkReport) error {
	fmt.Fprintf(w, "model %s against the exact %s distribution of %s: %d states per point, nats per site\n", r.Checkpoint, r.Generator, r.Data, r.States)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "point\t\tKL\tTV\tNLL − H\tentropy\tsamples\t")
	for _, p := range r.Points {
		held := ""
		if p.HeldOut {
			held = "held out"
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%.4f\t%s\t%.4f\t%d\t\n", p.Label, held, fmtOpt(p.KLPerSite, "%.5f"), p.TV, fmtOpt(p.NLLMinusEntropy, "%+.5f"), p.EntropyPerSite, p.Samples)
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	fmt.Fprintf(w, "mean KL per site %s (trained points %s, held-out points %s), max %s\n",
		fmtOpt(r.MeanKLPerSite, "%.5f"), fmtOpt(r.MeanKLTrained, "%.5f"), fmtOpt(r.MeanKLHeldOut, "%.5f"), fmtOpt(r.MaxKLPerSite, "%.5f"))
	fmt.Fprintln(w, "KL and TV are exact sums over all states; NLL − H averages over the dataset's samples at each point and carries their sampling noise")
	if !r.SameData {
		fmt.Fprintln(w, "note: this dataset is not the one the model was trained on (fingerprints differ); NLL − H uses its samples")
	}
	return nil
}
