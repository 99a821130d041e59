package chain

import (
	"tidemark/data"
	"tidemark/data/exact"
	"tidemark/indicator"
)

// init makes chain datasets rebuildable through exact.FromMeta.
func init() {
	exact.Register(Generator, func(m data.Meta) (indicator.Source, error) {
		s, err := SourceFromMeta(m)
		if err != nil {
			return nil, err
		}
		return s, nil
	})
}
