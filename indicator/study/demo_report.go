package study

import (
	"fmt"
	"io"
	"os"
	"path/filepath"

	"tidemark/checkpoints"
	"tidemark/data"
	"tidemark/indicator"
	"tidemark/indicator/report"
	"tidemark/indicator/report/inputs"
)

// checks lists the comparisons of the report page: the estimate against
// the finite lattice's heat-capacity maximum and Onsager's T_c, and every
// curve's highest peak against the same indicator from the exact density
// and against the exact Fisher-information maximum, N·C/T², which every
// indicator measures (how fast the snapshot distribution changes with T).
func (d *Demo) checks(out *Outcome, res *indicator.Result, exactPeak map[string]indicator.Peak) []report.Check {
	L := d.Size
	checks := []report.Check{
		{
			Quantity: "transition temperature (mean of the indicators' peaks)",
			Estimate: out.T, Err: out.Err,
			Reference: out.Same, RelDiff: (out.T - out.Same) / out.Same,
			Source: fmt.Sprintf("the same indicators from the exact density of the same snapshots (T = %.4f ± %.2g); %s", out.Same, out.Exact.Err, out.Agreement),
		},
		{
			Quantity: "transition temperature (mean of the indicators' peaks)",
			Estimate: out.T, Err: out.Err,
			Reference: out.Kaufman, RelDiff: (out.T - out.Kaufman) / out.Kaufman,
			Source: fmt.Sprintf("maximum of the exact heat capacity of the %d×%d periodic lattice (B. Kaufman, Phys. Rev. 76, 1232 (1949))", L, L),
		},
		{
			Quantity: "transition temperature (mean of the indicators' peaks)",
			Estimate: out.T, Err: out.Err,
			Reference: OnsagerTc, RelDiff: (out.T - OnsagerTc) / OnsagerTc,
			Source: "critical temperature of the infinite lattice, T_c = 2/ln(1+√2) (L. Onsager, Phys. Rev. 65, 117 (1944))",
		},
	}
	for _, c := range res.Curves {
		pk, ok := TopPeak(c)
		ep, eok := exactPeak[c.Name]
		if ok && eok {
			checks = append(checks, report.Check{
				Quantity: fmt.Sprintf("highest %s peak", c.Name), Estimate: pk.At[0], Err: pk.Err[0],
				Reference: ep.At[0], RelDiff: (pk.At[0] - ep.At[0]) / ep.At[0],
				Source: fmt.Sprintf("the same indicator from the exact density of the same snapshots, ln p = −E/T − ln Z with Kaufman's ln Z (its ± %.2g is the snapshots' sampling error)", ep.Err[0]),
			})
		}
		if ok {
			checks = append(checks, report.Check{
				Quantity: fmt.Sprintf("highest %s peak", c.Name), Estimate: pk.At[0], Err: pk.Err[0],
				Reference: out.KaufmanF, RelDiff: (pk.At[0] - out.KaufmanF) / out.KaufmanF,
				Source: fmt.Sprintf("maximum of the exact Fisher information in T, N·C/T², of the %d×%d periodic lattice (from Kaufman's heat capacity; F_T = Var(E)/T⁴, common practice)", L, L),
			})
		}
	}
	return checks
}

// install writes the scan and the report page into tmp and moves tmp to
// dst.
func (d *Demo) install(tmp, dst string, out *Outcome, res *indicator.Result, exactPeak map[string]indicator.Peak, ds *data.Dataset, ck *checkpoints.Checkpoint) (*report.Summary, error) {
	L := d.Size
	page := &report.Page{
		Title: "tidemark demo: an easy-axis magnetic monolayer",
		Lead: fmt.Sprintf("Snapshots of the 2-D Ising model on a %d×%d periodic lattice at %d temperatures were simulated, "+
			"a conditioned autoregressive model was trained on them and the Bayes-optimal indicators were computed from its likelihoods. "+
			"The peaks of %s put the transition at T = %.4f ± %.2g (their mean; the ± covers their spread); the same indicators computed with the exact density of the same snapshots give T = %.4f ± %.2g, and %s. "+
			"The exact heat-capacity maximum of this lattice is at T = %.4f, the maximum of its exact Fisher information at T = %.4f, and Onsager's T_c of the infinite lattice is %.4f. "+
			"The ± leaves out the spread between models trained with other seeds.",
			L, L, d.Points, out.Indicator, out.T, out.Err, out.Same, out.Exact.Err, out.Agreement, out.Kaufman, out.KaufmanF, OnsagerTc),
		Dataset: report.DatasetSummary(DemoData, ds),
		Models:  []report.ModelInfo{inputs.ModelSummary(DemoModel, ck)},
		Checks:  d.checks(out, res, exactPeak),
	}
	scanDir := filepath.Join(tmp, DemoScan)
	sum, err := report.Write(scanDir, false, res, report.Info{Source: "model", Data: DemoData, Models: []string{DemoModel}, Refine: 1, Seed: d.Seed, Page: page})
	if err != nil {
		return nil, err
	}
	html, err := os.ReadFile(filepath.Join(scanDir, DemoPage))
	if err != nil {
		return nil, err
	}
	if err := os.WriteFile(filepath.Join(tmp, DemoPage), html, 0o644); err != nil {
		return nil, err
	}
	if err := report.Install(tmp, dst); err != nil {
		return nil, err
	}
	out.Page = filepath.Join(d.Out, DemoPage)
	return sum, nil
}

// print states the peaks, the estimate and its exact references.
func (d *Demo) print(w io.Writer, out *Outcome, res *indicator.Result, exactPeak map[string]indicator.Peak, sum *report.Summary) {
	p := func(format string, a ...any) { fmt.Fprintf(w, format, a...) }
	L := d.Size
	p("peaks (scan in %s, %d grid points):\n", filepath.Join(d.Out, DemoScan), sum.Grid.Points)
	for _, c := range res.Curves {
		if len(c.Peaks) == 0 {
			p("  %-14s no peak above the noise\n", c.Name)
		}
		for _, pk := range c.Peaks {
			p("  %-14s peak at %s, height %.4g ± %.2g\n", c.Name, FormatPeak(res.Names, pk), pk.Height, pk.HeightErr)
		}
	}
	for _, n := range res.Notes {
		p("note: %s\n", n)
	}
	rel := (out.T - out.Kaufman) / out.Kaufman
	relF := (out.T - out.KaufmanF) / out.KaufmanF
	relC := (out.T - OnsagerTc) / OnsagerTc
	p("\ntransition: T = %.4f ± %.2g, the mean of the highest peaks of %s (the ± combines their bootstrap errors with their spread, %.2g)\n", out.T, out.Err, out.Indicator, out.Model.Spread)
	p("exact density on the same snapshots, same indicators: T = %.4f ± %.2g; the model's estimate lies %.1f standard errors from it: %s\n", out.Same, out.Exact.Err, out.Z, out.Agreement)
	p("exact for this %d×%d lattice: heat-capacity maximum T = %.4f (Kaufman, Phys. Rev. 76, 1232 (1949)); difference %+.2f%%\n", L, L, out.Kaufman, 100*rel)
	p("      and Fisher-information maximum T = %.4f (N·C/T², what the indicators measure; it lies below the heat-capacity maximum); difference %+.2f%%\n", out.KaufmanF, 100*relF)
	p("infinite lattice: T_c = 2/ln(1+√2) = %.4f (Onsager, Phys. Rev. 65, 117 (1944)); difference %+.2f%% (a finite lattice's peaks lie above T_c)\n", OnsagerTc, 100*relC)
	p("(the ± leaves out the spread between models trained with other --seed values, which scan --model a.ckpt --model b.ckpt includes)\n")
	p("report: %s (dataset %s, model %s, scan %s/)\n", out.Page, filepath.Join(d.Out, DemoData), filepath.Join(d.Out, DemoModel), filepath.Join(d.Out, DemoScan))
	p("caution: %s\n", indicator.Caution)
}
