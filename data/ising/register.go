package ising

import (
	"fmt"

	"tidemark/data"
	"tidemark/data/exact"
	"tidemark/indicator"
)

// init makes Ising datasets rebuildable through exact.FromMeta. A lattice
// too large to enumerate has no exact density (Kaufman's formula gives ln Z
// but not the probability of every snapshot under a field), so it reports
// exact.ErrNoExact.
func init() {
	exact.Register("ising", func(m data.Meta) (indicator.Source, error) {
		sm, err := ParseSourceMeta(m)
		if err != nil {
			return nil, err
		}
		if n := sm.Lattice[0] * sm.Lattice[1]; n > MaxExactSites {
			return nil, fmt.Errorf("%w: the %d×%d Ising lattice has %d sites; exact enumeration is limited to %d",
				exact.ErrNoExact, sm.Lattice[0], sm.Lattice[1], n, MaxExactSites)
		}
		s, err := SourceFromMeta(m)
		if err != nil {
			return nil, err
		}
		return s, nil
	})
}
