package chain

import (
	"encoding/json"
	"fmt"

	"tidemark/data"
)

// Encoding describes the stored snapshot values; it is written into
// meta.source so that a file explains itself.
const (
	encodingFixed  = "site value 1 = measured eigenvalue +1, 0 = eigenvalue -1"
	encodingRandom = "site value = 2*basis + outcome; basis 0=X, 1=Y, 2=Z (uniform per site and shot); outcome 1 = eigenvalue +1, 0 = eigenvalue -1; p(x) includes (1/3)^N for the bases"
)

// PointMeta records the ground state found at one grid point.
type PointMeta struct {
	// Params is the grid point.
	Params []float64 `json:"params"`
	// E0 is the ground-state energy in the chosen sector.
	E0 float64 `json:"e0"`
	// Gap is E1 − E0 in the chosen sector.
	Gap float64 `json:"gap"`
}

// SourceMeta is the meta.source object of a chain dataset.
type SourceMeta struct {
	// Generator is "chain"; the other fields are the settings of Config,
	// the sampling seed, the --grid text and the ground states per point.
	Generator   string      `json:"generator"`
	Sites       int         `json:"sites"`
	Boundary    string      `json:"boundary"`
	Hamiltonian string      `json:"hamiltonian"`
	Basis       string      `json:"basis"`
	Sector      string      `json:"sector"`
	Encoding    string      `json:"encoding"`
	Seed        uint64      `json:"seed"`
	Grid        string      `json:"grid"`
	Points      []PointMeta `json:"points"`
}

// Generator is the value of meta.source.generator for chain datasets.
const Generator = "chain"

// Meta returns the meta.source object of a dataset drawn from s with the
// given seed, grid text and ground states per point.
func (s *Source) Meta(seed uint64, grid string, points []PointMeta) SourceMeta {
	b, enc := s.cfg.boundaryEncoding()
	return SourceMeta{
		Generator: Generator, Sites: s.cfg.Sites, Boundary: b, Hamiltonian: s.cfg.Hamiltonian,
		Basis: s.cfg.Basis.String(), Sector: s.sector.String(), Encoding: enc,
		Seed: seed, Grid: grid, Points: points,
	}
}

// boundaryEncoding returns the boundary ("periodic" or "open") and the
// encoding text a source record of c states.
func (c Config) boundaryEncoding() (boundary, encoding string) {
	boundary, encoding = "periodic", encodingFixed
	if c.Open {
		boundary = "open"
	}
	if c.Basis == BasisRandom {
		encoding = encodingRandom
	}
	return boundary, encoding
}

// SourceFromMeta rebuilds the exact source of a chain dataset from its meta
// object alone (meta.source, meta.param_names, meta.lattice, meta.alphabet).
func SourceFromMeta(m data.Meta) (*Source, error) {
	if g := m.Generator(); g != Generator {
		return nil, fmt.Errorf("meta.source.generator: expected %q, found %q", Generator, g)
	}
	if solverOf(m) == SolverMPS {
		return nil, fmt.Errorf("meta.source.solver: the dataset was made with the MPS solver; rebuild it with MPSSourceFromMeta")
	}
	var sm SourceMeta
	if err := json.Unmarshal(m.Source, &sm); err != nil {
		return nil, fmt.Errorf("meta.source: expected a chain source object: %w", err)
	}
	cfg, err := metaConfig(m, sm.Sites, sm.Boundary, sm.Hamiltonian, sm.Basis, sm.Sector)
	if err != nil {
		return nil, err
	}
	s, err := New(cfg)
	if err != nil {
		return nil, fmt.Errorf("meta.source: %w", err)
	}
	if err := checkAlphabet(m, s.Alphabet(), cfg.Basis); err != nil {
		return nil, err
	}
	return s, nil
}

// metaConfig reads the Config of a chain dataset from its meta and the
// fields of its source record that both solvers write.
func metaConfig(m data.Meta, sites int, boundary, hamiltonian, basisText, sectorText string) (Config, error) {
	var open bool
	switch boundary {
	case "periodic":
	case "open":
		open = true
	default:
		return Config{}, fmt.Errorf("meta.source.boundary: expected periodic or open, found %q", boundary)
	}
	basis, err := ParseBasis(basisText)
	if err != nil {
		return Config{}, fmt.Errorf("meta.source.%w", err)
	}
	sector, err := ParseSector(sectorText)
	if err != nil {
		return Config{}, fmt.Errorf("meta.source.%w", err)
	}
	if len(m.Lattice) != 1 || m.Lattice[0] != sites {
		return Config{}, fmt.Errorf("meta.lattice: expected [%d] (the chain's sites), found %v", sites, m.Lattice)
	}
	return Config{Sites: sites, Hamiltonian: hamiltonian, Params: m.ParamNames, Open: open, Basis: basis, Sector: sector}, nil
}

// checkAlphabet checks meta.alphabet against the source's alphabet q.
func checkAlphabet(m data.Meta, q int, basis Basis) error {
	if m.Alphabet != q {
		return fmt.Errorf("meta.alphabet: expected %d for basis %s, found %d", q, basis, m.Alphabet)
	}
	return nil
}
