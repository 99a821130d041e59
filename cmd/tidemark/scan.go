package main

import (
	"errors"
	"fmt"
	"io"
	"sort"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"tidemark/data"
	"tidemark/data/exact"
	"tidemark/data/ising"
	"tidemark/indicator"
	"tidemark/indicator/report"
)

func init() { commands = append(commands, newScanCmd) }

type scanOptions struct {
	data         string
	out          string
	exact        bool
	histogram    bool
	models       []string
	indicators   string
	refine       int
	modelSamples int
	zoom         bool
	dataAtGrid   bool
	bootstrap    int
	exactSums    bool
	window       int
	slRegions    string
	threads      int
	seed         uint64
	force        bool
	quiet        bool
	metricScale  string
	references   []string
}

func newScanCmd() *cobra.Command {
	var o scanOptions
	c := &cobra.Command{
		Use:   "scan --data FILE.npz -o FOLDER (--exact | --histogram | --model FILE.ckpt ...)",
		Short: "Compute phase-transition indicators, their errors and peaks over the grid",
		Long: `scan evaluates the log-likelihood of every snapshot at every grid point with a density
source (a trained model, the exact reference of a small simulated system, or the empirical
histogram of the data) and computes from that one matrix the Bayes-optimal indicators:
  sl      supervised learning on the two end regions of the grid
  lbc     learning by confusion (1 − the Bayes error of each cut)
  pbm     prediction-based method (slope of the best parameter estimate; divergence in 2-D)
  local   total-variation distance of neighbouring windows of --window points
  fisher  Fisher information, from neighbour Jensen–Shannon divergence (fisher) and, for a
          source defined between grid points, from ∂λ log p (fisher_deriv)
Errors come from --bootstrap resamples of the snapshots at each point; several --model
files (trained with different seeds) add their spread in quadrature. Peaks are local maxima
whose height above the neighbouring minimum exceeds two standard errors of that
difference, refined by a parabola.
On a 2-D product grid the curves become maps and the ridges of local and fisher become
boundary lines; each indicator's boundary strength (for fisher the metric's largest
eigenvalue, in the units of --metric-scale) is divided into phases with boundaries between
them (phases_<indicator>.png, "phases" in summary.json), beside Onsager's exact line for an
Ising dataset and the curves of --reference files. The folder gets indicators.csv, summary.json and SVG/PNG pictures.

indicators.csv has the parameter columns, then <name> and <name>_err for every curve,
one row per position: the union of the grid points (fisher_deriv, and the 2-D pbm
divergence at interior points) and the midpoints between neighbouring points (sl, lbc,
pbm in 1-D, local, fisher); a cell is empty where a curve has no value. On a 2-D grid a
curve along one axis carries that axis as a suffix (local_T, lbc_Jy), and fisher is the
trace of the metric from the divergences at the centres of the grid's cells. With --zoom
each second pass gets its own zoom-<i>.csv.`,
		Example: `  tidemark scan --data film.npz --model film.ckpt -o scan/
  tidemark scan --data film.npz --exact --exact-sums --indicators fisher,local -o exact-scan/
  tidemark scan --data small.npz --histogram --bootstrap 200 -o hist-scan/
  tidemark scan --data film.npz --model a.ckpt --model b.ckpt --refine 4 --zoom -o fine/ --force`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runScan(cmd.OutOrStdout(), &o)
		},
	}
	f := c.Flags()
	f.StringVar(&o.data, "data", "", "dataset file (.npz) whose grid and snapshots are scanned")
	f.StringVarP(&o.out, "output", "o", "", "output folder (created; an existing non-empty folder needs --force)")
	f.BoolVar(&o.exact, "exact", false, "use the exact density of the generator recorded in the dataset (small systems); beside --model, draw its curves in the model's 1-D pictures")
	f.BoolVar(&o.histogram, "histogram", false, "use the empirical frequencies of the snapshots at each grid point (small systems)")
	f.StringArrayVar(&o.models, "model", nil, "trained model checkpoint (.ckpt); repeat for several models, whose spread joins the errors")
	f.StringVar(&o.indicators, "indicators", "all", "comma-separated indicators: all, or some of lbc,sl,pbm,local,fisher")
	f.IntVar(&o.refine, "refine", 1, "insert R−1 points between neighbouring grid points on every axis (needs a source that samples)")
	f.IntVar(&o.modelSamples, "model-samples", 1000, "snapshots drawn from the source at every point of a refined or zoomed grid, and at every point for fisher_deriv")
	f.BoolVar(&o.dataAtGrid, "data-at-grid", false, "on a refined grid, keep the data snapshots at the data's grid points (default: the source's own samples everywhere, for a consistent curve)")
	f.BoolVar(&o.zoom, "zoom", false, "re-scan a finer grid (2R+1 points over ±1 step of the scanned grid, R = max(refine, 2)) around each peak; on a 2-D grid along the line of the peak")
	f.IntVar(&o.bootstrap, "bootstrap", 100, "bootstrap resamples for the errors (0: no errors)")
	f.BoolVar(&o.exactSums, "exact-sums", false, "replace sample means by exact sums over all q^N states (exact sources and models of at most 2^20 states)")
	f.IntVar(&o.window, "window", 1, "window of the local indicator, in grid points on each side")
	f.StringVar(&o.slRegions, "sl-regions", "", `end regions of sl as two parameter ranges "lo:hi,lo:hi" (default: first and last 10% of the points; 1-D)`)
	f.IntVar(&o.threads, "threads", 0, "worker threads (default: all CPUs)")
	f.Uint64Var(&o.seed, "seed", 1, "seed of model sampling and bootstrap resampling")
	f.BoolVar(&o.force, "force", false, "replace an existing output folder")
	f.BoolVar(&o.quiet, "quiet", false, "draw no progress bars")
	f.StringVar(&o.metricScale, "metric-scale", "", `2-D: the unit of each parameter for the Fisher-metric map, "name=unit,name=unit" (default: 1, parameter units)`)
	f.StringArrayVar(&o.references, "reference", nil, "2-D: a CSV file of reference curves (rows x,y or x,y,name; a blank row starts a new line) drawn beside the boundaries; repeatable")
	c.MarkFlagRequired("data")
	c.MarkFlagRequired("output")
	return c
}

func parseSLRegions(s string) (*indicator.SLRegions, error) {
	if s == "" {
		return nil, nil
	}
	parts := strings.Split(s, ",")
	if len(parts) != 2 {
		return nil, fmt.Errorf(`--sl-regions: expected two ranges "lo:hi,lo:hi", found %q`, s)
	}
	var r indicator.SLRegions
	for i, p := range parts {
		ab := strings.Split(strings.TrimSpace(p), ":")
		if len(ab) != 2 {
			return nil, fmt.Errorf(`--sl-regions: expected a range "lo:hi", found %q`, p)
		}
		var v [2]float64
		for j, x := range ab {
			f, err := strconv.ParseFloat(strings.TrimSpace(x), 64)
			if err != nil {
				return nil, fmt.Errorf("--sl-regions: expected a number, found %q", x)
			}
			v[j] = f
		}
		if v[0] > v[1] {
			return nil, fmt.Errorf("--sl-regions: range %q has lo > hi", p)
		}
		if i == 0 {
			r.A = v
		} else {
			r.B = v
		}
	}
	return &r, nil
}

func parseIndicators(s string) ([]string, error) {
	if s == "" || s == "all" {
		return indicator.AllIndicators, nil
	}
	var out []string
	for _, n := range strings.Split(s, ",") {
		n = strings.TrimSpace(n)
		ok := false
		for _, a := range indicator.AllIndicators {
			ok = ok || a == n
		}
		if !ok {
			return nil, fmt.Errorf("--indicators: expected all or some of %s, found %q", strings.Join(indicator.AllIndicators, ","), n)
		}
		out = append(out, n)
	}
	return out, nil
}

func runScan(w io.Writer, o *scanOptions) error {
	nsrc := 0
	// --exact beside --model scores the same data with both and draws the
	// exact curves beside the model's.
	withExact := o.exact && len(o.models) > 0
	for _, b := range []bool{o.exact && !withExact, o.histogram, len(o.models) > 0} {
		if b {
			nsrc++
		}
	}
	if nsrc != 1 {
		return errors.New("scan: expected exactly one density source: --exact, --histogram or --model FILE.ckpt (--exact may join --model, to draw both)")
	}
	inds, err := parseIndicators(o.indicators)
	if err != nil {
		return err
	}
	reg, err := parseSLRegions(o.slRegions)
	if err != nil {
		return err
	}
	if o.refine < 1 {
		return fmt.Errorf("--refine: expected an integer ≥ 1, found %d", o.refine)
	}
	if o.bootstrap < 0 {
		return fmt.Errorf("--bootstrap: expected an integer ≥ 0, found %d", o.bootstrap)
	}
	if o.window < 1 {
		return fmt.Errorf("--window: expected an integer ≥ 1, found %d", o.window)
	}
	if o.modelSamples < 1 {
		return fmt.Errorf("--model-samples: expected an integer ≥ 1, found %d", o.modelSamples)
	}
	if err := report.CheckDir(o.out, o.force); err != nil {
		return fmt.Errorf("scan: %w", err)
	}
	ds, err := data.Read(o.data)
	if err != nil {
		return err
	}
	if err := ds.Validate(o.data); err != nil {
		return err
	}
	scale, err := parseMetricScale(o.metricScale, ds.Meta.ParamNames)
	if err != nil {
		return err
	}
	refs, err := readReferences(o.references, ds.Meta.ParamNames)
	if err != nil {
		return err
	}
	var sources []indicator.Source
	kind := ""
	switch {
	case o.exact && !withExact:
		kind = "exact"
		src, err := exact.FromMeta(ds.Meta)
		if err != nil {
			return fmt.Errorf("scan --exact: %s: %w", o.data, err)
		}
		sources = append(sources, src)
	case o.histogram:
		kind = "histogram"
		h, err := indicator.NewHistogram(ds)
		if err != nil {
			return fmt.Errorf("scan --histogram: %s: %w", o.data, err)
		}
		sources = append(sources, h)
	default:
		kind = "model"
		for _, p := range o.models {
			src, _, err := loadModelSource(p, ds)
			if err != nil {
				return fmt.Errorf("scan --model: %w", err)
			}
			sources = append(sources, src)
		}
	}
	cfg := indicator.Config{
		Indicators: inds, Refine: o.refine, ModelSamples: o.modelSamples, Zoom: o.zoom,
		Bootstrap: o.bootstrap, ExactSums: o.exactSums, DataAtGridPoints: o.dataAtGrid, Window: o.window, SLRegions: reg,
		Threads: threadsOrDefault(o.threads), Seed: o.seed, MetricScale: scale,
	}
	// The scan writes nothing until it is complete, so a signal can simply
	// stop it: nothing is lost and nothing half-written is left.
	ctx, stop := signalContext()
	defer stop()
	res, stopped, err := scanWithProgress(ctx, sources, ds, cfg, o.quiet)
	if stopped {
		return fmt.Errorf("scan: stopped before any output was written: %w", errInterrupted)
	}
	if err != nil {
		return err
	}
	if res.Phases != nil {
		res.Phases.References = append(exactReferences(ds, res.Layout), refs...)
	}
	if withExact {
		if res.Exact, err = exactBeside(ctx, ds, cfg, o); err != nil {
			return err
		}
	}
	if sm, err := ising.ParseSourceMeta(ds.Meta); kind == "model" && err == nil && sm.HasExact() {
		res.Notes = append(res.Notes, fmt.Sprintf("this dataset has an exact reference: `tidemark scan --data %s --exact` scores the same snapshots with the exact density; a misfit of the model (a spurious peak in the ordered phase, say) shows only in that comparison, not in the bootstrap errors", o.data))
	}
	sum, err := report.Write(o.out, o.force, res, report.Info{Source: kind, Data: o.data, Models: o.models, Refine: o.refine, Seed: o.seed})
	if err != nil {
		return fmt.Errorf("scan: %w", err)
	}
	return printScan(w, o.out, res, sum)
}

// printScan states every peak with its error, the notes and the caution.
func printScan(w io.Writer, out string, res *indicator.Result, sum *report.Summary) error {
	p := func(format string, a ...any) { fmt.Fprintf(w, format, a...) }
	p("scan: %s source, %d grid points (%d scanned), results in %s\n", sum.Source, sum.Grid.Points, sum.Grid.Scanned, out)
	for _, c := range res.Curves {
		if len(c.Lines) == 0 {
			continue
		}
		if len(c.Peaks) == 0 {
			p("  %-14s no peak above the noise\n", c.Name)
			continue
		}
		for _, pk := range c.Peaks {
			p("  %-14s peak at %s, height %.4g ± %.2g\n", c.Name, peakString(res.Names, pk), pk.Height, pk.HeightErr)
		}
	}
	for _, b := range res.Boundaries {
		p("  boundary from %s (ridge along %s): %d points\n", b.Indicator, b.Axis, len(b.Points))
	}
	printPhases(p, res)
	for _, z := range sum.Zoom {
		p("  zoom around %s (%d points of %s from %.6g to %.6g):\n", data.FormatPoint(res.Names, z.Around), z.Points, z.Axis, z.From, z.To)
		names := make([]string, 0, len(z.Indicators))
		for name := range z.Indicators {
			names = append(names, name)
		}
		sort.Strings(names)
		for _, name := range names {
			for _, pk := range z.Indicators[name].Peaks {
				p("    %-12s peak at %s\n", name, peakString(res.Names, indicator.Peak{At: pk.At, Err: pk.Err}))
			}
		}
	}
	for _, n := range res.Notes {
		p("note: %s\n", n)
	}
	p("caution: %s\n", indicator.Caution)
	return nil
}

func peakString(names []string, pk indicator.Peak) string {
	parts := make([]string, len(pk.At))
	for i, v := range pk.At {
		if i < len(pk.Err) && pk.Err[i] > 0 {
			parts[i] = fmt.Sprintf("%s=%.5g ± %.2g", names[i], v, pk.Err[i])
		} else {
			parts[i] = fmt.Sprintf("%s=%.5g", names[i], v)
		}
	}
	return strings.Join(parts, ", ")
}
