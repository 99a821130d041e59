package studyrun

import (
	"bytes"
	"sync"
	"sync/atomic"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/model"
)

// blockSource is a trained model whose log-likelihood matrix of the
// dataset's own snapshots at the grid points is already computed (by the
// matrix units). LogProbMatrix returns those rows when asked for a run of
// the dataset's snapshots, byte for byte, at exactly the grid points in
// order; every other request (derivatives, refinement, drawn samples) goes
// to the model. The member's rows are read from the blocks when first
// asked for and dropped once each was served: the scan evaluates one
// source after another, so only one member's matrix is held at a time
// (beside the copy the scan makes). A row asked for again after that comes
// from the model, which gives the same bits (TestMatrixBlocks).
type blockSource struct {
	*model.Model
	states []uint8
	pts    [][]float64
	load   func() ([]float64, error) // reads the member's rows
	mu     sync.Mutex
	mat    []float64 // loaded rows, nil before and after use
	served int       // rows served from mat
	spent  bool      // mat was loaded, served whole and dropped
	hits   atomic.Int64
}

var _ density.MatrixSource = (*blockSource)(nil)

// LogProbMatrix returns the precomputed rows of xs when they are rows of
// the dataset at the grid points, and asks the model otherwise.
func (b *blockSource) LogProbMatrix(xs []uint8, n int, lambdas [][]float64, threads int) ([]float64, error) {
	if lo, ok := b.rowsOf(xs, n); ok && samePoints(lambdas, b.pts) {
		if out, err := b.serve(lo, n); out != nil || err != nil {
			return out, err
		}
	}
	return b.Model.LogProbMatrix(xs, n, lambdas, threads)
}

// serve returns rows [lo, lo+n) of the precomputed matrix, or nil when it
// was already served whole and dropped.
func (b *blockSource) serve(lo, n int) ([]float64, error) {
	b.mu.Lock()
	defer b.mu.Unlock()
	if b.spent {
		return nil, nil
	}
	if b.mat == nil {
		mat, err := b.load()
		if err != nil {
			return nil, err
		}
		b.mat = mat
	}
	K := len(b.pts)
	out := append([]float64(nil), b.mat[lo*K:(lo+n)*K]...)
	b.hits.Add(1)
	if b.served += n; b.served*K >= len(b.mat) {
		b.mat, b.spent = nil, true
	}
	return out, nil
}

// rowsOf returns the first row of xs within the dataset when xs is a
// slice of the dataset's states (the scan scores them in place) holding
// exactly the same bytes.
func (b *blockSource) rowsOf(xs []uint8, n int) (int, bool) {
	N := b.Sites()
	if n <= 0 || len(xs) != n*N || cap(xs) > len(b.states) {
		return 0, false
	}
	// The scan slices the states with their length as capacity, so the
	// capacity left tells the offset; the bytes are checked all the same.
	off := len(b.states) - cap(xs)
	if off%N != 0 || off+len(xs) > len(b.states) || !bytes.Equal(xs, b.states[off:off+len(xs)]) {
		return 0, false
	}
	return off / N, true
}

func samePoints(a, b [][]float64) bool {
	if len(a) != len(b) {
		return false
	}
	for k := range a {
		if len(a[k]) != len(b[k]) {
			return false
		}
		for i := range a[k] {
			if a[k][i] != b[k][i] {
				return false
			}
		}
	}
	return true
}

// blockSources opens the ensemble and serves its matrix from the blocks;
// member 1's rows are read (and every block checked) here, the others'
// when the scan first asks for them.
func blockSources(ds *data.Dataset, member1 string, blocks []string) ([]density.Source, []*blockSource, []bool, error) {
	ms, unseen, err := modelSources(ds, member1)
	if err != nil {
		return nil, nil, nil, err
	}
	first, pts, err := readBlocks(blocks, len(ms), 0, ds.M)
	if err != nil {
		return nil, nil, nil, err
	}
	var srcs []density.Source
	var bs []*blockSource
	for e, m := range ms {
		b := &blockSource{Model: m, states: ds.States, pts: pts, mat: first}
		b.load = func() ([]float64, error) {
			mat, _, err := readBlocks(blocks, len(ms), e, ds.M)
			return mat, err
		}
		if e > 0 {
			b.mat = nil
		}
		srcs = append(srcs, b)
		bs = append(bs, b)
	}
	return srcs, bs, unseen, nil
}
