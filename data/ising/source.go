package ising

import (
	"encoding/json"
	"fmt"
	"math/rand/v2"
	"slices"
	"strings"

	"tidemark/data"
	"tidemark/data/density"
)

// ParamNames are the names a grid axis of the Ising model may have: the
// temperature, the two couplings and the field.
var ParamNames = []string{"T", "Jx", "Jy", "h"}

// Source adapts Enumeration to tidemark's density-source interfaces
// (density.Source, density.Sampler, density.Enumerable and
// density.Symmetric): λ's components are the named Couplings, the rest
// come from a fixed set.
// It is safe for concurrent use.
type Source struct {
	exact *Enumeration
	names []string
	fixed Couplings
}

// NewSource enumerates l and returns a source whose λ holds the couplings
// named in names (each one of "T", "Jx", "Jy", "h", at most once); the
// couplings not named are taken from fixed.
func NewSource(l Lattice, names []string, fixed Couplings) (*Source, error) {
	if err := checkNames(names); err != nil {
		return nil, err
	}
	e, err := NewEnumeration(l)
	if err != nil {
		return nil, err
	}
	return &Source{exact: e, names: append([]string(nil), names...), fixed: fixed}, nil
}

func checkNames(names []string) error {
	seen := map[string]bool{}
	for _, n := range names {
		ok := false
		for _, p := range ParamNames {
			ok = ok || n == p
		}
		if !ok {
			return fmt.Errorf("Ising parameter %q: expected one of %s", n, strings.Join(ParamNames, ", "))
		}
		if seen[n] {
			return fmt.Errorf("Ising parameter %q: given twice", n)
		}
		seen[n] = true
	}
	return nil
}

// Enumeration returns the underlying enumeration.
func (s *Source) Enumeration() *Enumeration { return s.exact }

// Names returns the names of λ's components.
func (s *Source) Names() []string { return append([]string(nil), s.names...) }

// Couplings returns the Couplings at λ, checking its length and that T > 0.
func (s *Source) Couplings(lambda []float64) (Couplings, error) {
	return withParams(s.fixed, s.names, lambda)
}

func withParams(c Couplings, names []string, lambda []float64) (Couplings, error) {
	if len(lambda) != len(names) {
		return c, fmt.Errorf("Ising parameters: expected %d values (%s), found %d", len(names), strings.Join(names, ", "), len(lambda))
	}
	for i, n := range names {
		switch n {
		case "T":
			c.T = lambda[i]
		case "Jx":
			c.Jx = lambda[i]
		case "Jy":
			c.Jy = lambda[i]
		case "h":
			c.H = lambda[i]
		}
	}
	if err := c.Validate(); err != nil {
		return c, fmt.Errorf("Ising parameters %s: %w", data.FormatPoint(names, lambda), err)
	}
	return c, nil
}

// Sites returns N.
func (s *Source) Sites() int { return s.exact.lat.N() }

// Alphabet returns 2.
func (s *Source) Alphabet() int { return 2 }

// ParamDim returns the number of named couplings.
func (s *Source) ParamDim() int { return len(s.names) }

// Enumerable reports true: all 2^N states may be listed.
func (s *Source) Enumerable() bool { return true }

// LogProb writes the exact ln p(x_m|λ) in nats for each row of xs into dst.
func (s *Source) LogProb(dst []float64, xs []uint8, lambda []float64) error {
	c, err := s.Couplings(lambda)
	if err != nil {
		return err
	}
	n := s.Sites()
	if len(xs) != len(dst)*n {
		return fmt.Errorf("Ising log-probabilities: expected %d states of %d sites (%d values), found %d values", len(dst), n, len(dst)*n, len(xs))
	}
	logZ := s.exact.LogZ(c)
	for m := range dst {
		dst[m] = -s.exact.lat.Energy(xs[m*n:(m+1)*n], c)/c.T - logZ
	}
	return nil
}

// Sample writes n exact independent snapshots at λ into dst (n·N values).
func (s *Source) Sample(dst []uint8, n int, lambda []float64, rng *rand.Rand) error {
	c, err := s.Couplings(lambda)
	if err != nil {
		return err
	}
	if len(dst) < n*s.Sites() {
		return fmt.Errorf("Ising samples: expected room for %d values, found %d", n*s.Sites(), len(dst))
	}
	s.exact.Sample(dst, n, c, rng)
	return nil
}

// SourceMeta is the meta.source object that "tidemark simulate ising"
// writes: every setting needed to rebuild the exact reference.
type SourceMeta struct {
	Generator    string      `json:"generator"` // "ising"
	Lattice      []int       `json:"lattice"`   // [Ly, Lx]
	Boundary     string      `json:"boundary"`  // "periodic"
	Jx           float64     `json:"jx"`
	Jy           float64     `json:"jy"`
	Field        float64     `json:"field"`
	Temperature  float64     `json:"temperature"` // used when T is not a grid axis
	Grid         string      `json:"grid"`        // the --grid text
	Axes         []string    `json:"axes"`
	Samples      int         `json:"samples"` // per grid point
	ExactSamples bool        `json:"exact_samples"`
	Seed         uint64      `json:"seed"`
	Points       []PointInfo `json:"points"`
}

// Fixed returns the couplings the meta fixes (those not on a grid axis).
func (m SourceMeta) Fixed() Couplings {
	return Couplings{T: m.Temperature, Jx: m.Jx, Jy: m.Jy, H: m.Field}
}

// Couplings returns the couplings at grid point lambda, whose components
// are named by m.Axes; the rest are fixed by m. It checks λ's length and
// that T > 0.
func (m SourceMeta) Couplings(lambda []float64) (Couplings, error) {
	return withParams(m.Fixed(), m.Axes, lambda)
}

// HasReference reports whether the dataset m describes (as ParseSourceMeta
// returns it) has an exact reference: its lattice can be enumerated, or its
// field is zero (KaufmanSource). It builds nothing.
func (m SourceMeta) HasReference() bool {
	return m.Lattice[0]*m.Lattice[1] <= MaxEnumeratedSites || (m.Field == 0 && !slices.Contains(m.Axes, "h"))
}

// ParseSourceMeta reads meta.source of an Ising dataset.
func ParseSourceMeta(m data.Meta) (SourceMeta, error) {
	var sm SourceMeta
	if g := m.Generator(); g != "ising" {
		return sm, fmt.Errorf("meta.source.generator: expected \"ising\", found %q", g)
	}
	if err := json.Unmarshal(m.Source, &sm); err != nil {
		return sm, fmt.Errorf("meta.source: expected the Ising settings object: %w", err)
	}
	if len(sm.Lattice) != 2 {
		return sm, fmt.Errorf("meta.source.lattice: expected [Ly, Lx], found %v", sm.Lattice)
	}
	if len(m.Lattice) != 0 && (len(m.Lattice) != 2 || m.Lattice[0] != sm.Lattice[0] || m.Lattice[1] != sm.Lattice[1]) {
		return sm, fmt.Errorf("meta.lattice: expected %v as in meta.source.lattice, found %v", sm.Lattice, m.Lattice)
	}
	if sm.Boundary != "" && sm.Boundary != "periodic" {
		return sm, fmt.Errorf("meta.source.boundary: expected \"periodic\", found %q", sm.Boundary)
	}
	if err := checkNames(sm.Axes); err != nil {
		return sm, fmt.Errorf("meta.source.axes: %w", err)
	}
	if len(m.ParamNames) != 0 && strings.Join(m.ParamNames, ",") != strings.Join(sm.Axes, ",") {
		return sm, fmt.Errorf("meta.source.axes: expected the param_names %q, found %q", m.ParamNames, sm.Axes)
	}
	return sm, nil
}

// SourceFromMeta rebuilds the exact source from a dataset's meta, as written
// by "tidemark simulate ising"; the lattice must have at most MaxEnumeratedSites
// sites.
func SourceFromMeta(m data.Meta) (*Source, error) {
	sm, err := ParseSourceMeta(m)
	if err != nil {
		return nil, err
	}
	s, err := NewSource(Lattice{Ly: sm.Lattice[0], Lx: sm.Lattice[1]}, sm.Axes, sm.Fixed())
	if err != nil {
		return nil, fmt.Errorf("exact reference from meta.source: %w", err)
	}
	return s, nil
}

// Symmetries returns the symmetries the distribution has at every λ.
func (s *Source) Symmetries() []density.Symmetry {
	return symmetries(s.exact.lat, s.names, s.fixed)
}

// symmetries returns the symmetries of the Ising distribution on the
// periodic lattice l at every point of a grid over the couplings named in
// names, the others taken from fixed (common practice): translations and
// mirrors always (periodic boundaries, nearest-neighbour couplings);
// rotations by 90° on a square lattice with Jx = Jy when neither coupling
// is a parameter; the global flip at zero field when the field is not a
// parameter.
func symmetries(l Lattice, names []string, fixed Couplings) []density.Symmetry {
	syms := []density.Symmetry{density.SymTranslate, density.SymMirror}
	if l.Ly == l.Lx && fixed.Jx == fixed.Jy && !slices.Contains(names, "Jx") && !slices.Contains(names, "Jy") {
		syms = append(syms, density.SymRotate)
	}
	if fixed.H == 0 && !slices.Contains(names, "h") {
		syms = append(syms, density.SymFlip)
	}
	return syms
}
