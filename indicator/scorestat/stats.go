package scorestat

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"tidemark/data/density"

	"gonum.org/v1/gonum/stat"
)

// Settings of the outlier flags and the posteriors.
const (
	// RefSamples is the number of snapshots drawn from the source at each
	// λ to build the reference range of NLLs.
	RefSamples = 500
	// RefLo and RefHi are the quantiles of the reference NLLs outside
	// which a snapshot is flagged.
	RefLo, RefHi = 0.001, 0.999
	// Credible is the mass of the credible intervals.
	Credible = 0.68
)

// Point summarises the scores of the snapshots scored at one λ.
type Point struct {
	Lambda []float64
	Rows   []int
	// MeanNLL, Std and SEM are the mean negative log-likelihood (nats per
	// snapshot), its standard deviation over the snapshots and the standard
	// error of the mean.
	MeanNLL, Std, SEM float64
	// RefLo and RefHi bound the NLLs of the source's own samples at λ (the
	// RefLo and RefHi quantiles); Flagged counts the snapshots outside.
	RefLo, RefHi float64
	Flagged      int
}

// Quantile returns the p-quantile of sorted x by linear interpolation
// between order statistics (the "type 7" rule of Hyndman & Fan, The
// American Statistician 50, 361 (1996)). gonum's stat.Quantile offers the
// empirical and the type-4 rules, whose quantiles of a few hundred samples
// differ from this one by up to a sample spacing.
func Quantile(sorted []float64, p float64) float64 {
	n := len(sorted)
	if n == 1 {
		return sorted[0]
	}
	h := p * float64(n-1)
	i := int(math.Floor(h))
	if i >= n-1 {
		return sorted[n-1]
	}
	return sorted[i] + (h-float64(i))*(sorted[i+1]-sorted[i])
}

// nllRange draws n snapshots from src at λ with the stream (seed, k) and
// returns the lo and hi quantiles of their NLLs (nats).
func nllRange(src density.Sampler, lambda []float64, n int, seed uint64, k int) (float64, float64, error) {
	xs := make([]uint8, n*src.Sites())
	rng := rand.New(rand.NewPCG(seed, uint64(k)))
	if err := src.Sample(xs, n, lambda, rng); err != nil {
		return 0, 0, err
	}
	lp := make([]float64, n)
	if err := src.LogProb(lp, xs, lambda); err != nil {
		return 0, 0, err
	}
	for i := range lp {
		lp[i] = -lp[i]
	}
	sort.Float64s(lp)
	return Quantile(lp, RefLo), Quantile(lp, RefHi), nil
}

// Stats groups the snapshots by the λ they were scored at (params,
// row-major M × d, as Score returns them) and returns per-point statistics
// in lexicographic order of λ, and a flag per snapshot: 1 when its NLL lies
// outside the range of RefSamples snapshots src draws itself at that λ
// (stream (seed, point index)). progress, if set, is called once per point.
func Stats(src density.Sampler, logp, params []float64, d int, seed uint64, progress func(int)) ([]Point, []uint8, error) {
	M := len(logp)
	byKey := map[string]int{}
	var pts []Point
	for r := 0; r < M; r++ {
		lam := params[r*d : (r+1)*d]
		key := fmt.Sprint(lam)
		k, ok := byKey[key]
		if !ok {
			k = len(pts)
			byKey[key] = k
			pts = append(pts, Point{Lambda: append([]float64(nil), lam...)})
		}
		pts[k].Rows = append(pts[k].Rows, r)
	}
	sort.SliceStable(pts, func(i, j int) bool {
		a, b := pts[i].Lambda, pts[j].Lambda
		for x := range a {
			if a[x] != b[x] {
				return a[x] < b[x]
			}
		}
		return false
	})
	flags := make([]uint8, M)
	for k := range pts {
		p := &pts[k]
		nll := make([]float64, len(p.Rows))
		for i, r := range p.Rows {
			nll[i] = -logp[r]
		}
		p.MeanNLL, p.Std, p.SEM = MeanErr(nll)
		lo, hi, err := nllRange(src, p.Lambda, RefSamples, seed, k)
		if err != nil {
			return nil, nil, fmt.Errorf("reference samples at %v: %w", p.Lambda, err)
		}
		p.RefLo, p.RefHi = lo, hi
		for _, r := range p.Rows {
			if nll := -logp[r]; nll < lo || nll > hi {
				flags[r] = 1
				p.Flagged++
			}
		}
		if progress != nil {
			progress(1)
		}
	}
	return pts, flags, nil
}

// MeanErr returns the mean of x, its sample standard deviation (divisor
// n − 1) and the standard error of the mean, std/√n; with one value the
// standard deviation and error are 0 (unknown).
func MeanErr(x []float64) (mean, std, sem float64) {
	if len(x) < 2 {
		return stat.Mean(x, nil), 0, 0
	}
	mean, std = stat.MeanStdDev(x, nil)
	return mean, std, std / math.Sqrt(float64(len(x)))
}
