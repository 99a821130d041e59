package train

import (
	"fmt"
	"math/rand/v2"
	"slices"
	"strings"

	"tidemark/data/density"
)

// ParseAugment reads a comma-separated list of symmetry names ("translate",
// "mirror", "rotate", "flip"), or "" or "none" for no augmentation, and
// returns them in canonical order without repeats.
func ParseAugment(s string) ([]density.Symmetry, error) {
	s = strings.TrimSpace(s)
	if s == "" || s == "none" {
		return nil, nil
	}
	seen := map[density.Symmetry]bool{}
	for _, f := range strings.Split(s, ",") {
		f := density.Symmetry(strings.TrimSpace(f))
		if !slices.Contains(density.Symmetries, f) {
			return nil, fmt.Errorf("augment: expected a comma-separated list of %s (or none), found %q", density.JoinSymmetries(density.Symmetries, ", "), f)
		}
		seen[f] = true
	}
	var out []density.Symmetry
	for _, n := range density.Symmetries {
		if seen[n] {
			out = append(out, n)
		}
	}
	return out, nil
}

// augmenter maps each training snapshot through a random element of a
// symmetry group of the lattice before it enters a minibatch (data
// augmentation, common practice in machine learning; for lattice models the
// group is that of the Hamiltonian and the boundary conditions). When the
// distribution at every grid point is invariant under the group, the
// transformed snapshots are draws from the same distribution, and the model
// sees the whole orbit of each snapshot over the epochs instead of one
// member of it. Each element is drawn uniformly: translations, mirror flags,
// a rotation and a value flip chosen independently and uniformly give the
// uniform distribution over the group they generate, because every group
// element factors as a translation times a point-group element, and the
// uniform rotation absorbs the redundancy between the two mirror flags.
type augmenter struct {
	lat                             []int // 1 or 2 axes: [L] or [Ly, Lx]
	translate, mirror, rotate, flip bool
	src                             []int // scratch: the source site of each site
}

// newAugmenter checks the named symmetries (valid names, as
// Settings.Validate ensures) against the lattice and the alphabet; it
// returns nil for no symmetries.
func newAugmenter(names []density.Symmetry, lattice []int, q int) (*augmenter, error) {
	if len(names) == 0 {
		return nil, nil
	}
	a := &augmenter{lat: slices.Clone(lattice)}
	n := 1
	for _, l := range lattice {
		n *= l
	}
	a.src = make([]int, n)
	for _, s := range names {
		switch s {
		case density.SymTranslate:
			a.translate = true
		case density.SymMirror:
			a.mirror = true
		case density.SymRotate:
			a.rotate = true
		case density.SymFlip:
			a.flip = true
		}
	}
	if (a.translate || a.mirror || a.rotate) && len(lattice) > 2 {
		return nil, fmt.Errorf("augment: lattice symmetries need a 1-D or 2-D lattice, found lattice %v", lattice)
	}
	if a.rotate && (len(lattice) != 2 || lattice[0] != lattice[1]) {
		return nil, fmt.Errorf("augment rotate: expected a square 2-D lattice, found lattice %v", lattice)
	}
	if a.flip && q != 2 {
		return nil, fmt.Errorf("augment flip: expected alphabet 2, found alphabet %d", q)
	}
	return a, nil
}

// apply writes into dst the snapshot x mapped through a random group
// element drawn from rng.
func (a *augmenter) apply(dst, x []uint8, rng *rand.Rand) {
	lat := a.lat
	if len(lat) == 1 {
		L := lat[0]
		sh, mir := 0, false
		if a.translate {
			sh = rng.IntN(L)
		}
		if a.mirror {
			mir = rng.IntN(2) == 1
		}
		for i := range L {
			j := i
			if mir {
				j = L - 1 - j
			}
			a.src[i] = (j + sh) % L
		}
	} else {
		Ly, Lx := lat[0], lat[1]
		dy, dx, my, mx, rot := 0, 0, false, false, 0
		if a.translate {
			dy, dx = rng.IntN(Ly), rng.IntN(Lx)
		}
		if a.mirror {
			my, mx = rng.IntN(2) == 1, rng.IntN(2) == 1
		}
		if a.rotate {
			rot = rng.IntN(4)
		}
		latticeMap(a.src, Ly, Lx, dy, dx, my, mx, rot)
	}
	f := uint8(0)
	if a.flip && rng.IntN(2) == 1 {
		f = 1
	}
	for i, s := range a.src {
		dst[i] = x[s] ^ f
	}
}

// latticeMap writes into src the source site of every site of an Ly×Lx
// lattice under the map: rot quarter turns (square lattices), then the
// mirror flags my and mx, then a cyclic shift by (dy, dx).
func latticeMap(src []int, Ly, Lx, dy, dx int, my, mx bool, rot int) {
	for y := range Ly {
		for x := range Lx {
			u, v := y, x
			for range rot { // (u, v) → (v, L−1−u), a quarter turn
				u, v = v, Ly-1-u
			}
			if my {
				u = Ly - 1 - u
			}
			if mx {
				v = Lx - 1 - v
			}
			src[y*Lx+x] = ((u+dy)%Ly)*Lx + (v+dx)%Lx
		}
	}
}
