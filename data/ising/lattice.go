package ising

import (
	"fmt"
	"math"
)

// Couplings are the Hamiltonian's parameters:
// H = −Jx Σ s_i s_{i+x̂} − Jy Σ s_i s_{i+ŷ} − H Σ s_i, at temperature T (k_B = 1).
type Couplings struct{ T, Jx, Jy, H float64 }

// Validate reports a temperature that is not positive or a coupling that is
// not finite.
func (c Couplings) Validate() error {
	if !(c.T > 0) || math.IsInf(c.T, 0) {
		return fmt.Errorf("temperature T: expected a finite number above 0, found %v", c.T)
	}
	for _, v := range []struct {
		name string
		x    float64
	}{{"Jx", c.Jx}, {"Jy", c.Jy}, {"h", c.H}} {
		if math.IsNaN(v.x) || math.IsInf(v.x, 0) {
			return fmt.Errorf("%s: expected a finite number, found %v", v.name, v.x)
		}
	}
	return nil
}

// Lattice is a periodic Ly×Lx square lattice. Site (y,x) is y*Lx+x.
type Lattice struct{ Ly, Lx int }

// N returns the number of sites Ly·Lx.
func (l Lattice) N() int { return l.Ly * l.Lx }

// Validate reports a side shorter than 2 sites.
func (l Lattice) Validate() error {
	if l.Lx < 2 || l.Ly < 2 {
		return fmt.Errorf("lattice %d×%d: expected both sides at least 2 sites", l.Ly, l.Lx)
	}
	if l.Lx > 1<<15 || l.Ly > 1<<15 {
		return fmt.Errorf("lattice %d×%d: expected sides of at most %d sites", l.Ly, l.Lx, 1<<15)
	}
	return nil
}

// Sums returns the bond sums Σ s_i s_{i+x̂} and Σ s_i s_{i+ŷ} and the
// magnetisation Σ s_i of the state x (0 ↔ s=−1, 1 ↔ s=+1; len(x) = N).
func (l Lattice) Sums(x []uint8) (bx, by, m int) {
	lx, ly := l.Lx, l.Ly
	for y := 0; y < ly; y++ {
		row := x[y*lx : (y+1)*lx]
		down := x[((y+1)%ly)*lx : ((y+1)%ly+1)*lx]
		for i := 0; i < lx; i++ {
			s := int(row[i]&1)*2 - 1
			r := int(row[(i+1)%lx]&1)*2 - 1
			d := int(down[i]&1)*2 - 1
			bx += s * r
			by += s * d
			m += s
		}
	}
	return bx, by, m
}

// Energy returns H(x) for the state x (0 ↔ s=−1, 1 ↔ s=+1; len(x) = N):
// the total energy of the lattice, not per site.
func (l Lattice) Energy(x []uint8, c Couplings) float64 {
	bx, by, m := l.Sums(x)
	return energyOf(bx, by, m, c)
}

func energyOf(bx, by, m int, c Couplings) float64 {
	return -c.Jx*float64(bx) - c.Jy*float64(by) - c.H*float64(m)
}
