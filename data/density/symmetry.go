package density

import (
	"strings"

	"tidemark/data/textenum"
)

// Symmetry is a symmetry of a distribution over lattice snapshots: a map of
// snapshots that leaves every probability unchanged (training may augment
// its snapshots with it; a Symmetric source declares its own).
type Symmetry string

// The symmetries, in canonical order.
const (
	SymTranslate Symmetry = "translate" // cyclic shifts along every lattice axis (periodic boundaries)
	SymMirror    Symmetry = "mirror"    // reversal of every lattice axis independently
	SymRotate    Symmetry = "rotate"    // rotations by 90° (square 2-D lattices)
	SymFlip      Symmetry = "flip"      // exchanging the two site values (alphabet 2)
)

// Symmetries lists the symmetries in canonical order.
var Symmetries = []Symmetry{SymTranslate, SymMirror, SymRotate, SymFlip}

// String returns the symmetry's name.
func (s Symmetry) String() string { return string(s) }

// MarshalText returns the symmetry's name.
func (s Symmetry) MarshalText() ([]byte, error) { return []byte(s), nil }

// UnmarshalText reads a symmetry's name.
func (s *Symmetry) UnmarshalText(b []byte) error {
	return textenum.Parse(s, b, Symmetries, "symmetry")
}

// JoinSymmetries returns the names of syms separated by sep.
func JoinSymmetries(syms []Symmetry, sep string) string {
	names := make([]string, len(syms))
	for i, s := range syms {
		names[i] = string(s)
	}
	return strings.Join(names, sep)
}

// Symmetric is a Source that declares the symmetries its distribution has
// at every parameter point.
type Symmetric interface {
	Source
	// Symmetries lists the symmetries in canonical order.
	Symmetries() []Symmetry
}
