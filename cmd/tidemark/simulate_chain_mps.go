package main

import (
	"fmt"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"tidemark/cmd/internal/progress"
	"tidemark/data"
	"tidemark/data/chain"
)

// runSimulateChainMPS is simulate chain with the MPS solver: a progress bar
// over grid points and a summary line of the DMRG runs.
func runSimulateChainMPS(cmd *cobra.Command, o *simulateChainOptions, ms *chain.MPSSource, spec data.GridSpec) error {
	ctx, stop := signalContext()
	defer stop()
	points := spec.Points()
	bar := progress.New(len(points), "chain (mps)", o.quiet)
	start := time.Now()
	res, err := chain.SimulateMPS(ctx, ms, points, o.samples, o.seed, threadsOrDefault(o.threads), bar.Func(), nil)
	bar.Done()
	if err != nil {
		if ctx.Err() != nil {
			return fmt.Errorf("simulate chain: stopped before any output was written: %w", errInterrupted)
		}
		return fmt.Errorf("simulate chain: %w", err)
	}
	meta := ms.Meta(o.seed, o.grid, res.Points)
	ds, err := data.New(len(points)*o.samples, o.sites, spec.Names(), ms.Alphabet(), []int{o.sites}, meta)
	if err != nil {
		return err
	}
	ds.States = res.States
	ds.Params = res.Params
	if err := ds.Validate(o.out); err != nil {
		return fmt.Errorf("simulate chain: internal check of the dataset: %w", err)
	}
	if err := ds.Write(o.out, o.force); err != nil {
		return err
	}
	names := spec.Names()
	worst, bond, sweeps := 0.0, 0, 0
	worstAt := ""
	var unconverged []string
	for _, p := range res.Points {
		if !p.Converged {
			unconverged = append(unconverged, data.FormatPoint(names, p.Params))
		}
		if p.MaxDiscarded >= worst {
			worst, worstAt = p.MaxDiscarded, data.FormatPoint(names, p.Params)
		}
		bond = max(bond, p.Bond)
		sweeps = max(sweeps, p.Sweeps)
	}
	opt := ms.Options()
	for r, b := range chain.MPSRunBounds(len(res.Points)) {
		rw, rb, rs := 0.0, 0, 0
		for _, p := range res.Points[b[0]:b[1]] {
			rw, rb, rs = max(rw, p.MaxDiscarded), max(rb, p.Bond), max(rs, p.Sweeps)
		}
		fmt.Fprintf(cmd.OutOrStdout(), "mps run %d (%s … %s, warm-started): largest discarded weight %.2g, bond dimension up to %d, at most %d sweeps\n",
			r+1, data.FormatPoint(names, res.Points[b[0]].Params), data.FormatPoint(names, res.Points[b[1]-1].Params), rw, rb, rs)
	}
	fmt.Fprintf(cmd.OutOrStdout(), "mps: largest discarded weight %.2g (at %s), bond dimension up to %d (cap %d), at most %d sweeps\n",
		worst, worstAt, bond, opt.MaxBond, sweeps)
	if worst > 10*opt.Cutoff {
		fmt.Fprintf(cmd.ErrOrStderr(), "tidemark: warning: the discarded weight reached %.2g at %s, above --cutoff %.0e: the bond cap %d limits the state there; raise --max-bond\n",
			worst, worstAt, opt.Cutoff, opt.MaxBond)
	}
	if len(unconverged) > 0 {
		fmt.Fprintf(cmd.ErrOrStderr(), "tidemark: warning: DMRG did not meet --energy-tol within %d sweeps at %d point(s): %s; the states there are the last sweep's\n",
			opt.MaxSweeps, len(unconverged), strings.Join(unconverged, "; "))
	}
	if meta.Boundary != "open" {
		fmt.Fprintf(cmd.ErrOrStderr(), "tidemark: note: periodic chains need a larger bond dimension than open ones (roughly its square for the same accuracy); check the discarded weight\n")
	}
	fmt.Fprintf(cmd.OutOrStdout(), "wrote %s: %d-site %s chain (MPS), sector %s, basis %s, %d points × %d snapshots in %.1fs\n",
		o.out, o.sites, meta.Boundary, meta.Sector, meta.Basis, len(points), o.samples, time.Since(start).Seconds())
	return nil
}
