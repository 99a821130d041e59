package chain

import (
	"tidemark/data"
	"tidemark/data/exact"
	"tidemark/indicator"
)

// init makes chain datasets rebuildable through exact.FromMeta: ED datasets
// as a Source, MPS datasets (meta.source.solver "mps") as an MPSSource.
func init() {
	exact.Register(Generator, func(m data.Meta) (indicator.Source, error) {
		if solverOf(m) == SolverMPS {
			s, err := MPSSourceFromMeta(m)
			if err != nil {
				return nil, err
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
