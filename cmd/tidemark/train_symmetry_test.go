package main

import (
	"encoding/json"
	"slices"
	"strings"
	"testing"

	"tidemark/data/density"
)

// TestIsingSymmetries checks the symmetries read from `simulate ising`
// source records against the symmetry group of the nearest-neighbour Ising
// Hamiltonian (common practice): a periodic lattice is translation
// invariant, nearest-neighbour couplings are mirror symmetric, a quarter
// turn exchanges Jx and Jy, and the spin flip reverses the field.
func TestIsingSymmetries(t *testing.T) {
	for _, tc := range []struct {
		name, src string
		want      []density.Symmetry
		ok        bool
	}{
		{"isotropic, zero field", `{"generator":"ising","lattice":[16,16],"boundary":"periodic","jx":1,"jy":1,"field":0,"axes":["T"]}`,
			[]density.Symmetry{"translate", "mirror", "rotate", "flip"}, true},
		{"Jy on the grid", `{"generator":"ising","lattice":[4,4],"boundary":"periodic","jx":1,"jy":1,"field":0,"axes":["T","Jy"]}`,
			[]density.Symmetry{"translate", "mirror", "flip"}, true},
		{"anisotropic", `{"generator":"ising","lattice":[8,8],"boundary":"periodic","jx":1,"jy":0.5,"field":0,"axes":["T"]}`,
			[]density.Symmetry{"translate", "mirror", "flip"}, true},
		{"rectangle in a field", `{"generator":"ising","lattice":[4,6],"boundary":"periodic","jx":1,"jy":1,"field":0.2,"axes":["T"]}`,
			[]density.Symmetry{"translate", "mirror"}, true},
		{"field on the grid", `{"generator":"ising","lattice":[6,6],"boundary":"periodic","jx":1,"jy":1,"field":0,"axes":["T","h"]}`,
			[]density.Symmetry{"translate", "mirror", "rotate"}, true},
		{"imported", `{"generator":"imported"}`, nil, false},
		{"no source", ``, nil, false},
	} {
		got, ok := isingSymmetries(json.RawMessage(tc.src))
		if ok != tc.ok || !slices.Equal(got, tc.want) {
			t.Errorf("%s: got %v, %v; want %v, %v", tc.name, got, ok, tc.want, tc.ok)
		}
	}
}

func TestAugmentNotes(t *testing.T) {
	src := json.RawMessage(`{"generator":"ising","lattice":[8,8],"boundary":"periodic","jx":1,"jy":0.5,"field":0,"axes":["T"]}`)
	if n := augmentNotes(src, []density.Symmetry{"translate", "rotate"}); len(n) != 1 || !strings.Contains(n[0], "--augment rotate") {
		t.Errorf("declaring rotate on an anisotropic lattice: notes %q, want one about rotate", n)
	}
	if n := augmentNotes(src, nil); len(n) != 1 || !strings.Contains(n[0], "--augment translate,mirror,flip") {
		t.Errorf("no --augment: notes %q, want one suggesting translate,mirror,flip", n)
	}
	if n := augmentNotes(src, []density.Symmetry{"translate", "mirror", "flip"}); len(n) != 0 {
		t.Errorf("the right symmetries: notes %q, want none", n)
	}
	if n := augmentNotes(json.RawMessage(`{"generator":"imported"}`), []density.Symmetry{"rotate"}); len(n) != 0 {
		t.Errorf("imported data: notes %q, want none (tidemark cannot judge)", n)
	}
}
