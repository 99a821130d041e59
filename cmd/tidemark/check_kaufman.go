package main

import (
	"fmt"
	"io"
	"math"
	"text/tabwriter"

	"tidemark/checkpoints"
	"tidemark/data"
	"tidemark/data/ising"
	"tidemark/model"
)

// kaufmanPoint is one row of check's report for a lattice too large to
// enumerate (nats per site).
type kaufmanPoint struct {
	Params          []float64 `json:"params"`
	Label           string    `json:"label"`
	HeldOut         bool      `json:"held_out"`
	EntropyPerSite  float64   `json:"entropy_per_site"`
	NLLMinusEntropy float64   `json:"nll_minus_entropy_per_site"`
	StdErr          float64   `json:"std_err"`
	Samples         int       `json:"samples"`
}

// kaufmanReport is check's JSON output when the exact entropy comes from
// Kaufman's partition function; its keys are stable.
type kaufmanReport struct {
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

// kaufmanEntropy returns the exact entropy per site of the periodic Ly×Lx
// Ising model (ising.KaufmanEntropy, B. Kaufman, Phys. Rev. 76, 1232
// (1949)); ok is false where the formula does not apply (a field, T ≤ 0).
func kaufmanEntropy(ly, lx int, c ising.Couplings) (float64, bool) {
	if c.H != 0 || c.T <= 0 {
		return 0, false
	}
	s := ising.KaufmanEntropy(ly, lx, c.T, c.Jx, c.Jy)
	if math.IsNaN(s) || math.IsInf(s, 0) {
		return 0, false
	}
	return s, true
}

// checkKaufman compares the model's mean negative log-likelihood on the
// dataset's samples with the exact entropy at every grid point of an Ising
// dataset too large to enumerate: NLL − S estimates KL(p_exact‖p_model) per
// site from the samples (it is the cross-entropy minus the entropy), with
// their sampling noise. It returns ok = false when the dataset is not a
// zero-field Ising dataset.
func checkKaufman(w io.Writer, asJSON bool, path, dataPath string, ck *checkpoints.Checkpoint, m *model.Model, ds *data.Dataset) (bool, error) {
	sm, err := ising.ParseSourceMeta(ds.Meta)
	if err != nil || len(sm.Lattice) != 2 {
		return false, nil
	}
	g := data.NewGrid(ds)
	N := ds.N
	rep := &kaufmanReport{
		Checkpoint: path, Data: dataPath, Generator: "ising", Sites: N, Units: "nats per site",
		Reference:      "entropy from Kaufman's exact partition function of the finite periodic lattice (Phys. Rev. 76, 1232 (1949))",
		KLNotAvailable: fmt.Sprintf("the %d×%d lattice has 2^%d states, too many to sum KL and TV over; NLL − S estimates KL from the samples", sm.Lattice[0], sm.Lattice[1], N),
		SameData:       checkpoints.Fingerprint(ds) == ck.Header.Dataset.Fingerprint,
		Points:         []kaufmanPoint{},
	}
	var sum float64
	for k, p := range g.Points {
		c, err := sm.Couplings(p)
		if err != nil {
			return false, nil
		}
		s, ok := kaufmanEntropy(sm.Lattice[0], sm.Lattice[1], c)
		if !ok {
			return false, nil
		}
		idx := g.Index[k]
		xs := make([]uint8, 0, len(idx)*N)
		for _, i := range idx {
			xs = append(xs, ds.Row(i)...)
		}
		lp := make([]float64, len(idx))
		if err := m.LogProb(lp, xs, p); err != nil {
			return true, fmt.Errorf("check: %w", err)
		}
		var mean, sq float64
		for _, v := range lp {
			mean -= v / float64(N)
		}
		mean /= float64(len(lp))
		for _, v := range lp {
			d := -v/float64(N) - mean
			sq += d * d
		}
		se := math.Sqrt(sq / float64(len(lp)-1) / float64(len(lp)))
		held := false
		for _, h := range ck.Header.HeldOut {
			held = held || nearPoint(h, p)
		}
		rep.Points = append(rep.Points, kaufmanPoint{Params: p, Label: g.Label(k), HeldOut: held,
			EntropyPerSite: s, NLLMinusEntropy: mean - s, StdErr: se, Samples: len(idx)})
		sum += mean - s
	}
	rep.MeanNLLMinusS = sum / float64(len(rep.Points))
	if asJSON {
		return true, writeJSON(w, rep)
	}
	fmt.Fprintf(w, "model %s against the exact entropy of the %d×%d Ising lattice of %s (Kaufman, Phys. Rev. 76, 1232 (1949)), nats per site\n",
		path, sm.Lattice[0], sm.Lattice[1], dataPath)
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
		return true, err
	}
	fmt.Fprintf(w, "mean NLL − S per site %+.5f\n", rep.MeanNLLMinusS)
	fmt.Fprintf(w, "NLL − S is the model's cross-entropy on the dataset's samples minus the exact entropy: it estimates KL(p_exact‖p_model) per site and carries the samples' noise (and their Monte Carlo correlations); %s\n", rep.KLNotAvailable)
	if !rep.SameData {
		fmt.Fprintln(w, "note: this dataset is not the one the model was trained on (fingerprints differ)")
	} else {
		fmt.Fprintln(w, "note: these are the training samples; a fresh dataset from the same settings (another --seed) gives an unbiased estimate")
	}
	return true, nil
}
