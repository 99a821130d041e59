package train

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"tidemark/data/density"
)

func TestParseAugment(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want []density.Symmetry
		err  string
	}{
		{"", nil, ""},
		{"none", nil, ""},
		{"flip,translate", []density.Symmetry{"translate", "flip"}, ""},
		{" rotate , mirror,rotate", []density.Symmetry{"mirror", "rotate"}, ""},
		{"translate,shear", nil, `found "shear"`},
	} {
		got, err := ParseAugment(tc.in)
		if tc.err != "" {
			if err == nil || !strings.Contains(err.Error(), tc.err) {
				t.Errorf("ParseAugment(%q): error %v, want one containing %q", tc.in, err, tc.err)
			}
			continue
		}
		if err != nil || !slices.Equal(got, tc.want) {
			t.Errorf("ParseAugment(%q) = %v, %v; want %v", tc.in, got, err, tc.want)
		}
	}
}

func TestNewAugmenterRefuses(t *testing.T) {
	for _, tc := range []struct {
		names   []density.Symmetry
		lattice []int
		q       int
		err     string
	}{
		{[]density.Symmetry{density.SymRotate}, []int{4, 6}, 2, "square 2-D lattice"},
		{[]density.Symmetry{density.SymRotate}, []int{16}, 2, "square 2-D lattice"},
		{[]density.Symmetry{density.SymTranslate}, []int{2, 2, 2}, 2, "1-D or 2-D lattice"},
		{[]density.Symmetry{density.SymFlip}, []int{8}, 3, "alphabet 2"},
	} {
		if _, err := newAugmenter(tc.names, tc.lattice, tc.q); err == nil || !strings.Contains(err.Error(), tc.err) {
			t.Errorf("newAugmenter(%v, %v, %d): error %v, want one containing %q", tc.names, tc.lattice, tc.q, err, tc.err)
		}
	}
}

// TestAugmenterGroup draws many elements and checks that every one is a
// permutation of the sites, that they are exactly as many distinct ones as
// the group has elements, and that they come uniformly. The orders are
// group theory (common practice): translations of an Ly×Lx torus number
// Ly·Lx, the dihedral group D4 of the square has 8 elements, the two mirror
// flags of a rectangle generate 4, and a ring of L sites has a dihedral group
// of 2L elements.
func TestAugmenterGroup(t *testing.T) {
	for _, tc := range []struct {
		names   []density.Symmetry
		lattice []int
		order   int
	}{
		{[]density.Symmetry{density.SymTranslate, density.SymMirror, density.SymRotate}, []int{4, 4}, 16 * 8},
		{[]density.Symmetry{density.SymMirror, density.SymRotate}, []int{5, 5}, 8},
		{[]density.Symmetry{density.SymRotate}, []int{3, 3}, 4},
		{[]density.Symmetry{density.SymTranslate, density.SymMirror}, []int{4, 6}, 24 * 4},
		{[]density.Symmetry{density.SymTranslate}, []int{3, 5}, 15},
		{[]density.Symmetry{density.SymTranslate, density.SymMirror}, []int{7}, 14},
		{[]density.Symmetry{density.SymMirror}, []int{7}, 2},
	} {
		t.Run(fmt.Sprint(tc.names, tc.lattice), func(t *testing.T) {
			a, err := newAugmenter(tc.names, tc.lattice, 2)
			if err != nil {
				t.Fatal(err)
			}
			n := len(a.src)
			x := make([]uint8, n) // unused values: the test reads a.src
			dst := make([]uint8, n)
			rng := rand.New(rand.NewPCG(1, 2))
			count := map[string]int{}
			draws := 400 * tc.order
			for range draws {
				a.apply(dst, x, rng)
				seen := make([]bool, n)
				for _, s := range a.src {
					if s < 0 || s >= n || seen[s] {
						t.Fatalf("not a permutation of the %d sites: %v", n, a.src)
					}
					seen[s] = true
				}
				count[fmt.Sprint(a.src)]++
			}
			if len(count) != tc.order {
				t.Fatalf("%d distinct elements, want the group's %d", len(count), tc.order)
			}
			// Pearson's χ² against the uniform distribution, with k = order−1
			// degrees of freedom: mean k, standard deviation √(2k); the limit
			// k + 6√(2k) has a tail probability below 0.002 for every k here.
			chi2 := 0.0
			for _, c := range count {
				d := float64(c) - 400
				chi2 += d * d / 400
			}
			k := float64(tc.order - 1)
			if lim := k + 6*math.Sqrt(2*k); chi2 > lim {
				t.Errorf("χ² = %.1f with %v degrees of freedom, above %.1f: the elements are not drawn uniformly", chi2, k, lim)
			}
		})
	}
}

// TestAugmenterKeepsIsingEnergy maps random snapshots of a periodic square
// lattice through random elements of its full symmetry group and checks
// that the nearest-neighbour Ising energy and the magnetisation (up to the
// flip's sign) are unchanged: the group is a symmetry of the zero-field
// Hamiltonian with periodic boundaries (common practice).
func TestAugmenterKeepsIsingEnergy(t *testing.T) {
	const L = 6
	a, err := newAugmenter([]density.Symmetry{density.SymTranslate, density.SymMirror, density.SymRotate, density.SymFlip}, []int{L, L}, 2)
	if err != nil {
		t.Fatal(err)
	}
	energy := func(x []uint8) (e, m int) {
		s := func(y, z int) int { return 2*int(x[((y+L)%L)*L+(z+L)%L]) - 1 }
		for y := range L {
			for z := range L {
				e -= s(y, z) * (s(y+1, z) + s(y, z+1))
				m += s(y, z)
			}
		}
		return e, m
	}
	rng := rand.New(rand.NewPCG(3, 4))
	x, y := make([]uint8, L*L), make([]uint8, L*L)
	for range 2000 {
		for i := range x {
			x[i] = uint8(rng.IntN(2))
		}
		a.apply(y, x, rng)
		e0, m0 := energy(x)
		e1, m1 := energy(y)
		if e0 != e1 || (m0 != m1 && m0 != -m1) {
			t.Fatalf("energy %d → %d, magnetisation %d → %d", e0, e1, m0, m1)
		}
	}
}
