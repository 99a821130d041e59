package ising

import (
	"errors"
	"fmt"
	"math"
	"slices"

	"tidemark/data/density"
)

// KaufmanSource is the exact density of the zero-field Ising model on a
// periodic lattice of any size: ln p(x|λ) = −E(x)/T − ln Z(λ), with ln Z
// from Kaufman's exact partition function (B. Kaufman, Phys. Rev. 76, 1232
// (1949)). It scores given snapshots exactly but can neither list its 2^N
// states nor draw independent snapshots, so a scan with it evaluates the
// exact indicators at the data's grid points on the data's own snapshots —
// the like-for-like reference for a model scanned on the same snapshots.
// It implements density.Source, density.EntropySource and density.Symmetric.
type KaufmanSource struct {
	lat   Lattice
	names []string
	fixed Couplings
}

// NewKaufmanSource returns the exact zero-field source of lattice l whose λ
// holds the couplings named in names ("T", "Jx", "Jy"; the field is 0 and
// may not be a parameter); the others are taken from fixed.
func NewKaufmanSource(l Lattice, names []string, fixed Couplings) (*KaufmanSource, error) {
	if err := l.Validate(); err != nil {
		return nil, err
	}
	if err := checkNames(names); err != nil {
		return nil, err
	}
	if slices.Contains(names, "h") || fixed.H != 0 {
		return nil, errors.New("Kaufman's exact partition function is for zero field: expected h = 0 and not a parameter")
	}
	return &KaufmanSource{lat: l, names: append([]string(nil), names...), fixed: fixed}, nil
}

// Sites returns N.
func (s *KaufmanSource) Sites() int { return s.lat.N() }

// Alphabet returns 2.
func (s *KaufmanSource) Alphabet() int { return 2 }

// ParamDim returns d, the length of λ.
func (s *KaufmanSource) ParamDim() int { return len(s.names) }

// LogProb writes the exact ln p(x_m|λ) in nats for each row of xs into dst.
// Couplings for which Kaufman's formula does not hold (see KaufmanLogZ) are
// an error.
func (s *KaufmanSource) LogProb(dst []float64, xs []uint8, lambda []float64) error {
	c, err := withParams(s.fixed, s.names, lambda)
	if err != nil {
		return err
	}
	n := s.Sites()
	if len(xs) != len(dst)*n {
		return fmt.Errorf("Ising log-probabilities: expected %d states of %d sites (%d values), found %d values", len(dst), n, len(dst)*n, len(xs))
	}
	logZ := KaufmanLogZ(s.lat.Ly, s.lat.Lx, c.T, c.Jx, c.Jy)
	if math.IsNaN(logZ) || math.IsInf(logZ, 0) {
		return fmt.Errorf("Ising log-probabilities at T=%g, Jx=%g, Jy=%g: Kaufman's formula needs positive couplings (or a negative one along a side of even length)", c.T, c.Jx, c.Jy)
	}
	for m := range dst {
		dst[m] = -s.lat.Energy(xs[m*n:(m+1)*n], c)/c.T - logZ
	}
	return nil
}

// EntropyPerSite returns the exact entropy per site at λ from Kaufman's
// partition function (KaufmanEntropy); couplings for which the formula does
// not hold, or T ≤ 0, are an error.
func (s *KaufmanSource) EntropyPerSite(lambda []float64) (float64, error) {
	c, err := withParams(s.fixed, s.names, lambda)
	if err != nil {
		return 0, err
	}
	if c.T <= 0 {
		return 0, fmt.Errorf("Ising entropy: expected T > 0, found %g", c.T)
	}
	e := KaufmanEntropy(s.lat.Ly, s.lat.Lx, c.T, c.Jx, c.Jy)
	if math.IsNaN(e) || math.IsInf(e, 0) {
		return 0, fmt.Errorf("Ising entropy at T=%g, Jx=%g, Jy=%g: Kaufman's formula needs positive couplings (or a negative one along a side of even length)", c.T, c.Jx, c.Jy)
	}
	return e, nil
}

// Symmetries returns the symmetries the distribution has at every λ (see
// Source.Symmetries; the field is always zero).
func (s *KaufmanSource) Symmetries() []density.Symmetry {
	return symmetries(s.lat, s.names, s.fixed)
}
