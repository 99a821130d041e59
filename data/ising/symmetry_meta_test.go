package ising

import (
	"slices"
	"testing"

	"tidemark/data"
)

// TestIsingSymmetries checks the symmetries read from `simulate ising`
// source records against the symmetry group of the nearest-neighbour Ising
// Hamiltonian (common practice): a periodic lattice is translation
// invariant, nearest-neighbour couplings are mirror symmetric, a quarter
// turn exchanges Jx and Jy, and the spin flip reverses the field.
func TestSourceMetaSymmetries(t *testing.T) {
	for _, tc := range []struct {
		name, src string
		want      []string
		ok        bool
	}{
		{"isotropic, zero field", `{"generator":"ising","lattice":[16,16],"boundary":"periodic","jx":1,"jy":1,"field":0,"axes":["T"]}`,
			[]string{"translate", "mirror", "rotate", "flip"}, true},
		{"Jy on the grid", `{"generator":"ising","lattice":[4,4],"boundary":"periodic","jx":1,"jy":1,"field":0,"axes":["T","Jy"]}`,
			[]string{"translate", "mirror", "flip"}, true},
		{"anisotropic", `{"generator":"ising","lattice":[8,8],"boundary":"periodic","jx":1,"jy":0.5,"field":0,"axes":["T"]}`,
			[]string{"translate", "mirror", "flip"}, true},
		{"rectangle in a field", `{"generator":"ising","lattice":[4,6],"boundary":"periodic","jx":1,"jy":1,"field":0.2,"axes":["T"]}`,
			[]string{"translate", "mirror"}, true},
		{"field on the grid", `{"generator":"ising","lattice":[6,6],"boundary":"periodic","jx":1,"jy":1,"field":0,"axes":["T","h"]}`,
			[]string{"translate", "mirror", "rotate"}, true},
		{"imported", `{"generator":"imported"}`, nil, false},
		{"no source", ``, nil, false},
	} {
		var got []string
		sm, err := ParseSourceMeta(data.Meta{Source: []byte(tc.src)})
		ok := err == nil
		if ok {
			for _, sym := range sm.Symmetries() {
				got = append(got, string(sym))
			}
		}
		if ok != tc.ok || !slices.Equal(got, tc.want) {
			t.Errorf("%s: got %v, %v; want %v, %v", tc.name, got, ok, tc.want, tc.ok)
		}
	}
}
