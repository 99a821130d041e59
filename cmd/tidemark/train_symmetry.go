package main

import (
	"encoding/json"
	"fmt"
	"slices"

	"tidemark/data/density"
)

// isingSymmetries reads the source record that `simulate ising` writes and
// returns the symmetries its distribution has at every grid point: mirror
// always (nearest-neighbour couplings), translate with periodic boundaries,
// rotate on a square lattice with Jx = Jy when neither coupling is a grid
// axis, flip at zero field when the field is not a grid axis. ok is false for
// other sources, which tidemark cannot judge.
func isingSymmetries(source json.RawMessage) (syms []density.Symmetry, ok bool) {
	var s struct {
		Generator string   `json:"generator"`
		Lattice   []int    `json:"lattice"`
		Boundary  string   `json:"boundary"`
		Jx        *float64 `json:"jx"`
		Jy        *float64 `json:"jy"`
		Field     *float64 `json:"field"`
		Axes      []string `json:"axes"`
	}
	if len(source) == 0 || json.Unmarshal(source, &s) != nil || s.Generator != "ising" || len(s.Lattice) != 2 || s.Jx == nil || s.Jy == nil || s.Field == nil {
		return nil, false
	}
	axis := func(names ...string) bool {
		for _, n := range names {
			if slices.Contains(s.Axes, n) {
				return true
			}
		}
		return false
	}
	if s.Boundary == "periodic" {
		syms = append(syms, density.SymTranslate)
	}
	syms = append(syms, density.SymMirror)
	if s.Lattice[0] == s.Lattice[1] && *s.Jx == *s.Jy && !axis("Jx", "Jy") {
		syms = append(syms, density.SymRotate)
	}
	if *s.Field == 0 && !axis("h") {
		syms = append(syms, density.SymFlip)
	}
	return syms, true
}

// augmentNotes compares the declared --augment symmetries with those of a
// simulated Ising dataset: a declared symmetry the system lacks biases the
// model, and an undeclared one leaves a better fit unused.
func augmentNotes(source json.RawMessage, declared []density.Symmetry) []string {
	has, ok := isingSymmetries(source)
	if !ok {
		return nil
	}
	var notes []string
	for _, d := range declared {
		if !slices.Contains(has, d) {
			notes = append(notes, fmt.Sprintf("--augment %s: this dataset's Ising model (from its source record) does not have that symmetry at every grid point, so the model will learn a distribution that is not the data's; its symmetries are %s", d, density.JoinSymmetries(has, ",")))
		}
	}
	var missing []density.Symmetry
	for _, h := range has {
		if !slices.Contains(declared, h) {
			missing = append(missing, h)
		}
	}
	if len(declared) == 0 && len(missing) > 0 {
		notes = append(notes, fmt.Sprintf("this dataset's Ising model is symmetric under %s at every grid point; --augment %s usually fits it better (see README, Caution)", density.JoinSymmetries(missing, ", "), density.JoinSymmetries(missing, ",")))
	}
	return notes
}
