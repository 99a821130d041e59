package studyrun

import (
	"archive/zip"
	"bytes"
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"codeberg.org/sbinet/npyio/npy"

	"tidemark/data"
	"tidemark/data/safefile"
	"tidemark/indicator/study"
	"tidemark/model"
)

// defaultBlock is the number of snapshots of one matrix unit when the
// study file does not say ([scan] block): small studies have one block.
const defaultBlock = 100_000

// check refuses [scan] indicators and block values no scan can use.
func (sc *Scan) check() *keyErr {
	if _, err := study.ParseIndicators(strings.Join(sc.Indicators, ",")); err != nil {
		return bad("scan", "indicators", "%v", err)
	}
	if sc.Block < 0 {
		return bad("scan", "block", "expected at least 1 snapshot per block (or 0 for the default), found %d", sc.Block)
	}
	return nil
}

// snapshots returns the number of snapshots of size l's dataset: samples
// per grid point times points, or the imported file's row count.
func (p *Plan) snapshots(l int) (int, error) {
	s := p.Study.System
	if s.Kind != KindImport {
		return s.Samples * p.Points, nil
	}
	path := p.datasetOf(l)
	zr, err := zip.OpenReader(path)
	if err != nil {
		return 0, fmt.Errorf("%s: expected a dataset (.npz), found %w", path, err)
	}
	defer zr.Close()
	for _, f := range zr.File {
		if f.Name != "states.npy" {
			continue
		}
		rc, err := f.Open()
		if err != nil {
			return 0, fmt.Errorf("%s: states: %w", path, err)
		}
		defer rc.Close()
		r, err := npy.NewReader(rc)
		if err != nil || len(r.Header.Descr.Shape) != 2 {
			return 0, fmt.Errorf("%s: states: expected a 2-D NumPy array, found %v", path, err)
		}
		return r.Header.Descr.Shape[0], nil
	}
	return 0, fmt.Errorf("%s: expected a states array, found none", path)
}

// blocks splits size l's snapshots into the row ranges [lo, hi) of its
// matrix units, [scan] block snapshots each (the last may be shorter).
func (p *Plan) blocks(l int) ([][2]int, error) {
	n, err := p.snapshots(l)
	if err != nil {
		return nil, err
	}
	size := p.Study.Scan.Block
	if size <= 0 {
		size = defaultBlock
	}
	var out [][2]int
	for lo := 0; lo < n; lo += size {
		out = append(out, [2]int{lo, min(lo+size, n)})
	}
	return out, nil
}

// modelSources opens the ensemble of size l (member 1's file stands for
// all) as models fitted to ds.
func modelSources(ds *data.Dataset, member1 string) ([]*model.Model, []bool, error) {
	srcs, unseen, err := study.ModelSources(ds, []string{member1})
	if err != nil {
		return nil, nil, err
	}
	var ms []*model.Model
	for _, s := range srcs {
		m, ok := s.(*model.Model)
		if !ok {
			return nil, nil, fmt.Errorf("%s: expected trained models, found a %T", member1, s)
		}
		ms = append(ms, m)
	}
	return ms, unseen, nil
}

// computeBlock scores rows [u.Lo, u.Hi) of the dataset at dataPath at
// every grid point with every member and writes them to out as an .npz:
// "loglik" (members × rows × points, log p(x_m|λ_k) in nats), "points"
// and "rows" (lo, hi).
func computeBlock(ctx context.Context, u Unit, dataPath, member1, out string, threads int) error {
	ds, err := data.Read(dataPath)
	if err != nil {
		return err
	}
	if u.Hi > ds.M {
		return fmt.Errorf("%s: expected at least %d snapshots, found %d", dataPath, u.Hi, ds.M)
	}
	ms, _, err := modelSources(ds, member1)
	if err != nil {
		return err
	}
	pts := data.NewGrid(ds).Points
	xs := ds.States[u.Lo*ds.N : u.Hi*ds.N]
	var all []float64
	for _, m := range ms {
		if err := ctx.Err(); err != nil {
			return err
		}
		l, err := m.LogProbMatrix(xs, u.Hi-u.Lo, pts, threads)
		if err != nil {
			return err
		}
		all = append(all, l...)
	}
	var flat []float64
	for _, p := range pts {
		flat = append(flat, p...)
	}
	var buf bytes.Buffer
	err = data.WriteNPZ(&buf, zip.Store,
		data.Float64Array("loglik", all, len(ms), u.Hi-u.Lo, len(pts)),
		data.Float64Array("points", flat, len(pts), ds.D),
		data.Float64Array("rows", []float64{float64(u.Lo), float64(u.Hi)}, 2))
	if err != nil {
		return err
	}
	if err := os.MkdirAll(filepath.Dir(out), 0o755); err != nil {
		return err
	}
	return safefile.WriteBytes(out, true, buf.Bytes())
}

// readBlocks joins the matrix blocks of one size into member e's (from 0)
// n × K matrix (row-major) and returns it with the grid points, checking
// that the blocks hold members members and cover the n rows in order.
func readBlocks(paths []string, members, e, n int) ([]float64, [][]float64, error) {
	var mat []float64
	var pts [][]float64
	next := 0
	for _, path := range paths {
		arr, err := readNPZ(path)
		if err != nil {
			return nil, nil, err
		}
		ll, rows := arr["loglik"], arr["rows"]
		if rows == nil || len(rows.v) != 2 || int(rows.v[0]) != next || ll == nil || len(ll.shape) != 3 ||
			ll.shape[0] != members || ll.shape[1] != int(rows.v[1]-rows.v[0]) || arr["points"] == nil {
			return nil, nil, fmt.Errorf("%s: expected the matrix of %d members from row %d, found another block", path, members, next)
		}
		K := ll.shape[2]
		if pts == nil {
			d := len(arr["points"].v) / max(K, 1)
			for k := 0; k < K; k++ {
				pts = append(pts, arr["points"].v[k*d:(k+1)*d])
			}
		}
		r := ll.shape[1]
		mat = append(mat, ll.v[e*r*K:(e+1)*r*K]...)
		next += r
	}
	if next != n {
		return nil, nil, fmt.Errorf("matrix blocks cover %d snapshots, the dataset has %d", next, n)
	}
	return mat, pts, nil
}

type npzArray struct {
	shape []int
	v     []float64
}

// readNPZ reads the float64 arrays of a matrix block.
func readNPZ(path string) (map[string]*npzArray, error) {
	zr, err := zip.OpenReader(path)
	if err != nil {
		return nil, fmt.Errorf("%s: expected a matrix block (.npz), found %w", path, err)
	}
	defer zr.Close()
	out := map[string]*npzArray{}
	for _, f := range zr.File {
		rc, err := f.Open()
		if err != nil {
			return nil, fmt.Errorf("%s: %w", path, err)
		}
		r, err := npy.NewReader(rc)
		a := &npzArray{}
		if err == nil {
			a.shape = r.Header.Descr.Shape
			err = r.Read(&a.v)
		}
		rc.Close()
		if err != nil {
			return nil, fmt.Errorf("%s: %s: %w", path, f.Name, err)
		}
		out[f.Name[:len(f.Name)-len(".npy")]] = a
	}
	return out, nil
}
