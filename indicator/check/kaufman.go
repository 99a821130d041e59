package check

import (
	"fmt"
	"io"
	"math"
	"text/tabwriter"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/data/ising"
	"tidemark/indicator/scorestat"
)

// KaufmanPoint is one row of a Kaufman report (nats per site).
type KaufmanPoint struct {
	Params          []float64 `json:"params"`
	Label           string    `json:"label"`
	HeldOut         bool      `json:"held_out"`
	EntropyPerSite  float64   `json:"entropy_per_site"`
	NLLMinusEntropy float64   `json:"nll_minus_entropy_per_site"`
	StdErr          float64   `json:"std_err"`
	Samples         int       `json:"samples"`
}

// KaufmanReport is the result of Kaufman; its JSON keys are stable.
type KaufmanReport struct {
	Checkpoint    string         `json:"checkpoint"`
	Data          string         `json:"data"`
	Generator     string         `json:"generator"`
	Reference     string         `json:"reference"`
	Sites         int            `json:"sites"`
	Units         string         `json:"units"`
	SameData      bool           `json:"same_data_as_training"`
	Points        []KaufmanPoint `json:"points"`
	MeanNLLMinusS float64        `json:"mean_nll_minus_entropy_per_site"`
	// MeanStdErr is the standard error of MeanNLLMinusS from the points'
	// errors, √(Σ σ_k²)/K (the points' samples are independent).
	MeanStdErr     float64  `json:"mean_nll_minus_entropy_std_err"`
	KLPerSite      *float64 `json:"mean_kl_per_site"`
	KLNotAvailable string   `json:"kl_not_available"`
	// Response is how the model's log-likelihoods respond to the
	// parameters against the exact ones (MeasureResponse); nil without
	// two neighbouring points.
	Response *Response `json:"response,omitempty"`
	lattice  []int
}

// KaufmanEntropy returns the exact entropy per site of the periodic Ly×Lx
// Ising model (ising.KaufmanEntropy, B. Kaufman, Phys. Rev. 76, 1232
// (1949)); ok is false where the formula does not apply (a field, T ≤ 0).
func KaufmanEntropy(ly, lx int, c ising.Couplings) (float64, bool) {
	if c.H != 0 || c.T <= 0 {
		return 0, false
	}
	s := ising.KaufmanEntropy(ly, lx, c.T, c.Jx, c.Jy)
	if math.IsNaN(s) || math.IsInf(s, 0) {
		return 0, false
	}
	return s, true
}

// Kaufman compares mdl's mean negative log-likelihood on the samples of an
// Ising dataset with the exact entropy at every grid point: NLL − S
// estimates KL(p_exact‖p_model) per site from the samples (it is the
// cross-entropy minus the entropy), with their sampling noise. ok is false
// when ds is not a zero-field Ising dataset of a 2-D lattice. The caller
// fills Checkpoint, Data and SameData.
func Kaufman(mdl density.Source, ds *data.Dataset, heldOut [][]float64) (rep *KaufmanReport, ok bool, err error) {
	sm, err := ising.ParseSourceMeta(ds.Meta)
	if err != nil || len(sm.Lattice) != 2 {
		return nil, false, nil
	}
	g := data.NewGrid(ds)
	N := ds.N
	rep = &KaufmanReport{
		Generator: "ising", Sites: N, Units: "nats per site", lattice: sm.Lattice,
		Reference:      "entropy from Kaufman's exact partition function of the finite periodic lattice (Phys. Rev. 76, 1232 (1949))",
		KLNotAvailable: fmt.Sprintf("the %d×%d lattice has 2^%d states, too many to sum KL and TV over; NLL − S estimates KL from the samples", sm.Lattice[0], sm.Lattice[1], N),
		Points:         []KaufmanPoint{},
	}
	for k, p := range g.Points {
		c, err := sm.Couplings(p)
		if err != nil {
			return nil, false, nil
		}
		s, ok := KaufmanEntropy(sm.Lattice[0], sm.Lattice[1], c)
		if !ok {
			return nil, false, nil
		}
		nll, err := meanNLL(mdl, ds, g.Index[k], p)
		if err != nil {
			return nil, true, err
		}
		for i := range nll {
			nll[i] /= float64(N)
		}
		mean, _, se := scorestat.MeanErr(nll)
		rep.Points = append(rep.Points, KaufmanPoint{Params: p, Label: g.Label(k), HeldOut: isHeld(heldOut, p),
			EntropyPerSite: s, NLLMinusEntropy: mean - s, StdErr: se, Samples: len(nll)})
	}
	rep.MeanNLLMinusS, rep.MeanStdErr = averagePoints(rep.Points)
	return rep, true, nil
}

// WriteText prints the report as a table with its summary lines.
func (r *KaufmanReport) WriteText(w io.Writer) error {
	fmt.Fprintf(w, "model %s against the exact entropy of the %d×%d Ising lattice of %s (Kaufman, Phys. Rev. 76, 1232 (1949)), nats per site\n",
		r.Checkpoint, r.lattice[0], r.lattice[1], r.Data)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "point\t\tNLL − S\t± std err\tentropy S\tsamples\t")
	for _, p := range r.Points {
		fmt.Fprintf(tw, "%s\t%s\t%+.5f\t%.5f\t%.5f\t%d\t\n", p.Label, heldLabel(p.HeldOut), p.NLLMinusEntropy, p.StdErr, p.EntropyPerSite, p.Samples)
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	fmt.Fprintf(w, "mean NLL − S per site %+.5f ± %.5f (standard error from the points' errors)\n", r.MeanNLLMinusS, r.MeanStdErr)
	fmt.Fprintf(w, "NLL − S is the model's cross-entropy on the dataset's samples minus the exact entropy: it estimates KL(p_exact‖p_model) per site and carries the samples' noise (and their Monte Carlo correlations); %s\n", r.KLNotAvailable)
	if !r.SameData {
		fmt.Fprintln(w, "note: this dataset is not the one the model was trained on (fingerprints differ)")
	} else {
		fmt.Fprintln(w, "note: these are the training samples; a fresh dataset from the same settings (another --seed) gives an unbiased estimate")
	}
	return r.Response.writeText(w)
}

// averagePoints returns the mean of the points' NLL − S and its standard
// error from theirs, √(Σ σ_k²)/K (the points' samples are independent).
func averagePoints(pts []KaufmanPoint) (mean, stderr float64) {
	var sum, sq float64
	for _, p := range pts {
		sum += p.NLLMinusEntropy
		sq += p.StdErr * p.StdErr
	}
	return sum / float64(len(pts)), math.Sqrt(sq) / float64(len(pts))
}
