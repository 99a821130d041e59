package ising

import "slices"

// Symmetries returns the symmetries the Ising distribution of the dataset m
// describes has at every grid point, named as train --augment names them:
// "translate" with periodic boundaries, "mirror" always (nearest-neighbour
// couplings), "rotate" on a square lattice with Jx = Jy when neither
// coupling is a grid axis, and "flip" at zero field when the field is not a
// grid axis.
func (m SourceMeta) Symmetries() []string {
	axis := func(names ...string) bool {
		for _, n := range names {
			if slices.Contains(m.Axes, n) {
				return true
			}
		}
		return false
	}
	var syms []string
	if m.Boundary == "periodic" {
		syms = append(syms, "translate")
	}
	syms = append(syms, "mirror")
	if m.Lattice[0] == m.Lattice[1] && m.Jx == m.Jy && !axis("Jx", "Jy") {
		syms = append(syms, "rotate")
	}
	if m.Field == 0 && !axis("h") {
		syms = append(syms, "flip")
	}
	return syms
}
