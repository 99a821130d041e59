package density

import (
	"errors"
	"fmt"
	"sort"
	"sync"

	"tidemark/data"
)

// ReferenceBuilder rebuilds the exact reference source of a dataset from its
// meta; it returns an error wrapping ErrNoReference when the settings exist
// but admit no exact reference (too many sites, for example).
type ReferenceBuilder func(m data.Meta) (Source, error)

// ErrNoReference reports that a dataset has no exact reference.
var ErrNoReference = errors.New("no exact reference")

var (
	mu       sync.RWMutex
	builders = map[string]ReferenceBuilder{}
)

// RegisterReference makes a builder available under a generator name (the
// dataset's meta.source.generator). Generators call it from init.
func RegisterReference(generator string, b ReferenceBuilder) {
	mu.Lock()
	defer mu.Unlock()
	builders[generator] = b
}

// ReferenceFor returns the exact reference source for a dataset's meta, or an
// error that wraps ErrNoReference and says why there is none.
func ReferenceFor(m data.Meta) (Source, error) {
	g := m.Generator()
	mu.RLock()
	b, ok := builders[g]
	mu.RUnlock()
	if !ok {
		if g == "" {
			g = "none"
		}
		return nil, fmt.Errorf("%w: the dataset's meta.source.generator is %q; exact references exist for %v", ErrNoReference, g, ReferenceGenerators())
	}
	src, err := b(m)
	if err != nil {
		return nil, err
	}
	return src, nil
}

// ReferenceGenerators lists the generator names with a registered reference.
func ReferenceGenerators() []string {
	mu.RLock()
	defer mu.RUnlock()
	var g []string
	for k := range builders {
		g = append(g, k)
	}
	sort.Strings(g)
	return g
}
