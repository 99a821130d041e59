package posterior

import (
	"errors"
	"fmt"
	"math"
	"sort"
)

// ErrNoSupport is returned (wrapped) when every grid point has probability
// zero (all log-likelihoods are −Inf).
var ErrNoSupport = errors.New("every grid point has zero likelihood")

// Normalize returns the log posterior log π_k = ℓ_k − log Σ_j exp ℓ_j of
// log-likelihoods ℓ (nats) under a uniform prior over the points. −Inf
// entries are allowed (zero probability); NaN and +Inf are errors.
func Normalize(logLik []float64) ([]float64, error) {
	if len(logLik) == 0 {
		return nil, errors.New("posterior: expected at least one grid point, found none")
	}
	top := math.Inf(-1)
	for k, v := range logLik {
		if math.IsNaN(v) || math.IsInf(v, 1) {
			return nil, fmt.Errorf("posterior: log-likelihood at grid point %d is %v, expected a finite number or −Inf", k, v)
		}
		top = math.Max(top, v)
	}
	if math.IsInf(top, -1) {
		return nil, fmt.Errorf("posterior: %w", ErrNoSupport)
	}
	s := 0.0
	for _, v := range logLik {
		s += math.Exp(v - top)
	}
	lse := top + math.Log(s)
	out := make([]float64, len(logLik))
	for k, v := range logLik {
		out[k] = v - lse
	}
	return out, nil
}

// Probs returns exp of a log posterior.
func Probs(logPost []float64) []float64 {
	out := make([]float64, len(logPost))
	for k, v := range logPost {
		out[k] = math.Exp(v)
	}
	return out
}

// GroupLogLik returns Σ_{m ∈ rows} ℓ[m][k] for an M×K row-major matrix ll:
// the log-likelihood of the group of snapshots rows, assumed independent
// and drawn at one parameter point.
func GroupLogLik(ll []float64, k int, rows []int) []float64 {
	out := make([]float64, k)
	for _, m := range rows {
		for j, v := range ll[m*k : (m+1)*k] {
			out[j] += v
		}
	}
	return out
}

// Marginal returns the distinct values of axis a among points, ascending,
// and the posterior mass at each (the sum of probs over the points with
// that value).
func Marginal(points [][]float64, a int, probs []float64) (values, mass []float64) {
	idx := map[float64]int{}
	for _, p := range points {
		if _, ok := idx[p[a]]; !ok {
			idx[p[a]] = 0
			values = append(values, p[a])
		}
	}
	sort.Float64s(values)
	for i, v := range values {
		idx[v] = i
	}
	mass = make([]float64, len(values))
	for k, p := range points {
		mass[idx[p[a]]] += probs[k]
	}
	return values, mass
}

// Summary describes a posterior along one axis.
type Summary struct {
	// MAP is the grid value with the largest posterior mass.
	MAP float64 `json:"map"`
	// Mean and Std are the posterior mean and standard deviation.
	Mean float64 `json:"mean"`
	Std  float64 `json:"std"`
	// Lo and Hi bound the central credible interval: where the cumulative
	// mass reaches (1−Mass)/2 and (1+Mass)/2, the mass of each grid value
	// being spread evenly over its cell (from half-way to the previous value
	// to half-way to the next; the end cells stop at the end values).
	Lo float64 `json:"lo"`
	Hi float64 `json:"hi"`
	// Mass is the credible mass of [Lo, Hi] asked for (e.g. 0.68).
	Mass float64 `json:"mass"`
	// AtEdge is true when the first or last grid value holds more than
	// (1−Mass)/2 of the mass, so the interval may be cut off by the grid.
	AtEdge bool `json:"at_edge"`
	// GridLimited is true when one grid value holds at least Mass of the
	// posterior: the interval then reflects the grid spacing, not the data,
	// and a finer grid is needed to resolve it.
	GridLimited bool `json:"grid_limited"`
}

// Summarize summarises the posterior mass over ascending values (a
// marginal from Marginal, or a 1-D grid) with a central credible interval
// of the given mass in (0, 1). The masses must sum to 1 up to round-off.
func Summarize(values, mass []float64, credible float64) (Summary, error) {
	var s Summary
	if len(values) == 0 || len(values) != len(mass) {
		return s, fmt.Errorf("posterior: expected as many masses as values (at least one), found %d and %d", len(mass), len(values))
	}
	if !(credible > 0 && credible < 1) {
		return s, fmt.Errorf("posterior: expected a credible mass between 0 and 1, found %v", credible)
	}
	tot := 0.0
	for i, m := range mass {
		if !(m >= 0) || math.IsInf(m, 1) {
			return s, fmt.Errorf("posterior: mass at %v is %v, expected a probability", values[i], m)
		}
		if i > 0 && !(values[i] > values[i-1]) {
			return s, fmt.Errorf("posterior: values must ascend, found %v after %v", values[i], values[i-1])
		}
		tot += m
	}
	if math.Abs(tot-1) > 1e-6 {
		return s, fmt.Errorf("posterior: masses sum to %v, expected 1", tot)
	}
	s.Mass = credible
	best := -1.0
	for i, m := range mass {
		if m > best {
			best, s.MAP = m, values[i]
		}
		s.Mean += m * values[i]
	}
	s.GridLimited = best >= credible*tot
	for i, m := range mass {
		d := values[i] - s.Mean
		s.Std += m * d * d
	}
	s.Std = math.Sqrt(s.Std)
	lo, hi := (1-credible)/2, (1+credible)/2
	s.Lo, s.Hi = quantileOf(values, mass, lo*tot), quantileOf(values, mass, hi*tot)
	s.AtEdge = mass[0] > lo*tot || (len(values) > 1 && mass[len(mass)-1] > lo*tot) || len(values) == 1
	return s, nil
}

// quantileOf returns where the cumulative mass over the cells of ascending
// values reaches q.
func quantileOf(values, mass []float64, q float64) float64 {
	n := len(values)
	if n == 1 {
		return values[0]
	}
	edge := func(i int) float64 { // left boundary of cell i; edge(n) is the right end
		switch {
		case i <= 0:
			return values[0]
		case i >= n:
			return values[n-1]
		}
		return (values[i-1] + values[i]) / 2
	}
	cum := 0.0
	for i, m := range mass {
		if m > 0 && cum+m >= q {
			f := (q - cum) / m
			return edge(i) + math.Max(0, math.Min(1, f))*(edge(i+1)-edge(i))
		}
		cum += m
	}
	return values[n-1]
}

// Axes summarises the posterior probs over points along every axis (d =
// len(points[0])) with a central interval of mass credible.
func Axes(points [][]float64, probs []float64, credible float64) ([]Summary, error) {
	if len(points) == 0 || len(points) != len(probs) {
		return nil, fmt.Errorf("posterior: expected as many probabilities as points (at least one), found %d and %d", len(probs), len(points))
	}
	out := make([]Summary, len(points[0]))
	for a := range out {
		v, m := Marginal(points, a, probs)
		s, err := Summarize(v, m, credible)
		if err != nil {
			return nil, err
		}
		out[a] = s
	}
	return out, nil
}
