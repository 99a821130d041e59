package main

import (
	"errors"
	"fmt"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"tidemark/cmd/internal/progress"
	"tidemark/data"
	"tidemark/data/chain"
)

func init() { simulateCommands = append(simulateCommands, newSimulateChainCmd) }

type simulateChainOptions struct {
	sites        int
	siteList     string
	hamiltonian  string
	grid         string
	basis        string
	sector       string
	samples      int
	open         bool
	seed         uint64
	threads      int
	force, quiet bool
	out          string
}

// gapWarnThreshold is the in-sector gap below which snapshots depend on the
// solver's arbitrary choice inside a (nearly) degenerate ground space.
const gapWarnThreshold = 1e-8

func newSimulateChainCmd() *cobra.Command {
	var o simulateChainOptions
	c := &cobra.Command{
		Use:   "chain --sites N --hamiltonian TEXT --grid SPEC --samples M -o OUT.npz",
		Short: "Measure exact ground states of a quantum spin-1/2 chain over a parameter grid",
		Long: `chain finds the exact ground state of a spin-1/2 chain of --sites N ≤ 16 sites
at every point of --grid (Lanczos, converged to ‖Hψ − Eψ‖ ≤ 1e-9) and draws
projective measurements of it by the Born rule.

The Hamiltonian is a sum of Pauli words placed at every site, e.g. "-ZZ - h*X"
(the transverse-field Ising chain); coefficients are numbers, grid parameter
names or products joined by '*'. The chain is periodic unless --open. Every grid
axis must appear in the Hamiltonian and every parameter in it must be an axis.

--sector picks the eigenspace of the global flip ∏X the ground state is taken
from (default: even when H commutes with ∏X, none otherwise). In an ordered
phase the two lowest states of a finite chain are split only by an exponentially
small gap; staying in one sector makes the state, and so the snapshots,
well-defined. A point whose in-sector gap is below 1e-8 is reported on stderr.

Stored values (Ising convention): with --basis z, x or y each site is 1 when the
measured Pauli operator gave +1 and 0 when it gave −1 (alphabet 2). With
--basis random every site of every shot is measured in a uniformly random Pauli
basis and stored as 2·basis + outcome, basis 0 = X, 1 = Y, 2 = Z (alphabet 6).
The exact log-probabilities (including the (1/3)^N of the bases) can be rebuilt
from the file alone.`,
		Example: `  tidemark simulate chain --sites 12 --hamiltonian "-ZZ - h*X" --grid "h=0.2:2:19" --basis random --samples 1000 --seed 1 -o chain.npz
  tidemark simulate chain --sites 8 --hamiltonian "-ZZ - h*X" --grid "h=0.5:1.5:11" --basis z --open -o open8.npz
  tidemark simulate chain --sites 10 --hamiltonian "-XX - YY - D*XY + D*YX - h*Z" --grid "h=0:2:9,D=0;0.5" --basis random -o dm.npz
  tidemark simulate chain --sites 8,12,16 --hamiltonian "-ZZ - h*X" --grid "h=0.5:1.5:21" --basis z -o tfi.npz   # tfi-N8.npz, tfi-N12.npz, tfi-N16.npz`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return simulateSeries("--sites", o.siteList, o.out, "N", func(n int, out string) error {
				o.sites, o.out = n, out
				if _, _, err := o.chainSetup(); err != nil {
					return err
				}
				return checkOutput(o.out, o.force)
			}, func() error { return runSimulateChain(cmd, &o) })
		},
	}
	f := c.Flags()
	f.StringVar(&o.siteList, "sites", "", "number of spin-1/2 sites N (2 to 16); a list like 8,12,16 writes one dataset per length, named OUT-N8.npz, OUT-N12.npz, …")
	f.StringVar(&o.hamiltonian, "hamiltonian", "", `Hamiltonian as a sum of Pauli words, e.g. "-ZZ - h*X" (energies in the units of its coefficients)`)
	f.StringVar(&o.grid, "grid", "", `parameter grid over the Hamiltonian's parameters, e.g. "h=0.2:2:19"`)
	f.StringVar(&o.basis, "basis", "z", "measurement basis: z, x, y (same on every site) or random (per site and shot)")
	f.StringVar(&o.sector, "sector", "", "∏X sector of the ground state: even, odd or none (default: even if H commutes with ∏X, else none)")
	f.IntVar(&o.samples, "samples", 1000, "snapshots per grid point (at least 2)")
	f.BoolVar(&o.open, "open", false, "open chain: drop the terms that wrap around the end")
	f.Uint64Var(&o.seed, "seed", 1, "random seed; point k uses the stream (seed, k)")
	f.IntVar(&o.threads, "threads", 0, "grid points solved at once (default: number of CPUs); results do not depend on it")
	f.BoolVar(&o.force, "force", false, "overwrite the output file if it exists")
	f.BoolVar(&o.quiet, "quiet", false, "draw no progress bar")
	f.StringVarP(&o.out, "output", "o", "", "output dataset file (.npz)")
	return c
}

// chainSetup checks the options and builds the source and the grid points.
func (o *simulateChainOptions) chainSetup() (*chain.Source, data.GridSpec, error) {
	var spec data.GridSpec
	if o.out == "" {
		return nil, spec, errors.New("--output: expected an output file name (-o OUT.npz), found none")
	}
	if o.sites < 2 || o.sites > chain.MaxSites {
		return nil, spec, fmt.Errorf("--sites: expected 2 to %d sites, found %d", chain.MaxSites, o.sites)
	}
	if strings.TrimSpace(o.hamiltonian) == "" {
		return nil, spec, errors.New(`--hamiltonian: expected a sum of Pauli words like "-ZZ - h*X", found none`)
	}
	if o.samples < 2 {
		return nil, spec, fmt.Errorf("--samples: expected at least 2 snapshots per grid point, found %d", o.samples)
	}
	basis, err := chain.ParseBasis(o.basis)
	if err != nil {
		return nil, spec, fmt.Errorf("--%w", err)
	}
	sector, err := chain.ParseSector(o.sector)
	if err != nil {
		return nil, spec, fmt.Errorf("--%w", err)
	}
	if o.grid == "" {
		return nil, spec, errors.New(`--grid: expected axes over the Hamiltonian's parameters like "h=0.2:2:19", found none`)
	}
	spec, err = data.ParseGridSpec(o.grid)
	if err != nil {
		return nil, spec, fmt.Errorf("--grid: %w", err)
	}
	if k := len(spec.Points()); k < 2 {
		return nil, spec, fmt.Errorf("--grid: expected at least 2 grid points, found %d", k)
	}
	h, err := chain.Parse(o.hamiltonian)
	if err != nil {
		return nil, spec, fmt.Errorf("--hamiltonian: %w", err)
	}
	inH := map[string]bool{}
	for _, p := range h.Params() {
		inH[p] = true
	}
	for _, name := range spec.Names() {
		if !inH[name] {
			return nil, spec, fmt.Errorf("--grid: axis %q does not appear in the Hamiltonian %q (its parameters: %s)", name, o.hamiltonian, listOrNone(h.Params()))
		}
	}
	onGrid := map[string]bool{}
	for _, name := range spec.Names() {
		onGrid[name] = true
	}
	for _, p := range h.Params() {
		if !onGrid[p] {
			return nil, spec, fmt.Errorf("--hamiltonian: parameter %q is not a grid axis: expected it in --grid (axes: %s)", p, listOrNone(spec.Names()))
		}
	}
	total := int64(len(spec.Points())) * int64(o.samples) * int64(o.sites)
	if total > 1<<34 {
		return nil, spec, fmt.Errorf("--samples: %d points × %d snapshots × %d sites is %d values, expected at most %d", len(spec.Points()), o.samples, o.sites, total, int64(1)<<34)
	}
	src, err := chain.New(chain.Config{Sites: o.sites, Hamiltonian: o.hamiltonian, Params: spec.Names(), Open: o.open, Basis: basis, Sector: sector})
	if err != nil {
		flag := "--hamiltonian"
		if errors.Is(err, chain.ErrNoFlipSymmetry) {
			flag = "--sector"
		}
		return nil, spec, fmt.Errorf("%s: %w", flag, err)
	}
	return src, spec, nil
}

func listOrNone(s []string) string {
	if len(s) == 0 {
		return "none"
	}
	return strings.Join(s, ", ")
}

func runSimulateChain(cmd *cobra.Command, o *simulateChainOptions) error {
	src, spec, err := o.chainSetup()
	if err != nil {
		return err
	}
	if err := checkOutput(o.out, o.force); err != nil {
		return err
	}
	ctx, stop := signalContext()
	defer stop()
	points := spec.Points()
	bar := progress.New(len(points)*o.samples, "chain", o.quiet)
	start := time.Now()
	res, err := chain.Simulate(ctx, src, points, o.samples, o.seed, threadsOrDefault(o.threads), bar.Func())
	bar.Done()
	if err != nil {
		if ctx.Err() != nil {
			return fmt.Errorf("simulate chain: stopped before any output was written: %w", errInterrupted)
		}
		return fmt.Errorf("simulate chain: %w", err)
	}
	meta := src.Meta(o.seed, o.grid, res.Points)
	ds, err := data.New(len(points)*o.samples, o.sites, spec.Names(), src.Alphabet(), []int{o.sites}, meta)
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
	var small []string
	for _, p := range res.Points {
		if p.Gap < gapWarnThreshold {
			small = append(small, fmt.Sprintf("%s (gap %.2g)", data.FormatPoint(names, p.Params), p.Gap))
		}
	}
	if len(small) > 0 {
		fmt.Fprintf(cmd.ErrOrStderr(), "tidemark: warning: the gap in sector %s is below %.0e at %d point(s): %s; the ground state there is (nearly) degenerate, so its snapshots depend on the solver; choose another --sector or check the Hamiltonian's symmetries\n",
			meta.Sector, gapWarnThreshold, len(small), strings.Join(small, "; "))
	}
	fmt.Fprintf(cmd.OutOrStdout(), "wrote %s: %d-site %s chain, sector %s, basis %s, %d points × %d snapshots in %.1fs\n",
		o.out, o.sites, meta.Boundary, meta.Sector, meta.Basis, len(points), o.samples, time.Since(start).Seconds())
	return nil
}
