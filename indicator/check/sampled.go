package check

import (
	"fmt"
	"io"
	"text/tabwriter"

	"gonum.org/v1/gonum/stat"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/indicator/scorestat"
)

// SampledReport is the result of Sampled: a Kaufman report's figures with
// the entropy estimated on the samples; its JSON keys are the same.
type SampledReport struct {
	KaufmanReport
}

// Sampled compares mdl with an exact source that gives log p of any
// snapshot but cannot list its states (a chain from the MPS solver), at
// every grid point of ds whose snapshots src drew: the entropy per site is
// the mean of −log p(x)/N over those samples (an unbiased estimate), and
// NLL − S the mean of (log p(x) − log q(x))/N over the same samples, whose
// paired differences give a standard error far smaller than that of NLL and
// S separately. The caller fills Checkpoint, Data and SameData.
func Sampled(mdl, src density.Source, ds *data.Dataset, heldOut [][]float64) (*SampledReport, error) {
	g := data.NewGrid(ds)
	N := ds.N
	rep := &SampledReport{KaufmanReport{
		Generator: ds.Meta.Generator(), Sites: N, Units: "nats per site",
		Reference:      "exact log-probabilities of the dataset's samples under the source that drew them; entropy S = mean −log p/N over those samples",
		KLNotAvailable: fmt.Sprintf("%d^%d states are too many to sum KL and TV over; NLL − S estimates KL from the samples", ds.Meta.Alphabet, N),
		Points:         []KaufmanPoint{},
	}}
	for k, p := range g.Points {
		idx := g.Index[k]
		if len(idx) < 2 {
			continue
		}
		nq, err := meanNLL(mdl, ds, idx, p)
		if err != nil {
			return nil, err
		}
		np, err := meanNLL(src, ds, idx, p)
		if err != nil {
			return nil, fmt.Errorf("exact reference at %s: %w", g.Label(k), err)
		}
		diff := make([]float64, len(idx))
		for i := range np {
			np[i] /= float64(N)
			diff[i] = nq[i]/float64(N) - np[i]
		}
		s := stat.Mean(np, nil)
		d, _, se := scorestat.MeanErr(diff)
		rep.Points = append(rep.Points, KaufmanPoint{Params: p, Label: g.Label(k), HeldOut: isHeld(heldOut, p),
			EntropyPerSite: s, NLLMinusEntropy: d, StdErr: se, Samples: len(idx)})
	}
	if len(rep.Points) == 0 {
		return nil, fmt.Errorf("expected at least 2 samples at some grid point, found none")
	}
	rep.MeanNLLMinusS, rep.MeanStdErr = averagePoints(rep.Points)
	return rep, nil
}

// WriteText prints the report as a table with its summary lines.
func (r *SampledReport) WriteText(w io.Writer) error {
	fmt.Fprintf(w, "model %s against the exact log-probabilities of %s (%s, %d sites), nats per site\n", r.Checkpoint, r.Data, r.Generator, r.Sites)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "point\t\tNLL − S\t± std err\tentropy S\tsamples\t")
	for _, p := range r.Points {
		fmt.Fprintf(tw, "%s\t%s\t%+.5f\t%.5f\t%.5f\t%d\t\n", p.Label, heldLabel(p.HeldOut), p.NLLMinusEntropy, p.StdErr, p.EntropyPerSite, p.Samples)
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	fmt.Fprintf(w, "mean NLL − S per site %+.5f ± %.5f (standard error from the points' errors)\n", r.MeanNLLMinusS, r.MeanStdErr)
	fmt.Fprintf(w, "S is the mean of −log p over the dataset's samples and NLL − S the mean of log p − log q over the same samples (paired, hence the small standard error); %s\n", r.KLNotAvailable)
	if r.SameData {
		fmt.Fprintln(w, "note: these are the training samples; a fresh dataset from the same settings (another --seed) gives an unbiased estimate")
	}
	return r.Response.writeText(w)
}
