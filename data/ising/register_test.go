package ising

import (
	"encoding/json"
	"errors"
	"testing"

	"tidemark/data"
	"tidemark/data/exact"
)

func TestRegisteredWithExact(t *testing.T) {
	for _, tc := range []struct {
		lattice []int
		wantErr bool
	}{{[]int{4, 4}, false}, {[]int{8, 8}, true}} {
		src, _ := json.Marshal(SourceMeta{Generator: "ising", Lattice: tc.lattice, Boundary: "periodic", Jx: 1, Jy: 1, Axes: []string{"T"}})
		m := data.Meta{ParamNames: []string{"T"}, Alphabet: 2, Lattice: tc.lattice, Source: src}
		s, err := exact.FromMeta(m)
		if tc.wantErr {
			if !errors.Is(err, exact.ErrNoExact) {
				t.Errorf("%v: err = %v, want ErrNoExact", tc.lattice, err)
			}
			continue
		}
		if err != nil {
			t.Fatalf("%v: %v", tc.lattice, err)
		}
		if s.Sites() != tc.lattice[0]*tc.lattice[1] {
			t.Errorf("%v: sites = %d", tc.lattice, s.Sites())
		}
	}
}
