package ising

import (
	"fmt"

	"tidemark/data"
	"tidemark/data/density"
)

// init makes Ising datasets rebuildable through density.ReferenceFor. A lattice
// too large to enumerate still has an exact density at zero field
// (KaufmanSource, which scores snapshots but cannot list or draw them);
// under a field it has none, and reports density.ErrNoReference.
func init() {
	density.RegisterReference("ising", func(m data.Meta) (density.Source, error) {
		sm, err := ParseSourceMeta(m)
		if err != nil {
			return nil, err
		}
		if n := sm.Lattice[0] * sm.Lattice[1]; n > MaxEnumeratedSites {
			if !sm.HasReference() {
				return nil, fmt.Errorf("%w: the %d×%d Ising lattice has %d sites, more than the %d that can be enumerated, and its field is not zero (Kaufman's exact formula is for h = 0)",
					density.ErrNoReference, sm.Lattice[0], sm.Lattice[1], n, MaxEnumeratedSites)
			}
			s, err := NewKaufmanSource(Lattice{Ly: sm.Lattice[0], Lx: sm.Lattice[1]}, sm.Axes, sm.Fixed())
			if err != nil {
				return nil, fmt.Errorf("exact reference from meta.source: %w", err)
			}
			return s, nil
		}
		s, err := SourceFromMeta(m)
		if err != nil {
			return nil, err
		}
		return s, nil
	})
}
