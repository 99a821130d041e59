package main

import (
	"fmt"
	"io"
	"math"
	"text/tabwriter"

	"tidemark/checkpoints"
	"tidemark/data"
	"tidemark/data/density"
	"tidemark/model"
)

// sampledReport is check's JSON output when the exact reference gives log p
// of any snapshot but cannot list its states (a chain from the MPS solver):
// the entropy and NLL − S are estimated from the dataset's own samples,
// which were drawn from p. Its keys are stable.
type sampledReport struct {
	Checkpoint     string         `json:"checkpoint"`
	Data           string         `json:"data"`
	Generator      string         `json:"generator"`
	Reference      string         `json:"reference"`
	Sites          int            `json:"sites"`
	Units          string         `json:"units"`
	SameData       bool           `json:"same_data_as_training"`
	Points         []kaufmanPoint `json:"points"`
	MeanNLLMinusS  float64        `json:"mean_nll_minus_entropy_per_site"`
	KLPerSite      *float64       `json:"mean_kl_per_site"`
	KLNotAvailable string         `json:"kl_not_available"`
}

// checkSampled compares the model with an exact source that cannot be
// enumerated, at every grid point of ds: the entropy per site is the mean of
// −log p(x)/N over the dataset's samples x (which p drew, so this is an
// unbiased estimate), and NLL − S is the mean of (log p(x) − log q(x))/N over
// the same samples, whose paired differences give a standard error far
// smaller than that of NLL and S separately. Both are estimates of S and of
// KL(p‖q)/N with their sampling noise.
func checkSampled(w io.Writer, asJSON bool, path, dataPath string, ck *checkpoints.Checkpoint, m *model.Model, ds *data.Dataset, src density.Source) error {
	g := data.NewGrid(ds)
	N := ds.N
	rep := &sampledReport{
		Checkpoint: path, Data: dataPath, Generator: ds.Meta.Generator(), Sites: N, Units: "nats per site",
		Reference:      "exact log-probabilities of the dataset's samples under the source that drew them; entropy S = mean −log p/N over those samples",
		KLNotAvailable: fmt.Sprintf("%d^%d states are too many to sum KL and TV over; NLL − S estimates KL from the samples", ds.Meta.Alphabet, N),
		SameData:       checkpoints.Fingerprint(ds) == ck.Header.Dataset.Fingerprint,
		Points:         []kaufmanPoint{},
	}
	var sum float64
	for k, p := range g.Points {
		idx := g.Index[k]
		if len(idx) < 2 {
			continue
		}
		xs := make([]uint8, 0, len(idx)*N)
		for _, i := range idx {
			xs = append(xs, ds.Row(i)...)
		}
		lq := make([]float64, len(idx))
		if err := m.LogProb(lq, xs, p); err != nil {
			return fmt.Errorf("check: %w", err)
		}
		lp := make([]float64, len(idx))
		if err := src.LogProb(lp, xs, p); err != nil {
			return fmt.Errorf("check: exact reference at %s: %w", g.Label(k), err)
		}
		n := float64(len(idx))
		var s, d, d2 float64
		for i := range lp {
			s -= lp[i] / float64(N)
			v := (lp[i] - lq[i]) / float64(N)
			d += v
			d2 += v * v
		}
		s /= n
		d /= n
		se := math.Sqrt(math.Max(d2/n-d*d, 0) / (n - 1))
		held := false
		for _, h := range ck.Header.HeldOut {
			held = held || nearPoint(h, p)
		}
		rep.Points = append(rep.Points, kaufmanPoint{Params: p, Label: g.Label(k), HeldOut: held,
			EntropyPerSite: s, NLLMinusEntropy: d, StdErr: se, Samples: len(idx)})
		sum += d
	}
	if len(rep.Points) == 0 {
		return fmt.Errorf("check: %s: expected at least 2 samples at some grid point, found none", dataPath)
	}
	rep.MeanNLLMinusS = sum / float64(len(rep.Points))
	if asJSON {
		return writeJSON(w, rep)
	}
	fmt.Fprintf(w, "model %s against the exact log-probabilities of %s (%s, %d sites), nats per site\n", path, dataPath, rep.Generator, N)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "point\t\tNLL − S\t± std err\tentropy S\tsamples\t")
	for _, p := range rep.Points {
		h := ""
		if p.HeldOut {
			h = "held out"
		}
		fmt.Fprintf(tw, "%s\t%s\t%+.5f\t%.5f\t%.5f\t%d\t\n", p.Label, h, p.NLLMinusEntropy, p.StdErr, p.EntropyPerSite, p.Samples)
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	fmt.Fprintf(w, "mean NLL − S per site %+.5f\n", rep.MeanNLLMinusS)
	fmt.Fprintf(w, "S is the mean of −log p over the dataset's samples and NLL − S the mean of log p − log q over the same samples (paired, hence the small standard error); %s\n", rep.KLNotAvailable)
	if rep.SameData {
		fmt.Fprintln(w, "note: these are the training samples; a fresh dataset from the same settings (another --seed) gives an unbiased estimate")
	}
	return nil
}
