package scorestat

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"

	"tidemark/data"
	"tidemark/data/safefile"
	"tidemark/indicator/posterior"
)

// BitsPerSite converts a log-likelihood or NLL in nats per snapshot of n
// sites into bits per site.
func BitsPerSite(nats float64, n int) float64 { return nats / float64(n) / math.Ln2 }

// g formats a value with the fewest digits that read back exactly.
func g(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// WriteTable prints the per-point table of Stats for snapshots of n sites,
// in nats per snapshot and bits per site.
func WriteTable(w io.Writer, names []string, pts []Point, n int) {
	fmt.Fprintf(w, "%-22s %6s  %12s %10s %10s  %9s  %s\n", "point", "count", "mean NLL", "std", "std err", "bits/site", "flagged")
	for _, p := range pts {
		fmt.Fprintf(w, "%-22s %6d  %12.4f %10.4f %10.4f  %9.5f  %d\n", data.FormatPoint(names, p.Lambda), len(p.Rows), p.MeanNLL, p.Std, p.SEM, BitsPerSite(p.MeanNLL, n), p.Flagged)
	}
	fmt.Fprintf(w, "(NLL in nats per snapshot; flagged: NLL outside the %.1f%%–%.1f%% range of %d snapshots drawn from the model at that point)\n",
		100*RefLo, 100*RefHi, RefSamples)
}

// WriteScoresCSV writes one row per snapshot of n sites: its index, the λ
// it was scored at, its log-likelihood (nats) and its NLL in bits per site.
func WriteScoresCSV(w io.Writer, names []string, logp, params []float64, n int) error {
	bw := bufio.NewWriter(w)
	d := len(names)
	fmt.Fprintf(bw, "index,%s,logp,bits_per_site\n", strings.Join(names, ","))
	for i, v := range logp {
		bw.WriteString(strconv.Itoa(i))
		for _, p := range params[i*d : (i+1)*d] {
			bw.WriteString("," + g(p))
		}
		bw.WriteString("," + g(v) + "," + g(BitsPerSite(-v, n)) + "\n")
	}
	return bw.Flush()
}

// WritePointsCSV writes the per-point table of Stats for snapshots of n
// sites.
func WritePointsCSV(w io.Writer, names []string, pts []Point, n int) error {
	bw := bufio.NewWriter(w)
	fmt.Fprintf(bw, "%s,count,mean_nll_nats,std_nll_nats,sem_nll_nats,mean_bits_per_site,ref_lo_nats,ref_hi_nats,flagged\n", strings.Join(names, ","))
	for _, p := range pts {
		for _, v := range p.Lambda {
			bw.WriteString(g(v) + ",")
		}
		fmt.Fprintf(bw, "%d,%s,%s,%s,%s,%s,%s,%d\n", len(p.Rows), g(p.MeanNLL), g(p.Std), g(p.SEM), g(BitsPerSite(p.MeanNLL, n)), g(p.RefLo), g(p.RefHi), p.Flagged)
	}
	return bw.Flush()
}

// ScoreArrays returns the scores of M snapshots of n sites, the λ they were
// scored at (M × d), their flags and the per-point table as .npz arrays.
func ScoreArrays(logp, params []float64, flags []uint8, pts []Point, d, n int) []data.Array {
	M := len(logp)
	bps := make([]float64, M)
	for i, v := range logp {
		bps[i] = BitsPerSite(-v, n)
	}
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
	a := func(n string, v []float64) data.Array { return data.Float64Array(n, v, P) }
	return []data.Array{
		data.Float64Array("logp", logp, M), data.Float64Array("params", params, M, d),
		data.Float64Array("bits_per_site", bps, M), data.Uint8Array("flagged", flags, M),
		data.Float64Array("point_params", lam, P, d), data.Int64Array("point_count", count),
		a("point_mean_nll", mean), a("point_std_nll", std), a("point_sem_nll", sem),
		a("point_ref_lo", lo), a("point_ref_hi", hi), data.Int64Array("point_flagged", flagged),
	}
}

// WriteGroups prints each group's posterior summary.
func (pr *Posteriors) WriteGroups(w io.Writer, names []string) {
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

// WriteSnapshotsCSV writes one row per snapshot: its index, its label (when
// ds has labels), then per axis the maximum and the 68% interval of its
// posterior.
func (pr *Posteriors) WriteSnapshotsCSV(w io.Writer, names []string, ds *data.Dataset) error {
	bw := bufio.NewWriter(w)
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

// WriteGroupsCSV writes one row per group: its label (empty when
// unlabelled), its size, and per axis the maximum, the 68% interval, the
// mean, the standard deviation of its posterior and whether one grid value
// holds it.
func (pr *Posteriors) WriteGroupsCSV(w io.Writer, names []string) error {
	bw := bufio.NewWriter(w)
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

// Arrays returns the posteriors of M snapshots over a d-dimensional grid
// as .npz arrays.
func (pr *Posteriors) Arrays(M, d int) []data.Array {
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
	return []data.Array{
		data.Float64Array("grid", grid, K, d),
		data.Float64Array("log_posterior", pr.LogPost, M, K),
		data.Float64Array("map", sums(pr.Axes, mp), M, d),
		data.Float64Array("lo68", sums(pr.Axes, lo), M, d),
		data.Float64Array("hi68", sums(pr.Axes, hi), M, d),
		data.Float64Array("group_label", label, G, d),
		data.Int64Array("group_count", count),
		data.Float64Array("group_log_posterior", glp, G, K),
		data.Float64Array("group_map", sums(gAxes, mp), G, d),
		data.Float64Array("group_lo68", sums(gAxes, lo), G, d),
		data.Float64Array("group_hi68", sums(gAxes, hi), G, d),
		data.Float64Array("group_mean", sums(gAxes, func(s posterior.Summary) float64 { return s.Mean }), G, d),
		data.Float64Array("group_std", sums(gAxes, func(s posterior.Summary) float64 { return s.Std }), G, d),
	}
}

// Sidecar returns the name of a second output file beside out:
// "scores.csv" → "scores.<what>.csv".
func Sidecar(out, what string) string {
	ext := filepath.Ext(out)
	return strings.TrimSuffix(out, ext) + "." + what + ext
}

// Flagged counts the snapshots flags marks as outliers.
func Flagged(flags []uint8) int {
	n := 0
	for _, f := range flags {
		n += int(f)
	}
	return n
}

// WriteFiles writes score's output out atomically (never over an existing
// file unless force): a .csv of every snapshot's log p with the per-point
// table beside it (Sidecar "points"), or one .npz holding both, the flags
// and meta. names are the parameter names and n the number of sites.
func WriteFiles(out string, force bool, meta map[string]any, names []string, logp, params []float64, flags []uint8, pts []Point, n int) error {
	if strings.ToLower(filepath.Ext(out)) != ".csv" {
		return data.WriteNPZFile(out, force, meta, ScoreArrays(logp, params, flags, pts, len(names), n)...)
	}
	if err := safefile.Write(out, force, func(w io.Writer) error { return WriteScoresCSV(w, names, logp, params, n) }); err != nil {
		return err
	}
	return safefile.Write(Sidecar(out, "points"), force, func(w io.Writer) error { return WritePointsCSV(w, names, pts, n) })
}

// Outputs checks the output file name out of score and returns its
// lower-case extension (".npz" or ".csv") and every file score will write:
// out, and for .csv the sidecar of the per-point table (or, with
// posterior, of the groups).
func Outputs(out string, posterior bool) (ext string, files []string, err error) {
	if out == "" {
		return "", nil, errors.New("score: expected an output file (-o SCORES.npz or SCORES.csv), found none")
	}
	ext = strings.ToLower(filepath.Ext(out))
	switch {
	case ext == ".npz":
		return ext, []string{out}, nil
	case ext != ".csv":
		return "", nil, fmt.Errorf("score: expected an output file ending in .npz or .csv, found %q", out)
	case posterior:
		return ext, []string{out, Sidecar(out, "groups")}, nil
	}
	return ext, []string{out, Sidecar(out, "points")}, nil
}
