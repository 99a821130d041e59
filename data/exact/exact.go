// Package exact rebuilds an exact density source from a dataset's meta
// object: a generator that can compute exact probabilities (the Ising
// enumeration, the spin chain's ground state) registers a constructor under
// its meta.source.generator name, and FromMeta dispatches on that name.
package exact

import (
	"errors"
	"fmt"
	"sort"
	"sync"

	"tidemark/data"
	"tidemark/indicator"
)

// Builder rebuilds an exact source from a dataset's meta; it returns an error
// wrapping ErrNoExact when the settings exist but admit no exact reference
// (too many sites, for example).
type Builder func(m data.Meta) (indicator.Source, error)

// ErrNoExact reports that a dataset has no exact reference.
var ErrNoExact = errors.New("no exact reference")

var (
	mu       sync.RWMutex
	builders = map[string]Builder{}
)

// Register makes a builder available under a generator name.
func Register(generator string, b Builder) {
	mu.Lock()
	defer mu.Unlock()
	builders[generator] = b
}

// FromMeta returns the exact source for a dataset's meta, or an error that
// wraps ErrNoExact and says why there is none.
func FromMeta(m data.Meta) (indicator.Source, error) {
	g := m.Generator()
	mu.RLock()
	b, ok := builders[g]
	mu.RUnlock()
	if !ok {
		if g == "" {
			g = "none"
		}
		return nil, fmt.Errorf("%w: the dataset's meta.source.generator is %q; exact references exist for %v", ErrNoExact, g, Generators())
	}
	src, err := b(m)
	if err != nil {
		return nil, err
	}
	return src, nil
}

// Generators lists the registered generator names.
func Generators() []string {
	mu.RLock()
	defer mu.RUnlock()
	var g []string
	for k := range builders {
		g = append(g, k)
	}
	sort.Strings(g)
	return g
}
