package ising

import (
	"encoding/json"
	"strings"
	"testing"

	"tidemark/data"
	"tidemark/data/density"
)

func TestAugmentNotes(t *testing.T) {
	src := json.RawMessage(`{"generator":"ising","lattice":[8,8],"boundary":"periodic","jx":1,"jy":0.5,"field":0,"axes":["T"]}`)
	if n := AugmentNotes(data.Meta{Source: src}, []density.Symmetry{"translate", "rotate"}); len(n) != 1 || !strings.Contains(n[0], "--augment rotate") {
		t.Errorf("declaring rotate on an anisotropic lattice: notes %q, want one about rotate", n)
	}
	if n := AugmentNotes(data.Meta{Source: src}, nil); len(n) != 1 || !strings.Contains(n[0], "--augment translate,mirror,flip") {
		t.Errorf("no --augment: notes %q, want one suggesting translate,mirror,flip", n)
	}
	if n := AugmentNotes(data.Meta{Source: src}, []density.Symmetry{"translate", "mirror", "flip"}); len(n) != 0 {
		t.Errorf("the right symmetries: notes %q, want none", n)
	}
	if n := AugmentNotes(data.Meta{Source: json.RawMessage(`{"generator":"imported"}`)}, []density.Symmetry{"rotate"}); len(n) != 0 {
		t.Errorf("imported data: notes %q, want none (tidemark cannot judge)", n)
	}
}
