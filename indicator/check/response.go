package check

import (
	"fmt"
	"io"
	"math"
	"slices"
	"text/tabwriter"

	"gonum.org/v1/gonum/stat"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/indicator/scorestat"
)

// ResponsePair is the response of the model between two neighbouring grid
// points a and b (adjacent values of one axis, the others equal): the
// least-squares slope of the model's log-likelihood ratio
// log q(x|b) − log q(x|a) against the exact one, log p(x|b) − log p(x|a),
// over the dataset's snapshots of both points.
type ResponsePair struct {
	From    string    `json:"from"`
	To      string    `json:"to"`
	FromAt  []float64 `json:"from_params"`
	ToAt    []float64 `json:"to_params"`
	Slope   float64   `json:"slope"`
	StdErr  float64   `json:"std_err"`
	R2      float64   `json:"r2"`
	Samples int       `json:"samples"`
}

// Response summarises the pairs: their median slope and its range. A
// slope of 1 means the model's density changes with the parameters as
// fast as the exact one; below 1 it changes more slowly, and the
// indicators that compare neighbouring points (local, fisher,
// fisher_deriv) read low there.
type Response struct {
	Pairs  []ResponsePair `json:"pairs"`
	Median float64        `json:"median_slope"`
	Min    float64        `json:"min_slope"`
	Max    float64        `json:"max_slope"`
}

// weakResponse is the median slope below which the report says the
// indicators that compare neighbouring points read low. 0.9 is a choice:
// at 32×32 a median of 0.81–0.84 went with local and Fisher peaks 0.005–0.02
// low and curves 15–30% low near T_c (bench/RESULTS.md).
const weakResponse = 0.9

// strongResponse is the median slope above which the report says those
// indicators read high (the convolutional model measured 1.14 at 16×16).
const strongResponse = 1.1

// MeasureResponse measures how the log-likelihoods of mdl respond to the
// parameters against those of the exact source ref, between every pair of
// neighbouring grid points of ds that both hold at least two snapshots.
// It returns nil when there is no such pair. The slope's standard error is
// the ordinary least-squares one, which treats the snapshots as
// independent (Monte Carlo snapshots are correlated, so it is a lower
// bound).
func MeasureResponse(mdl, ref density.Source, ds *data.Dataset) (*Response, error) {
	g := data.NewGrid(ds)
	type key struct{ rows, at int }
	cache := map[key][2][]float64{} // model, exact log p of point rows' snapshots at point at
	logp := func(rows, at int) ([2][]float64, error) {
		if v, ok := cache[key{rows, at}]; ok {
			return v, nil
		}
		idx := g.Index[rows]
		xs := make([]uint8, 0, len(idx)*ds.N)
		for _, r := range idx {
			xs = append(xs, ds.Row(r)...)
		}
		var v [2][]float64
		for s, src := range []density.Source{mdl, ref} {
			v[s] = make([]float64, len(idx))
			if err := src.LogProb(v[s], xs, g.Points[at]); err != nil {
				return v, fmt.Errorf("response: log p at %s: %w", g.Label(at), err)
			}
		}
		cache[key{rows, at}] = v
		return v, nil
	}
	rep := &Response{Pairs: []ResponsePair{}}
	for _, pr := range g.NeighbourPairs() {
		a, b := pr[0], pr[1]
		if len(g.Index[a]) < 2 || len(g.Index[b]) < 2 {
			continue
		}
		var dm, de []float64
		for _, rows := range []int{a, b} {
			la, err := logp(rows, a)
			if err != nil {
				return nil, err
			}
			lb, err := logp(rows, b)
			if err != nil {
				return nil, err
			}
			for i := range la[0] {
				dm = append(dm, lb[0][i]-la[0][i])
				de = append(de, lb[1][i]-la[1][i])
			}
		}
		slope, se, r2, ok := olsSlope(de, dm)
		if !ok {
			continue
		}
		rep.Pairs = append(rep.Pairs, ResponsePair{From: g.Label(a), To: g.Label(b), FromAt: g.Points[a], ToAt: g.Points[b],
			Slope: slope, StdErr: se, R2: r2, Samples: len(dm)})
	}
	if len(rep.Pairs) == 0 {
		return nil, nil
	}
	s := make([]float64, len(rep.Pairs))
	for i, p := range rep.Pairs {
		s[i] = p.Slope
	}
	slices.Sort(s)
	rep.Min, rep.Max, rep.Median = s[0], s[len(s)-1], scorestat.Quantile(s, 0.5)
	return rep, nil
}

// olsSlope fits y = α + s·x by least squares (gonum's stat.LinearRegression)
// and returns s, its standard error √((1 − R²)/(n − 2))·σ_y/σ_x, R² and
// whether x varies.
func olsSlope(x, y []float64) (s, se, r2 float64, ok bool) {
	sx, sy := stat.StdDev(x, nil), stat.StdDev(y, nil)
	if len(x) < 3 || !(sx > 0) || math.IsInf(sx, 0) {
		return 0, 0, 0, false
	}
	alpha, s := stat.LinearRegression(x, y, nil, false)
	r2 = 1
	if sy > 0 {
		r2 = stat.RSquared(x, y, nil, alpha, s)
	}
	se = math.Sqrt(max(1-r2, 0)/float64(len(x)-2)) * sy / sx
	return s, se, r2, true
}

// writeText prints the response section of a check report.
func (r *Response) writeText(w io.Writer) error {
	if r == nil {
		return nil
	}
	fmt.Fprintln(w, "response: slope of the model's log-likelihood ratio between neighbouring points against the exact one (1: the model's density changes as fast as the exact density)")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "from\tto\tslope\t± std err\tR²\tsamples\t")
	for _, p := range r.Pairs {
		fmt.Fprintf(tw, "%s\t%s\t%.3f\t%.3f\t%.3f\t%d\t\n", p.From, p.To, p.Slope, p.StdErr, p.R2, p.Samples)
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	fmt.Fprintf(w, "median slope %.3f (range %.3f to %.3f); standard errors treat the snapshots as independent\n", r.Median, r.Min, r.Max)
	if c := r.caution(); c != "" {
		fmt.Fprintf(w, "caution: %s\n", c)
	}
	return nil
}

// caution says how the neighbour indicators are biased when the median
// slope is below weakResponse or above strongResponse, and "" otherwise.
func (r *Response) caution() string {
	pace, read, where, move := "more slowly", "low", "small", "away from where it is smallest"
	switch {
	case r.Median < weakResponse:
	case r.Median > strongResponse:
		pace, read, where, move = "faster", "high", "large", "towards where it is largest"
	default:
		return ""
	}
	return fmt.Sprintf("the model's density changes %s with the parameters than the exact one (median slope %.2f): the indicators that compare neighbouring points (local, fisher, fisher_deriv) read %s where the slope is %s, and their peaks move %s; neither the bootstrap nor an ensemble's spread includes this bias", pace, r.Median, read, where, move)
}

// Note is the response in one line for a scan's notes: the median slope,
// the pair where it is farthest from 1, and the caution when there is one.
func (r *Response) Note() string {
	if r == nil || len(r.Pairs) == 0 {
		return ""
	}
	far := r.Pairs[0]
	for _, p := range r.Pairs[1:] {
		if math.Abs(p.Slope-1) > math.Abs(far.Slope-1) {
			far = p
		}
	}
	s := fmt.Sprintf("response against the exact density on this dataset's snapshots: median slope %.2f of the model's log-likelihood ratio between neighbouring points against the exact one (1 is exact), farthest from 1 at %s → %s (%.2f); `tidemark check` prints every pair", r.Median, far.From, far.To, far.Slope)
	if c := r.caution(); c != "" {
		s += "; " + c
	}
	return s
}
