package ising

import (
	"fmt"
	"slices"

	"tidemark/data"

	"tidemark/data/density"
)

// Symmetries returns the symmetries the Ising distribution of the dataset m
// describes has at every grid point, as Source.Symmetries states them for a
// periodic lattice; with other boundaries translations are not among them.
func (m SourceMeta) Symmetries() []density.Symmetry {
	var l Lattice
	if len(m.Lattice) == 2 {
		l = Lattice{Ly: m.Lattice[0], Lx: m.Lattice[1]}
	}
	syms := symmetries(l, m.Axes, Couplings{Jx: m.Jx, Jy: m.Jy, H: m.Field})
	if m.Boundary != "periodic" {
		syms = slices.DeleteFunc(syms, func(s density.Symmetry) bool { return s == density.SymTranslate })
	}
	return syms
}

// AugmentNotes compares the declared --augment symmetries with those of a
// simulated Ising dataset (SourceMeta.Symmetries): a declared
// symmetry the system lacks biases the model, and an undeclared one leaves
// a better fit unused. Other sources get no notes: tidemark cannot judge.
func AugmentNotes(meta data.Meta, declared []density.Symmetry) []string {
	sm, err := ParseSourceMeta(meta)
	if err != nil {
		return nil
	}
	has := sm.Symmetries()
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
