package indicator

import (
	"context"
	"errors"
	"fmt"
	"math"

	"tidemark/data"
	"tidemark/data/density"
)

// Matrix is the log-likelihood matrix ℓ[m][k] = log p(x_m|λ_k) over M
// evaluation samples and K parameter points, the one object every indicator
// and every bootstrap replicate is computed from.
type Matrix struct {
	// M and K are the numbers of evaluation samples and points.
	M, K int
	// L holds ℓ row-major: ℓ[m][k] = L[m*K+k], in nats.
	L []float64
	// Points are the K parameter points.
	Points [][]float64
}

// At returns ℓ[m][k].
func (mx *Matrix) At(m, k int) float64 { return mx.L[m*mx.K+k] }

// Row returns ℓ[m][·] (a view).
func (mx *Matrix) Row(m int) []float64 { return mx.L[m*mx.K : (m+1)*mx.K] }

// MatrixOptions controls ComputeMatrix.
type MatrixOptions struct {
	// Threads is the number of goroutines (≤ 0: every CPU, data.Threads).
	Threads int
	// Block is the number of snapshots scored per call (≤ 0 means 1024).
	Block int
	// Progress, if not nil, is called with the number of (sample, point)
	// entries finished after each block; it may be called concurrently.
	Progress func(n int)
}

// ComputeMatrix scores the n snapshots xs (n·N values) at every point of
// points. It splits the work into blocks of snapshots × one point, computed
// in parallel; a MatrixSource is asked for whole blocks at all points at
// once. NaN log-probabilities are an error; −Inf is allowed (a state the
// source deems impossible).
func ComputeMatrix(src density.Source, xs []uint8, n int, points [][]float64, opt MatrixOptions) (*Matrix, error) {
	return computeMatrix(context.Background(), src, xs, n, points, opt)
}

// computeMatrix is ComputeMatrix stopped early, with ctx's error, when ctx
// is cancelled.
func computeMatrix(ctx context.Context, src density.Source, xs []uint8, n int, points [][]float64, opt MatrixOptions) (*Matrix, error) {
	if err := checkMatrixArgs(src, xs, n, points); err != nil {
		return nil, err
	}
	mx := &Matrix{M: n, K: len(points), L: make([]float64, n*len(points)), Points: points}
	if err := fillMatrix(ctx, src, xs, n, points, opt, mx.L); err != nil {
		return nil, err
	}
	return mx, checkNaN(mx)
}

// checkMatrixArgs checks that xs holds n snapshots of the source's sites
// and that every point has the source's number of parameters.
func checkMatrixArgs(src density.Source, xs []uint8, n int, points [][]float64) error {
	N := src.Sites()
	if len(xs) != n*N {
		return fmt.Errorf("log-likelihood matrix: expected %d snapshot values (%d×%d), found %d", n*N, n, N, len(xs))
	}
	for k, p := range points {
		if len(p) != src.ParamDim() {
			return fmt.Errorf("log-likelihood matrix: point %d has %d parameters, the source expects %d", k, len(p), src.ParamDim())
		}
	}
	return nil
}

// fillMatrix scores the n snapshots xs at every point into L (n·K values,
// row-major), without checking for NaN.
func fillMatrix(ctx context.Context, src density.Source, xs []uint8, n int, points [][]float64, opt MatrixOptions, L []float64) error {
	N := src.Sites()
	K := len(points)
	if n == 0 || K == 0 {
		return nil
	}
	threads := data.Threads(opt.Threads)
	block := opt.Block
	if block <= 0 {
		block = 1024
	}
	if ms, ok := src.(density.MatrixSource); ok {
		for lo := 0; lo < n; lo += block {
			if err := ctx.Err(); err != nil {
				return err
			}
			hi := min(lo+block, n)
			out, err := ms.LogProbMatrix(xs[lo*N:hi*N], hi-lo, points, threads)
			if err != nil {
				return fmt.Errorf("log-likelihood matrix: %w", err)
			}
			if len(out) != (hi-lo)*K {
				return fmt.Errorf("log-likelihood matrix: source returned %d values, expected %d", len(out), (hi-lo)*K)
			}
			copy(L[lo*K:hi*K], out)
			if opt.Progress != nil {
				opt.Progress((hi - lo) * K)
			}
		}
		return nil
	}
	blocks := (n + block - 1) / block
	return data.ForEachWith(ctx, blocks*K, threads, func() []float64 { return make([]float64, block) }, func(u int, buf []float64) error {
		lo, k := (u/K)*block, u%K
		hi := min(lo+block, n)
		d := buf[:hi-lo]
		if err := src.LogProb(d, xs[lo*N:hi*N], points[k]); err != nil {
			return fmt.Errorf("log-likelihood matrix at point %d: %w", k, err)
		}
		for i, v := range d {
			L[(lo+i)*K+k] = v
		}
		if opt.Progress != nil {
			opt.Progress(len(d))
		}
		return nil
	})
}

var errNaN = errors.New("the source returned NaN")

func checkNaN(mx *Matrix) error {
	for i, v := range mx.L {
		if math.IsNaN(v) || math.IsInf(v, 1) {
			return fmt.Errorf("log-likelihood matrix: %w or +Inf for sample %d at point %d", errNaN, i/mx.K, i%mx.K)
		}
	}
	return nil
}

// logSumExp returns log Σ exp(v), robust to −Inf entries (all −Inf gives −Inf).
func logSumExp(v []float64) float64 {
	mx := math.Inf(-1)
	for _, x := range v {
		if x > mx {
			mx = x
		}
	}
	if math.IsInf(mx, -1) {
		return mx
	}
	s := 0.0
	for _, x := range v {
		s += math.Exp(x - mx)
	}
	return mx + math.Log(s)
}

// logAddExp returns log(exp a + exp b).
func logAddExp(a, b float64) float64 {
	if a < b {
		a, b = b, a
	}
	if math.IsInf(a, -1) {
		return a
	}
	return a + math.Log1p(math.Exp(b-a))
}
