package ising

import (
	"slices"

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
