package train

import (
	"context"
	"math"

	"gonum.org/v1/gonum/stat"

	"tidemark/data"
	"tidemark/model"
)

// nll returns the mean negative log-likelihood in nats per site of the
// samples in groups (group k at point pts[k]); see nllStats.
func (r *run) nll(groups [][]int, pts [][]float64, m *model.Model) (float64, error) {
	mean, _, err := r.nllStats(groups, pts, m)
	return mean, err
}

// nllStats returns the negative log-likelihood in nats per site of the
// samples in groups (group k at point pts[k]), computed with the scoring
// kernel over groups on the run's threads: its mean over the samples and
// the standard error of that mean, the samples' standard deviation (gonum's
// stat.StdDev, with n − 1) over √n. The sums run in group order, so neither
// depends on the thread count. With no samples both are NaN; with one the
// error is NaN.
func (r *run) nllStats(groups [][]int, pts [][]float64, m *model.Model) (mean, stderr float64, err error) {
	N := r.ds.N
	sums := make([]float64, len(groups))
	perSample := make([][]float64, len(groups))
	err = data.ForEachPoint(context.Background(), len(groups), r.st.Threads, func(k int) error {
		idx := groups[k]
		if len(idx) == 0 {
			return nil
		}
		xs := make([]uint8, len(idx)*N)
		for i, s := range idx {
			copy(xs[i*N:(i+1)*N], r.ds.States[s*N:(s+1)*N])
		}
		lp := make([]float64, len(idx))
		if err := m.LogProb(lp, xs, pts[k]); err != nil {
			return err
		}
		for _, v := range lp {
			sums[k] -= v
		}
		perSample[k] = lp
		return nil
	})
	if err != nil {
		return 0, 0, err
	}
	total, n := 0.0, 0
	for k, g := range groups {
		total += sums[k]
		n += len(g)
	}
	if n == 0 {
		return math.NaN(), math.NaN(), nil
	}
	mean = total / float64(n) / float64(N)
	if n < 2 {
		return mean, math.NaN(), nil
	}
	x := make([]float64, 0, n)
	for _, lp := range perSample {
		for _, v := range lp {
			x = append(x, -v/float64(N))
		}
	}
	return mean, stat.StdDev(x, nil) / math.Sqrt(float64(n)), nil
}

// bitsOrZero converts a standard error in nats per site to bits per site,
// 0 (not recorded) when it is not finite.
func bitsOrZero(se float64) float64 {
	if math.IsNaN(se) || math.IsInf(se, 0) {
		return 0
	}
	return se / math.Ln2
}
