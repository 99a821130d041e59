package chain

import (
	"encoding/json"
	"fmt"

	"tidemark/data"
)

// SolverMPS is the value of meta.source.solver for a chain dataset whose
// ground states are matrix-product states; ED datasets have no solver field.
const SolverMPS = "mps"

// MPSSourceMeta is the meta.source object of a chain dataset made with the
// MPS solver. Together with meta.param_names and meta.alphabet it holds all
// that is needed to rebuild the source: the rebuild re-runs DMRG along the
// same warm-started runs over the recorded grid points (from random states
// fixed by dmrg_seed and λ), which reproduces the states the snapshots were
// drawn from.
type MPSSourceMeta struct {
	// Generator is "chain" and Solver "mps"; the other fields are the
	// settings of Config and MPSOptions, the seeds, the --grid text and the
	// ground states per point.
	Generator   string     `json:"generator"`
	Solver      string     `json:"solver"`
	Sites       int        `json:"sites"`
	Boundary    string     `json:"boundary"`
	Hamiltonian string     `json:"hamiltonian"`
	Basis       string     `json:"basis"`
	Sector      string     `json:"sector"`
	Encoding    string     `json:"encoding"`
	Seed        uint64     `json:"seed"`
	DMRGSeed    uint64     `json:"dmrg_seed"`
	MaxBond     int        `json:"max_bond"`
	Cutoff      float64    `json:"cutoff"`
	Tol         float64    `json:"energy_tol"`
	MaxSweeps   int        `json:"max_sweeps"`
	Pin         float64    `json:"pin"`
	Grid        string     `json:"grid"`
	Points      []MPSPoint `json:"points"`
}

// Meta returns the meta.source object of a dataset drawn from s with the
// given sampling seed, grid text and ground states per point.
func (s *MPSSource) Meta(seed uint64, grid string, points []MPSPoint) MPSSourceMeta {
	b, enc := s.cfg.boundaryEncoding()
	return MPSSourceMeta{
		Generator: Generator, Solver: SolverMPS, Sites: s.cfg.Sites, Boundary: b, Hamiltonian: s.cfg.Hamiltonian,
		Basis: s.cfg.Basis.String(), Sector: s.sector.String(), Encoding: enc,
		Seed: seed, DMRGSeed: s.seed, MaxBond: s.opt.MaxBond, Cutoff: s.opt.Cutoff, Tol: s.opt.Tol, MaxSweeps: s.opt.MaxSweeps, Pin: s.opt.Pin,
		Grid: grid, Points: points,
	}
}

// solverOf returns meta.source.solver ("" for ED datasets).
func solverOf(m data.Meta) string {
	var v struct {
		Solver string `json:"solver"`
	}
	if json.Unmarshal(m.Source, &v) != nil {
		return ""
	}
	return v.Solver
}

// MPSSourceFromMeta rebuilds the MPS source of a chain dataset made with the
// MPS solver from its meta object alone.
func MPSSourceFromMeta(m data.Meta) (*MPSSource, error) {
	if g := m.Generator(); g != Generator {
		return nil, fmt.Errorf("meta.source.generator: expected %q, found %q", Generator, g)
	}
	var sm MPSSourceMeta
	if err := json.Unmarshal(m.Source, &sm); err != nil {
		return nil, fmt.Errorf("meta.source: expected a chain source object: %w", err)
	}
	if sm.Solver != SolverMPS {
		return nil, fmt.Errorf("meta.source.solver: expected %q, found %q", SolverMPS, sm.Solver)
	}
	cfg, err := metaConfig(m, sm.Sites, sm.Boundary, sm.Hamiltonian, sm.Basis, sm.Sector)
	if err != nil {
		return nil, err
	}
	if sm.MaxBond < 1 || sm.Cutoff <= 0 || sm.Tol <= 0 || sm.MaxSweeps < 1 {
		return nil, fmt.Errorf("meta.source: expected max_bond ≥ 1, cutoff > 0, energy_tol > 0 and max_sweeps ≥ 1, found %d, %g, %g and %d", sm.MaxBond, sm.Cutoff, sm.Tol, sm.MaxSweeps)
	}
	s, err := NewMPS(cfg, MPSOptions{MaxBond: sm.MaxBond, Cutoff: sm.Cutoff, Tol: sm.Tol, MaxSweeps: sm.MaxSweeps, Pin: sm.Pin}, sm.DMRGSeed)
	if err != nil {
		return nil, fmt.Errorf("meta.source: %w", err)
	}
	if err := checkAlphabet(m, s.Alphabet(), cfg.Basis); err != nil {
		return nil, err
	}
	grid := make([][]float64, len(sm.Points))
	for k, p := range sm.Points {
		grid[k] = p.Params
	}
	if err := s.SetGrid(grid); err != nil {
		return nil, fmt.Errorf("meta.source.points: %w", err)
	}
	return s, nil
}
