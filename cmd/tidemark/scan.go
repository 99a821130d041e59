package main

import (
	"fmt"
	"io"

	"github.com/spf13/cobra"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/indicator"
	"tidemark/indicator/check"
	"tidemark/indicator/report"
	"tidemark/indicator/report/inputs"
	"tidemark/indicator/study"
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
Errors come from --bootstrap resamples of the snapshots at each point; the members of an
ensemble (train --ensemble; --model names its first file) or several --model files add their
spread in quadrature, and the line "errors:" says which errors are included. Peaks are local maxima
whose height above the neighbouring minimum exceeds two standard errors of that
difference, refined by a parabola. When a model scans a dataset whose generator has an exact
reference, a note states the model's response (check's slope of its log-likelihood ratios between
neighbouring points against the exact ones): below 0.9 local, fisher and fisher_deriv read low, a
bias no error bar includes.
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
  tidemark scan --data open8.npz --histogram --bootstrap 200 -o hist-scan/
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
	f.StringArrayVar(&o.models, "model", nil, "trained model checkpoint (.ckpt; an ensemble's first file brings all its members); repeat for several models, whose spread joins the errors")
	f.StringVar(&o.indicators, "indicators", "all", "comma-separated indicators: all, or some of lbc,sl,pbm,local,fisher")
	f.IntVar(&o.refine, "refine", 1, "insert R−1 points between neighbouring grid points (1-D: everywhere; 2-D: on the grid edges a boundary crosses, for the fisher map); needs a source that samples")
	f.IntVar(&o.modelSamples, "model-samples", study.ScanModelSamples, "snapshots drawn from the source at every point of a refined or zoomed grid (fisher_deriv included; on the data's own grid it reads the data's snapshots)")
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
	c.MarkFlagRequired("data")
	c.MarkFlagRequired("output")
	f.StringVar(&o.metricScale, "metric-scale", "", `2-D: the unit of each parameter for the Fisher-metric map, "name=unit,name=unit" (default: 1, parameter units)`)
	f.StringArrayVar(&o.references, "reference", nil, "2-D: a CSV file of reference curves (rows x,y or x,y,name; a blank row starts a new line) drawn beside the boundaries; repeatable")
	return c
}

func runScan(w io.Writer, o *scanOptions) error {
	kind, withExact, err := study.SourceKind(o.exact, o.histogram, len(o.models))
	if err != nil {
		return fmt.Errorf("scan: %w", err)
	}
	inds, err := study.ParseIndicators(o.indicators)
	if err != nil {
		return fmt.Errorf("--indicators: %w", err)
	}
	reg, err := study.ParseSLRegions(o.slRegions)
	if err != nil {
		return fmt.Errorf("--sl-regions: %w", err)
	}
	cfg := indicator.Config{
		Indicators: inds, Refine: o.refine, ModelSamples: o.modelSamples, Zoom: o.zoom,
		Bootstrap: o.bootstrap, ExactSums: o.exactSums, DataAtGridPoints: o.dataAtGrid, Window: o.window, SLRegions: reg,
		Threads: threadsOrDefault(o.threads), Seed: o.seed,
	}
	if err := cfg.CheckSettings(); err != nil {
		return fmt.Errorf("--%w", err)
	}
	if err := report.CheckDir(o.out, o.force); err != nil {
		return fmt.Errorf("scan: %w", err)
	}
	// Only a histogram needs every snapshot in memory. Other sources read
	// them from the file block by block, each time a stage needs them, so
	// that the scan of a file larger than memory holds a few blocks of it;
	// a damaged value stops the scan when it is read, before any output.
	var ds *data.Dataset
	if kind == study.SourceHistogram {
		ds, err = data.Read(o.data)
	} else {
		ds, err = data.ReadHead(o.data, data.ReadOptions{})
	}
	if err != nil {
		return err
	}
	if k := data.NewGrid(ds).K(); k < 2 {
		return fmt.Errorf("scan: %s: expected at least 2 distinct grid points, found %d (the indicators compare points)", o.data, k)
	}
	if cfg.MetricScale, err = study.ParseMetricScale(o.metricScale, ds.Meta.ParamNames); err != nil {
		return err
	}
	refs, err := study.ReadReferences(o.references, ds.Meta.ParamNames)
	if err != nil {
		return err
	}
	var sources []density.Source
	if kind == study.SourceModel {
		sources, cfg.Unseen, err = study.ModelSources(ds, o.models)
	} else {
		sources, err = study.Sources(kind, ds, o.data, o.models)
	}
	if err != nil {
		return fmt.Errorf("scan --%s: %w", kind, err)
	}
	// The response note reads the model's log-likelihoods of the data from
	// the scan instead of computing them again.
	cfg.KeepDataLogLik = kind == study.SourceModel
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
		res.Phases.References = append(study.ExactReferences(ds, res.Layout), refs...)
	}
	if withExact {
		if res.Exact, err = exactBeside(ctx, ds, cfg, o); err != nil {
			return err
		}
	}
	if note := study.ExactNote(kind, ds, o.data); note != "" {
		res.Notes = append(res.Notes, note)
	}
	if note := study.SeveralMaximaNote(kind, len(sources), res); note != "" {
		res.Notes = append(res.Notes, note)
	}
	if kind == study.SourceModel {
		res.Notes = append(res.Notes, responseNotes(sources, ds, res)...)
	}
	sum, err := report.Write(o.out, o.force, res, report.Info{Source: kind, Data: o.data, Models: o.models, Refine: o.refine, Seed: o.seed, Page: inputs.Page(o.data, o.models)})
	if err != nil {
		return fmt.Errorf("scan: %w", err)
	}
	study.WriteScan(w, o.out, res, sum)
	return nil
}

// responseNotes measures, when the dataset's generator has an exact
// reference, how each model's log-likelihood ratios between neighbouring
// grid points respond against the exact ones (check.MeasureResponse), and
// returns a note per model: a bias of the neighbour indicators that no
// error bar of the scan includes. Without a usable reference (none, or one
// that cannot be built for this dataset) it returns nil; a measurement
// that fails becomes a note saying so, since the scan itself succeeded.
// The models' log-likelihoods of the snapshots come from res where it kept
// them (indicator.Config.KeepDataLogLik).
func responseNotes(sources []density.Source, ds *data.Dataset, res *indicator.Result) []string {
	ref, err := density.ReferenceFor(ds.Meta)
	if err != nil {
		return nil
	}
	var notes []string
	for i, src := range sources {
		label := ""
		if len(sources) > 1 {
			label = fmt.Sprintf("model %d of %d: ", i+1, len(sources))
		}
		r, err := check.MeasureResponseKnown(src, ref, ds, res.DataLogLik(i))
		if err != nil {
			notes = append(notes, fmt.Sprintf("%sthe response against the exact density was not measured: %v", label, err))
			continue
		}
		if note := r.Note(); note != "" {
			notes = append(notes, label+note)
		}
	}
	return notes
}
