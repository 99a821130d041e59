package check

import (
	"context"
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
	return MeasureResponseKnown(mdl, ref, ds, nil)
}

// MeasureResponseKnown is MeasureResponse with the model's log-likelihoods
// already computed, when known is not nil: known(m, k) is log q of the
// dataset's snapshot m at point k of data.NewGrid(ds) (a scan's, say), and
// only the exact source scores the snapshots.
func MeasureResponseKnown(mdl, ref density.Source, ds *data.Dataset, known func(m, k int) float64) (*Response, error) {
	g := data.NewGrid(ds)
	var pairs [][2]int
	for _, pr := range g.NeighbourPairs() {
		if len(g.Index[pr[0]]) >= 2 && len(g.Index[pr[1]]) >= 2 {
			pairs = append(pairs, [2]int{pr[0], pr[1]})
		}
	}
	if len(pairs) == 0 {
		return nil, nil
	}
	// ats[r] are the points at which point r's snapshots are scored: r and
	// its neighbours in pairs. lp[r][j][s] holds source s's log p of them,
	// slot by slot, at ats[r][j].
	ats := make([][]int, g.K())
	add := func(r, at int) {
		if !slices.Contains(ats[r], at) {
			ats[r] = append(ats[r], at)
		}
	}
	for _, pr := range pairs {
		a, b := pr[0], pr[1]
		add(a, a)
		add(a, b)
		add(b, a)
		add(b, b)
	}
	lp := make([][][2][]float64, g.K())
	scored := make([][]int, g.K()) // the rows of the points that are scored
	for r, at := range ats {
		lp[r] = make([][2][]float64, len(at))
		for j := range at {
			lp[r][j] = [2][]float64{make([]float64, len(g.Index[r])), make([]float64, len(g.Index[r]))}
		}
		if len(at) > 0 {
			scored[r] = g.Index[r]
		}
	}
	slots := data.NewSlots(ds.M, scored)
	// The snapshots are read block by block (a dataset read by
	// data.ReadHead never holds them all); each run of rows of one point is
	// scored in one call per point and source.
	err := ds.EachBlock(context.Background(), 0, func(first int, xs []uint8) error {
		return slots.Runs(first, len(xs)/ds.N, 0, func(lo, c, r, i int) error {
			sub := xs[lo*ds.N : (lo+c)*ds.N]
			for j, at := range ats[r] {
				for s, src := range []density.Source{mdl, ref} {
					dst := lp[r][j][s][i : i+c]
					if s == 0 && known != nil {
						for u := range dst {
							dst[u] = known(first+lo+u, at)
						}
						continue
					}
					if err := src.LogProb(dst, sub, g.Points[at]); err != nil {
						return fmt.Errorf("response: log p at %s: %w", g.Label(at), err)
					}
				}
			}
			return nil
		})
	})
	if err != nil {
		return nil, err
	}
	logp := func(rows, at int) [2][]float64 {
		return lp[rows][slices.Index(ats[rows], at)]
	}
	rep := &Response{Pairs: []ResponsePair{}}
	for _, pr := range pairs {
		a, b := pr[0], pr[1]
		var dm, de []float64
		for _, rows := range []int{a, b} {
			la, lb := logp(rows, a), logp(rows, b)
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
