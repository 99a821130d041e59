package chain

import (
	"tidemark/data"
	"tidemark/data/density"
)

// init makes chain datasets rebuildable through density.ReferenceFor: ED datasets
// as a Source, MPS datasets (meta.source.solver "mps") as an MPSSource.
func init() {
	density.RegisterReference(Generator, func(m data.Meta) (density.Source, error) {
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
