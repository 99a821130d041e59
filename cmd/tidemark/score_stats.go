package main

import (
	"archive/zip"
	"bufio"
	"encoding/binary"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"sort"
	"strconv"
	"strings"

	"tidemark/data"
	"tidemark/indicator/posterior"
	"tidemark/model"
)

// Settings of score's outlier flags and posteriors.
const (
	// scoreRefSamples is the number of snapshots drawn from the model at each
	// λ to build the reference range of NLLs.
	scoreRefSamples = 500
	// scoreRefLo and scoreRefHi are the quantiles of the reference NLLs
	// outside which a snapshot is flagged.
	scoreRefLo, scoreRefHi = 0.001, 0.999
	// scoreCredible is the mass of the credible intervals.
	scoreCredible = 0.68
)

// scorePoint summarises the scores of the snapshots scored at one λ.
type scorePoint struct {
	Lambda []float64
	Rows   []int
	// MeanNLL, Std and SEM are the mean negative log-likelihood (nats per
	// snapshot), its standard deviation over the snapshots and the standard
	// error of the mean.
	MeanNLL, Std, SEM float64
	// RefLo and RefHi bound the NLLs of the model's own samples at λ (the
	// scoreRefLo and scoreRefHi quantiles); Flagged counts the snapshots
	// outside.
	RefLo, RefHi float64
	Flagged      int
}

// quantile returns the p-quantile of sorted x by linear interpolation
// between order statistics (the "type 7" rule of Hyndman & Fan, The American
// Statistician 50, 361 (1996)).
func quantile(sorted []float64, p float64) float64 {
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

// nllRange draws n snapshots from the model at λ with the stream (seed, k)
// and returns the lo and hi quantiles of their NLLs (nats).
func nllRange(m *model.Model, lambda []float64, n int, seed uint64, k int) (float64, float64, error) {
	xs := make([]uint8, n*m.Sites())
	rng := rand.New(rand.NewPCG(seed, uint64(k)))
	if err := m.Sample(xs, n, lambda, rng); err != nil {
		return 0, 0, err
	}
	lp := make([]float64, n)
	if err := m.LogProb(lp, xs, lambda); err != nil {
		return 0, 0, err
	}
	for i := range lp {
		lp[i] = -lp[i]
	}
	sort.Float64s(lp)
	return quantile(lp, scoreRefLo), quantile(lp, scoreRefHi), nil
}

// scoreStats groups the snapshots by the λ they were scored at (params,
// row-major M × d) and returns per-point statistics and a flag per snapshot
// (1 when its NLL lies outside the range of the model's own samples at
// that λ). progress, if set, is called once per point.
func scoreStats(m *model.Model, logp, params []float64, d int, seed uint64, progress func(int)) ([]scorePoint, []uint8, error) {
	M := len(logp)
	byKey := map[string]int{}
	var pts []scorePoint
	for r := 0; r < M; r++ {
		lam := params[r*d : (r+1)*d]
		key := fmt.Sprint(lam)
		k, ok := byKey[key]
		if !ok {
			k = len(pts)
			byKey[key] = k
			pts = append(pts, scorePoint{Lambda: append([]float64(nil), lam...)})
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
		n := float64(len(p.Rows))
		for _, r := range p.Rows {
			p.MeanNLL -= logp[r]
		}
		p.MeanNLL /= n
		if len(p.Rows) > 1 {
			for _, r := range p.Rows {
				dv := -logp[r] - p.MeanNLL
				p.Std += dv * dv
			}
			p.Std = math.Sqrt(p.Std / (n - 1))
			p.SEM = p.Std / math.Sqrt(n)
		}
		lo, hi, err := nllRange(m, p.Lambda, scoreRefSamples, seed, k)
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

// printScoreStats prints the per-point table in nats per snapshot and bits
// per site.
func printScoreStats(w io.Writer, names []string, pts []scorePoint, n int) {
	bits := func(nats float64) float64 { return nats / float64(n) / math.Ln2 }
	fmt.Fprintf(w, "%-22s %6s  %12s %10s %10s  %9s  %s\n", "point", "count", "mean NLL", "std", "std err", "bits/site", "flagged")
	for _, p := range pts {
		fmt.Fprintf(w, "%-22s %6d  %12.4f %10.4f %10.4f  %9.5f  %d\n", data.FormatPoint(names, p.Lambda), len(p.Rows), p.MeanNLL, p.Std, p.SEM, bits(p.MeanNLL), p.Flagged)
	}
	fmt.Fprintf(w, "(NLL in nats per snapshot; flagged: NLL outside the %.1f%%–%.1f%% range of %d snapshots drawn from the model at that point)\n",
		100*scoreRefLo, 100*scoreRefHi, scoreRefSamples)
}

// writePointsCSV writes the per-point table.
func writePointsCSV(w io.Writer, names []string, pts []scorePoint, n int) error {
	bw := bufio.NewWriter(w)
	fmt.Fprintf(bw, "%s,count,mean_nll_nats,std_nll_nats,sem_nll_nats,mean_bits_per_site,ref_lo_nats,ref_hi_nats,flagged\n", strings.Join(names, ","))
	g := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	for _, p := range pts {
		for _, v := range p.Lambda {
			bw.WriteString(g(v) + ",")
		}
		fmt.Fprintf(bw, "%d,%s,%s,%s,%s,%s,%s,%d\n", len(p.Rows), g(p.MeanNLL), g(p.Std), g(p.SEM), g(p.MeanNLL/float64(n)/math.Ln2), g(p.RefLo), g(p.RefHi), p.Flagged)
	}
	return bw.Flush()
}

// scoreGroup is one group of snapshots for the posterior: the snapshots that
// share a label, or the whole file when it is unlabelled.
type scoreGroup struct {
	Label []float64 // nil for the whole unlabelled file
	Rows  []int
	// LogPost is the normalised log posterior over the grid.
	LogPost []float64
	Axes    []posterior.Summary
}

// posteriorResult holds the posteriors of every snapshot and group.
type posteriorResult struct {
	Grid    [][]float64 // K points
	LogPost []float64   // M × K, normalised per snapshot
	Axes    [][]posterior.Summary
	Groups  []scoreGroup
}

// scorePosteriors scores every snapshot of ds at every point of grid and
// returns the posteriors (uniform prior over the grid) of each snapshot and
// of each group of snapshots sharing a label (the whole file when ds has no
// labels). progress, if set, receives the number of snapshots scored.
func scorePosteriors(m *model.Model, ds *data.Dataset, grid [][]float64, threads int, progress func(int)) (*posteriorResult, error) {
	K := len(grid)
	ll := make([]float64, 0, ds.M*K)
	const block = 1024
	for lo := 0; lo < ds.M; lo += block {
		n := min(block, ds.M-lo)
		part, err := m.LogProbMatrix(ds.States[lo*ds.N:(lo+n)*ds.N], n, grid, threads)
		if err != nil {
			return nil, err
		}
		ll = append(ll, part...)
		if progress != nil {
			progress(n)
		}
	}
	res := &posteriorResult{Grid: grid, LogPost: make([]float64, ds.M*K), Axes: make([][]posterior.Summary, ds.M)}
	for r := 0; r < ds.M; r++ {
		lp, err := posterior.Normalize(ll[r*K : (r+1)*K])
		if err != nil {
			return nil, fmt.Errorf("snapshot %d: %w", r, err)
		}
		copy(res.LogPost[r*K:], lp)
		if res.Axes[r], err = posterior.Axes(grid, posterior.Probs(lp), scoreCredible); err != nil {
			return nil, fmt.Errorf("snapshot %d: %w", r, err)
		}
	}
	if ds.D == 0 {
		rows := make([]int, ds.M)
		for i := range rows {
			rows[i] = i
		}
		res.Groups = []scoreGroup{{Rows: rows}}
	} else {
		g := data.NewGrid(ds)
		for k, idx := range g.Index {
			res.Groups = append(res.Groups, scoreGroup{Label: g.Points[k], Rows: idx})
		}
	}
	for i := range res.Groups {
		gr := &res.Groups[i]
		lp, err := posterior.Normalize(posterior.GroupLogLik(ll, K, gr.Rows))
		if err != nil {
			return nil, fmt.Errorf("group %d: %w", i, err)
		}
		gr.LogPost = lp
		if gr.Axes, err = posterior.Axes(grid, posterior.Probs(lp), scoreCredible); err != nil {
			return nil, fmt.Errorf("group %d: %w", i, err)
		}
	}
	return res, nil
}

// printGroups prints each group's posterior summary.
func printGroups(w io.Writer, names []string, pr *posteriorResult) {
	for _, g := range pr.Groups {
		what := "all snapshots (unlabelled)"
		if g.Label != nil {
			what = "labelled " + data.FormatPoint(names, g.Label)
		}
		parts := make([]string, len(names))
		var notes []string
		for a, s := range g.Axes {
			parts[a] = fmt.Sprintf("%s: maximum %.5g, 68%% interval [%.5g, %.5g], mean %.5g ± %.2g", names[a], s.MAP, s.Lo, s.Hi, s.Mean, s.Std)
			if s.AtEdge {
				notes = append(notes, names[a]+" reaches the end of the grid: the posterior may extend beyond it")
			}
			if s.GridLimited {
				notes = append(notes, names[a]+" sits on one grid value: narrower than the grid spacing, use a finer --grid to resolve it")
			}
		}
		note := ""
		if len(notes) > 0 {
			note = " (" + strings.Join(notes, "; ") + ")"
		}
		fmt.Fprintf(w, "%s, %d snapshots: %s%s\n", what, len(g.Rows), strings.Join(parts, "; "), note)
	}
	fmt.Fprintf(w, "(uniform prior over the %d grid points; a group's posterior is the product of its snapshots' likelihoods, assuming they share one parameter point; intervals are central (equal-tailed) and limited by the grid spacing)\n", len(pr.Grid))
}

// writePosteriorCSV writes one row per snapshot: index, its label (if any),
// then per axis the maximum and the 68% interval of its posterior.
func writePosteriorCSV(w io.Writer, names []string, ds *data.Dataset, pr *posteriorResult) error {
	bw := bufio.NewWriter(w)
	g := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	head := []string{"index"}
	if ds.D > 0 {
		head = append(head, names...)
	}
	for _, n := range names {
		head = append(head, "map_"+n, "lo68_"+n, "hi68_"+n)
	}
	bw.WriteString(strings.Join(head, ",") + "\n")
	for r := 0; r < ds.M; r++ {
		rec := []string{strconv.Itoa(r)}
		if ds.D > 0 {
			for _, v := range ds.ParamRow(r) {
				rec = append(rec, g(v))
			}
		}
		for _, s := range pr.Axes[r] {
			rec = append(rec, g(s.MAP), g(s.Lo), g(s.Hi))
		}
		bw.WriteString(strings.Join(rec, ",") + "\n")
	}
	return bw.Flush()
}

// writeGroupsCSV writes one row per group: its label (empty when
// unlabelled), its size, and per axis the maximum, the 68% interval, the mean,
// the standard deviation of its posterior and whether one grid value holds it.
func writeGroupsCSV(w io.Writer, names []string, pr *posteriorResult) error {
	bw := bufio.NewWriter(w)
	g := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	head := append([]string{}, names...)
	head = append(head, "count")
	for _, n := range names {
		head = append(head, "map_"+n, "lo68_"+n, "hi68_"+n, "mean_"+n, "std_"+n, "grid_limited_"+n)
	}
	bw.WriteString(strings.Join(head, ",") + "\n")
	for _, gr := range pr.Groups {
		var rec []string
		for a := range names {
			if gr.Label != nil {
				rec = append(rec, g(gr.Label[a]))
			} else {
				rec = append(rec, "")
			}
		}
		rec = append(rec, strconv.Itoa(len(gr.Rows)))
		for _, s := range gr.Axes {
			rec = append(rec, g(s.MAP), g(s.Lo), g(s.Hi), g(s.Mean), g(s.Std), strconv.FormatBool(s.GridLimited))
		}
		bw.WriteString(strings.Join(rec, ",") + "\n")
	}
	return bw.Flush()
}

// npzArray is one array of an .npz file written by writeNPZ.
type npzArray struct {
	name  string
	descr string // "<f8", "|u1" or "<i8"
	shape []int
	body  []byte
}

func f64Array(name string, v []float64, shape ...int) npzArray {
	b := make([]byte, 0, 8*len(v))
	for _, x := range v {
		b = binary.LittleEndian.AppendUint64(b, math.Float64bits(x))
	}
	return npzArray{name, "<f8", shape, b}
}

func i64Array(name string, v []int) npzArray {
	b := make([]byte, 0, 8*len(v))
	for _, x := range v {
		b = binary.LittleEndian.AppendUint64(b, uint64(int64(x)))
	}
	return npzArray{name, "<i8", []int{len(v)}, b}
}

// writeNPZ writes arrays (and meta as UTF-8 JSON bytes) as a NumPy .npz
// archive.
func writeNPZ(w io.Writer, arrays []npzArray, meta map[string]any) error {
	js, err := json.Marshal(meta)
	if err != nil {
		return err
	}
	arrays = append(arrays, npzArray{"meta", "|u1", []int{len(js)}, js})
	zw := zip.NewWriter(w)
	for _, a := range arrays {
		if err := data.PutNPY(zw, a.name+".npy", zip.Deflate, a.descr, a.shape, func(w io.Writer) error {
			_, err := w.Write(a.body)
			return err
		}); err != nil {
			return err
		}
	}
	return zw.Close()
}

// pointArrays returns the per-point statistics as .npz arrays.
func pointArrays(pts []scorePoint, d int) []npzArray {
	P := len(pts)
	lam := make([]float64, 0, P*d)
	var mean, std, sem, lo, hi []float64
	count := make([]int, P)
	flagged := make([]int, P)
	for i, p := range pts {
		lam = append(lam, p.Lambda...)
		mean, std, sem = append(mean, p.MeanNLL), append(std, p.Std), append(sem, p.SEM)
		lo, hi = append(lo, p.RefLo), append(hi, p.RefHi)
		count[i], flagged[i] = len(p.Rows), p.Flagged
	}
	a := func(n string, v []float64) npzArray { return f64Array(n, v, P) }
	return []npzArray{
		f64Array("point_params", lam, P, d), i64Array("point_count", count),
		a("point_mean_nll", mean), a("point_std_nll", std), a("point_sem_nll", sem),
		a("point_ref_lo", lo), a("point_ref_hi", hi), i64Array("point_flagged", flagged),
	}
}

// posteriorArrays returns the posteriors as .npz arrays.
func posteriorArrays(pr *posteriorResult, M, d int) []npzArray {
	K, G := len(pr.Grid), len(pr.Groups)
	grid := make([]float64, 0, K*d)
	for _, p := range pr.Grid {
		grid = append(grid, p...)
	}
	sums := func(s [][]posterior.Summary, get func(posterior.Summary) float64) []float64 {
		out := make([]float64, 0, len(s)*d)
		for _, r := range s {
			for _, x := range r {
				out = append(out, get(x))
			}
		}
		return out
	}
	gAxes := make([][]posterior.Summary, G)
	label := make([]float64, 0, G*d)
	count := make([]int, G)
	glp := make([]float64, 0, G*K)
	for i, g := range pr.Groups {
		gAxes[i] = g.Axes
		count[i] = len(g.Rows)
		glp = append(glp, g.LogPost...)
		for a := 0; a < d; a++ {
			if g.Label != nil {
				label = append(label, g.Label[a])
			} else {
				label = append(label, math.NaN())
			}
		}
	}
	mp := func(s posterior.Summary) float64 { return s.MAP }
	lo := func(s posterior.Summary) float64 { return s.Lo }
	hi := func(s posterior.Summary) float64 { return s.Hi }
	return []npzArray{
		f64Array("grid", grid, K, d),
		f64Array("log_posterior", pr.LogPost, M, K),
		f64Array("map", sums(pr.Axes, mp), M, d),
		f64Array("lo68", sums(pr.Axes, lo), M, d),
		f64Array("hi68", sums(pr.Axes, hi), M, d),
		f64Array("group_label", label, G, d),
		i64Array("group_count", count),
		f64Array("group_log_posterior", glp, G, K),
		f64Array("group_map", sums(gAxes, mp), G, d),
		f64Array("group_lo68", sums(gAxes, lo), G, d),
		f64Array("group_hi68", sums(gAxes, hi), G, d),
		f64Array("group_mean", sums(gAxes, func(s posterior.Summary) float64 { return s.Mean }), G, d),
		f64Array("group_std", sums(gAxes, func(s posterior.Summary) float64 { return s.Std }), G, d),
	}
}
