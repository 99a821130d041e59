package chain

import (
	"context"
	"errors"
	"fmt"
	"strings"

	"tidemark/data"
)

// Solver names the ground-state method of a run.
type Solver int

const (
	// SolverAuto is exact diagonalisation up to MaxSites sites, MPS above.
	SolverAuto Solver = iota
	// SolverED is exact diagonalisation (Lanczos on all 2^N amplitudes).
	SolverED
	// SolverByMPS is two-site DMRG on a matrix-product state.
	SolverByMPS
)

// String returns the solver's name as ParseSolver reads it.
func (s Solver) String() string {
	switch s {
	case SolverED:
		return "ed"
	case SolverByMPS:
		return SolverMPS
	}
	return "auto"
}

// ParseSolver reads "ed", "mps" or "auto" (or "", which is auto).
func ParseSolver(s string) (Solver, error) {
	switch s {
	case "ed":
		return SolverED, nil
	case SolverMPS:
		return SolverByMPS, nil
	case "auto", "":
		return SolverAuto, nil
	}
	return 0, fmt.Errorf("solver: expected ed, mps or auto, found %q", s)
}

// GapWarning is the in-sector gap below which a point's snapshots depend on
// the solver's arbitrary choice inside a (nearly) degenerate ground space.
const GapWarning = 1e-8

// maxValues bounds the snapshot values of one run (points × samples × sites).
const maxValues = int64(1) << 34

// Request is a simulation over a grid as a person states it. Its errors
// begin with the name of the field's option ("sites: …", "grid: …").
type Request struct {
	// Sites is N.
	Sites int
	// Hamiltonian is the text of H (see Parse).
	Hamiltonian string
	// Grid is the grid text (see data.ParseGridSpec); its axes must be the
	// Hamiltonian's parameters.
	Grid string
	// Basis and Sector are read by ParseBasis and ParseSector.
	Basis, Sector string
	// Samples is the number of snapshots per grid point (at least 2).
	Samples int
	// Open asks for an open chain; when OpenSet is false the solver decides
	// (periodic for ED, open for MPS, whose open chains need far smaller
	// bond dimensions).
	Open, OpenSet bool
	// Solver picks the ground-state method.
	Solver Solver
	// MPS holds the DMRG settings (MPS solver only).
	MPS MPSOptions
	// Seed fixes every random choice; point k samples from (Seed, k).
	Seed uint64
	// Threads is the number of points solved at once (≤ 0: every CPU).
	Threads int
}

// Plan is a checked Request: its source and grid, ready to run.
type Plan struct {
	req  Request
	spec data.GridSpec
	ed   *Source
	mps  *MPSSource
}

// Prepare checks r and builds the source its solver asks for.
func (r Request) Prepare() (*Plan, error) {
	solver := r.Solver
	if solver == SolverAuto {
		solver = SolverED
		if r.Sites > MaxSites {
			solver = SolverByMPS
		}
	}
	if solver == SolverED && (r.Sites < 2 || r.Sites > MaxSites) {
		return nil, fmt.Errorf("sites: expected 2 to %d sites, found %d", MaxSites, r.Sites)
	}
	if solver == SolverByMPS && (r.Sites < 2 || r.Sites > MaxMPSSites) {
		return nil, fmt.Errorf("sites: expected 2 to %d sites with the MPS solver, found %d", MaxMPSSites, r.Sites)
	}
	if strings.TrimSpace(r.Hamiltonian) == "" {
		return nil, errors.New(`hamiltonian: expected a sum of Pauli words like "-ZZ - h*X", found none`)
	}
	if r.Samples < 2 {
		return nil, fmt.Errorf("samples: expected at least 2 snapshots per grid point, found %d", r.Samples)
	}
	basis, err := ParseBasis(r.Basis)
	if err != nil {
		return nil, err
	}
	sector, err := ParseSector(r.Sector)
	if err != nil {
		return nil, err
	}
	spec, err := r.gridSpec()
	if err != nil {
		return nil, err
	}
	total := int64(len(spec.Points())) * int64(r.Samples) * int64(r.Sites)
	if total > maxValues {
		return nil, fmt.Errorf("samples: %d points × %d snapshots × %d sites is %d values, expected at most %d", len(spec.Points()), r.Samples, r.Sites, total, maxValues)
	}
	open := r.Open
	if solver == SolverByMPS && !r.OpenSet {
		open = true
	}
	cfg := Config{Sites: r.Sites, Hamiltonian: r.Hamiltonian, Params: spec.Names(), Open: open, Basis: basis, Sector: sector}
	p := &Plan{req: r, spec: spec}
	if solver == SolverByMPS {
		if err := r.checkMPS(); err != nil {
			return nil, err
		}
		p.mps, err = NewMPS(cfg, r.MPS, r.Seed)
	} else {
		p.ed, err = New(cfg)
	}
	if errors.Is(err, ErrNoFlipSymmetry) {
		return nil, fmt.Errorf("sector: %w", err)
	} else if err != nil {
		return nil, fmt.Errorf("hamiltonian: %w", err)
	}
	return p, nil
}

// gridSpec parses the grid and checks that its axes are exactly the
// Hamiltonian's parameters.
func (r Request) gridSpec() (data.GridSpec, error) {
	var spec data.GridSpec
	if r.Grid == "" {
		return spec, errors.New(`grid: expected axes over the Hamiltonian's parameters like "h=0.2:2:19", found none`)
	}
	spec, err := data.ParseGridSpec(r.Grid)
	if err != nil {
		return spec, fmt.Errorf("grid: %w", err)
	}
	h, err := Parse(r.Hamiltonian)
	if err != nil {
		return spec, fmt.Errorf("hamiltonian: %w", err)
	}
	inH, onGrid := map[string]bool{}, map[string]bool{}
	for _, p := range h.Params() {
		inH[p] = true
	}
	for _, name := range spec.Names() {
		onGrid[name] = true
		if !inH[name] {
			return spec, fmt.Errorf("grid: axis %q does not appear in the Hamiltonian %q (its parameters: %s)", name, r.Hamiltonian, listOrNone(h.Params()))
		}
	}
	for _, p := range h.Params() {
		if !onGrid[p] {
			return spec, fmt.Errorf("hamiltonian: parameter %q is not a grid axis: expected it in --grid (axes: %s)", p, listOrNone(spec.Names()))
		}
	}
	return spec, nil
}

// checkMPS checks the DMRG settings.
func (r Request) checkMPS() error {
	o := r.MPS
	switch {
	case o.MaxBond < 1:
		return fmt.Errorf("max-bond: expected at least 1, found %d", o.MaxBond)
	case !(o.Cutoff > 0 && o.Cutoff < 1):
		return fmt.Errorf("cutoff: expected a weight between 0 and 1 (exclusive), found %g", o.Cutoff)
	case !(o.Tol > 0 && o.Tol < 1):
		return fmt.Errorf("energy-tol: expected a relative change between 0 and 1 (exclusive), found %g", o.Tol)
	case !(o.Pin >= 0 && o.Pin < 1):
		return fmt.Errorf("pin: expected a small field strength, 0 ≤ ε < 1, found %g", o.Pin)
	}
	return nil
}

func listOrNone(s []string) string {
	if len(s) == 0 {
		return "none"
	}
	return strings.Join(s, ", ")
}

// Work returns the units a progress callback of Run counts up to (snapshots
// for ED, grid points for MPS) and a short label for them.
func (p *Plan) Work() (total int, label string) {
	if p.mps != nil {
		return len(p.spec.Points()), "chain (mps)"
	}
	return len(p.spec.Points()) * p.req.Samples, "chain"
}

// Outcome is a finished run: the dataset, what to tell the person, and a
// description of the data.
type Outcome struct {
	// Dataset holds the snapshots and the source record (meta.source).
	Dataset *data.Dataset
	// Summary holds lines about the solver's runs (MPS only).
	Summary []string
	// Notices holds warnings and notes, each beginning "warning: " or "note: ".
	Notices []string
	// Description says what the dataset holds, e.g. "8-site open chain,
	// sector even, basis z, 3 points × 100 snapshots".
	Description string
}

// Run solves every grid point, draws the snapshots and builds the dataset.
// progress, if not nil, counts the units of Work. It stops with ctx's error.
func (p *Plan) Run(ctx context.Context, progress func(n int)) (*Outcome, error) {
	r, points, names := p.req, p.spec.Points(), p.spec.Names()
	var (
		meta     any
		alphabet int
		states   []uint8
		params   []float64
		out      Outcome
		boundary string
		sector   string
		basis    string
		solver   string
	)
	if p.mps != nil {
		res, err := SimulateMPS(ctx, p.mps, points, r.Samples, r.Seed, data.Threads(r.Threads), progress, nil)
		if err != nil {
			return nil, err
		}
		m := p.mps.Meta(r.Seed, r.Grid, res.Points)
		meta, alphabet, states, params = m, p.mps.Alphabet(), res.States, res.Params
		boundary, sector, basis, solver = m.Boundary, m.Sector, m.Basis, " (MPS)"
		out.Summary, out.Notices = mpsSummary(names, res.Points, p.mps.Options(), boundary)
	} else {
		res, err := Simulate(ctx, p.ed, points, r.Samples, r.Seed, data.Threads(r.Threads), progress)
		if err != nil {
			return nil, err
		}
		m := p.ed.Meta(r.Seed, r.Grid, res.Points)
		meta, alphabet, states, params = m, p.ed.Alphabet(), res.States, res.Params
		boundary, sector, basis = m.Boundary, m.Sector, m.Basis
		out.Notices = gapNotices(names, res.Points, sector)
	}
	ds, err := data.New(len(points)*r.Samples, r.Sites, names, alphabet, []int{r.Sites}, meta)
	if err != nil {
		return nil, err
	}
	ds.States, ds.Params = states, params
	out.Dataset = ds
	out.Description = fmt.Sprintf("%d-site %s chain%s, sector %s, basis %s, %d points × %d snapshots",
		r.Sites, boundary, solver, sector, basis, len(points), r.Samples)
	return &out, nil
}

// gapNotices warns about the points whose in-sector gap is below GapWarning.
func gapNotices(names []string, points []PointMeta, sector string) []string {
	var small []string
	for _, p := range points {
		if p.Gap < GapWarning {
			small = append(small, fmt.Sprintf("%s (gap %.2g)", data.FormatPoint(names, p.Params), p.Gap))
		}
	}
	if len(small) == 0 {
		return nil
	}
	return []string{fmt.Sprintf("warning: the gap in sector %s is below %.0e at %d point(s): %s; the ground state there is (nearly) degenerate, so its snapshots depend on the solver; choose another --sector or check the Hamiltonian's symmetries",
		sector, GapWarning, len(small), strings.Join(small, "; "))}
}

// mpsSummary describes the DMRG runs of an MPS simulation: one line per
// warm-started run and one overall, and warnings about truncation,
// convergence and periodic chains.
func mpsSummary(names []string, points []MPSPoint, opt MPSOptions, boundary string) (summary, notices []string) {
	worst, bond, sweeps := 0.0, 0, 0
	worstAt := ""
	var unconverged []string
	for _, p := range points {
		if !p.Converged {
			unconverged = append(unconverged, data.FormatPoint(names, p.Params))
		}
		if p.MaxDiscarded >= worst {
			worst, worstAt = p.MaxDiscarded, data.FormatPoint(names, p.Params)
		}
		bond = max(bond, p.Bond)
		sweeps = max(sweeps, p.Sweeps)
	}
	for r, b := range MPSRunBounds(len(points)) {
		rw, rb, rs := 0.0, 0, 0
		for _, p := range points[b[0]:b[1]] {
			rw, rb, rs = max(rw, p.MaxDiscarded), max(rb, p.Bond), max(rs, p.Sweeps)
		}
		summary = append(summary, fmt.Sprintf("mps run %d (%s … %s, warm-started): largest discarded weight %.2g, bond dimension up to %d, at most %d sweeps",
			r+1, data.FormatPoint(names, points[b[0]].Params), data.FormatPoint(names, points[b[1]-1].Params), rw, rb, rs))
	}
	summary = append(summary, fmt.Sprintf("mps: largest discarded weight %.2g (at %s), bond dimension up to %d (cap %d), at most %d sweeps",
		worst, worstAt, bond, opt.MaxBond, sweeps))
	if worst > 10*opt.Cutoff {
		notices = append(notices, fmt.Sprintf("warning: the discarded weight reached %.2g at %s, above --cutoff %.0e: the bond cap %d limits the state there; raise --max-bond",
			worst, worstAt, opt.Cutoff, opt.MaxBond))
	}
	if len(unconverged) > 0 {
		notices = append(notices, fmt.Sprintf("warning: DMRG did not meet --energy-tol within %d sweeps at %d point(s): %s; the states there are the last sweep's",
			opt.MaxSweeps, len(unconverged), strings.Join(unconverged, "; ")))
	}
	if boundary != "open" {
		notices = append(notices, "note: periodic chains need a larger bond dimension than open ones (roughly its square for the same accuracy); check the discarded weight")
	}
	return summary, notices
}
