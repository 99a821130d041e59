package chain

import (
	"tidemark/data"
	"tidemark/data/density"
)

// init makes chain datasets rebuildable through density.ReferenceFor.
func init() {
	density.RegisterReference(Generator, func(m data.Meta) (density.Source, error) {
		s, err := SourceFromMeta(m)
		if err != nil {
			return nil, err
		}
		return s, nil
	})
}
