package check

import (
	"fmt"
	"io"
	"math"
	"text/tabwriter"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/indicator/scorestat"
)

// Point is one row of an Enumerate report (nats per site).
type Point struct {
	Params          []float64 `json:"params"`
	Label           string    `json:"label"`
	HeldOut         bool      `json:"held_out"`
	KLPerSite       *float64  `json:"kl_per_site"`
	TV              float64   `json:"tv"`
	EntropyPerSite  float64   `json:"entropy_per_site"`
	NLLMinusEntropy *float64  `json:"nll_minus_entropy_per_site"`
	// StdErr is the standard error of NLLMinusEntropy from the samples.
	StdErr  *float64 `json:"nll_minus_entropy_std_err"`
	Samples int      `json:"samples"`
}

// Report is the result of Enumerate; its JSON keys are stable.
type Report struct {
	Checkpoint     string   `json:"checkpoint"`
	Data           string   `json:"data"`
	Generator      string   `json:"generator"`
	Sites          int      `json:"sites"`
	States         int      `json:"states"`
	Units          string   `json:"units"`
	SameData       bool     `json:"same_data_as_training"`
	Points         []Point  `json:"points"`
	MeanKLPerSite  *float64 `json:"mean_kl_per_site"`
	MeanKLTrained  *float64 `json:"mean_kl_per_site_trained"`
	MeanKLHeldOut  *float64 `json:"mean_kl_per_site_held_out"`
	MaxKLPerSite   *float64 `json:"max_kl_per_site"`
	ModelMassError float64  `json:"max_model_mass_error"`
	// Response is how the model's log-likelihoods respond to the
	// parameters against the exact ones (MeasureResponse); nil without
	// two neighbouring points with samples.
	Response *Response `json:"response,omitempty"`
}

// finite returns &v, or nil for NaN and ±Inf (which JSON cannot hold).
func finite(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

// isHeld reports whether p is one of the held-out points.
func isHeld(heldOut [][]float64, p []float64) bool {
	for _, h := range heldOut {
		if data.SamePoint(h, p) {
			return true
		}
	}
	return false
}

// target is one parameter point to compare at, with the dataset's
// snapshots there.
type target struct {
	p       []float64
	held    bool
	samples []int
}

// targets lists the grid points of ds, then the held-out points that are
// not among them.
func targets(ds *data.Dataset, heldOut [][]float64) []target {
	g := data.NewGrid(ds)
	var pts []target
	for k, p := range g.Points {
		pts = append(pts, target{p: p, held: isHeld(heldOut, p), samples: g.Index[k]})
	}
	for _, h := range heldOut {
		if !isHeld(g.Points, h) {
			pts = append(pts, target{p: h, held: true})
		}
	}
	return pts
}

// meanNLL returns the mean negative log-likelihood (nats per snapshot) of
// the given snapshots of ds at λ.
func meanNLL(mdl density.Source, ds *data.Dataset, rows []int, lambda []float64) ([]float64, error) {
	xs := make([]uint8, 0, len(rows)*ds.N)
	for _, r := range rows {
		xs = append(xs, ds.Row(r)...)
	}
	lp := make([]float64, len(rows))
	if err := mdl.LogProb(lp, xs, lambda); err != nil {
		return nil, err
	}
	for i := range lp {
		lp[i] = -lp[i]
	}
	return lp, nil
}

// Enumerate compares mdl with the exact source at every grid point of ds
// and every held-out point by summing over all q^N states
// (density.ExhaustiveDivergence, on threads goroutines); at points with samples it
// also reports the mean NLL minus the exact entropy. progress, if set,
// receives the number of states done. The caller fills Checkpoint, Data,
// Generator and SameData.
func Enumerate(exact, mdl density.Source, ds *data.Dataset, heldOut [][]float64, threads int, progress func(int)) (*Report, error) {
	N := ds.N
	rep := &Report{Sites: N, States: density.States(ds.Meta.Alphabet, N), Units: "nats per site (tv: none)", Points: []Point{}}
	var sum, sumT, sumH float64
	var nT, nH int
	maxKL := 0.0
	pts := targets(ds, heldOut)
	for _, q := range pts {
		d, err := density.ExhaustiveDivergence(exact, mdl, q.p, threads, progress)
		if err != nil {
			return nil, fmt.Errorf("at %s: %w", data.FormatPoint(ds.Meta.ParamNames, q.p), err)
		}
		kl := d.KL / float64(N)
		row := Point{
			Params: q.p, Label: data.FormatPoint(ds.Meta.ParamNames, q.p), HeldOut: q.held,
			KLPerSite: finite(kl), TV: d.TV, EntropyPerSite: d.Entropy / float64(N), Samples: len(q.samples),
		}
		rep.ModelMassError = math.Max(rep.ModelMassError, math.Abs(d.ModelMass-1))
		if len(q.samples) > 0 {
			nll, err := meanNLL(mdl, ds, q.samples, q.p)
			if err != nil {
				return nil, err
			}
			for i := range nll {
				nll[i] /= float64(N)
			}
			mean, _, se := scorestat.MeanErr(nll)
			row.NLLMinusEntropy = finite(mean - d.Entropy/float64(N))
			row.StdErr = finite(se)
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

// Points returns the number of points Enumerate compares at: the grid
// points of ds and the held-out points not among them.
func Points(ds *data.Dataset, heldOut [][]float64) int { return len(targets(ds, heldOut)) }

// heldLabel marks a held-out point in a table.
func heldLabel(held bool) string {
	if held {
		return "held out"
	}
	return ""
}

func fmtOpt(v *float64, format string) string {
	if v == nil {
		return "—"
	}
	return fmt.Sprintf(format, *v)
}

// WriteText prints the report as a table with its summary lines.
func (r *Report) WriteText(w io.Writer) error {
	fmt.Fprintf(w, "model %s against the exact %s distribution of %s: %d states per point, nats per site\n", r.Checkpoint, r.Generator, r.Data, r.States)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "point\t\tKL\tTV\tNLL − H\t± std err\tentropy\tsamples\t")
	for _, p := range r.Points {
		fmt.Fprintf(tw, "%s\t%s\t%s\t%.4f\t%s\t%s\t%.4f\t%d\t\n", p.Label, heldLabel(p.HeldOut), fmtOpt(p.KLPerSite, "%.5f"), p.TV, fmtOpt(p.NLLMinusEntropy, "%+.5f"), fmtOpt(p.StdErr, "%.5f"), p.EntropyPerSite, p.Samples)
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	fmt.Fprintf(w, "mean KL per site %s (trained points %s, held-out points %s), max %s\n",
		fmtOpt(r.MeanKLPerSite, "%.5f"), fmtOpt(r.MeanKLTrained, "%.5f"), fmtOpt(r.MeanKLHeldOut, "%.5f"), fmtOpt(r.MaxKLPerSite, "%.5f"))
	fmt.Fprintln(w, "KL and TV are exact sums over all states (their means carry no sampling error); NLL − H averages over the dataset's samples at each point and carries their sampling noise (± its standard error)")
	if !r.SameData {
		fmt.Fprintln(w, "note: this dataset is not the one the model was trained on (fingerprints differ); NLL − H uses its samples")
	}
	return r.Response.writeText(w)
}
