//go:build ablation

package train

import (
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/floats"

	"tidemark/model"
)

// symModel is the mixture (1/|G|) Σ_g p(g·x|λ) of a model over a group of
// lattice maps with and without the value flip (experiment only).
type symModel struct {
	m     *model.Model
	perms [][]int // source site of every site, one map per group element
	flips []bool
}

// newSymModel wraps m in the mixture over the point group of the L×L
// lattice (rotations and mirrors) and the flip, and over translations too
// when trans is set.
func newSymModel(m *model.Model, L int, trans bool) *symModel {
	s := &symModel{m: m}
	shifts := 1
	if trans {
		shifts = L
	}
	seen := map[string]bool{}
	for dy := range shifts {
		for dx := range shifts {
			for rot := range 4 {
				for _, my := range []bool{false, true} {
					p := make([]int, L*L)
					latticeMap(p, L, L, dy, dx, my, false, rot)
					if k := fmt.Sprint(p); !seen[k] {
						seen[k] = true
						s.perms = append(s.perms, p, p)
						s.flips = append(s.flips, false, true)
					}
				}
			}
		}
	}
	return s
}

func (s *symModel) Sites() int       { return s.m.Sites() }
func (s *symModel) Alphabet() int    { return s.m.Alphabet() }
func (s *symModel) ParamDim() int    { return s.m.ParamDim() }
func (s *symModel) Enumerable() bool { return s.m.Enumerable() }

// apply writes snapshot x mapped through group element g into dst.
func (s *symModel) apply(dst, x []uint8, g int) {
	f := uint8(0)
	if s.flips[g] {
		f = 1
	}
	for i, p := range s.perms[g] {
		dst[i] = x[p] ^ f
	}
}

// mapped returns the snapshot rows of xs mapped through group element g.
func (s *symModel) mapped(xs []uint8, g int) []uint8 {
	N := s.m.Sites()
	out := make([]uint8, len(xs))
	for r := 0; r < len(xs)/N; r++ {
		s.apply(out[r*N:(r+1)*N], xs[r*N:(r+1)*N], g)
	}
	return out
}

// mix writes log((1/|G|) Σ_g exp(acc[g][i])) into out[i].
func mix(out []float64, acc [][]float64) {
	v := make([]float64, len(acc))
	for i := range out {
		for g := range acc {
			v[g] = acc[g][i]
		}
		out[i] = floats.LogSumExp(v) - math.Log(float64(len(acc)))
	}
}

func (s *symModel) LogProb(dst []float64, xs []uint8, lambda []float64) error {
	acc := make([][]float64, len(s.perms))
	for g := range acc {
		acc[g] = make([]float64, len(dst))
		if err := s.m.LogProb(acc[g], s.mapped(xs, g), lambda); err != nil {
			return err
		}
	}
	mix(dst, acc)
	return nil
}

func (s *symModel) LogProbMatrix(xs []uint8, n int, lambdas [][]float64, threads int) ([]float64, error) {
	acc := make([][]float64, len(s.perms))
	for g := range acc {
		o, err := s.m.LogProbMatrix(s.mapped(xs, g), n, lambdas, threads)
		if err != nil {
			return nil, err
		}
		acc[g] = o
	}
	out := make([]float64, n*len(lambdas))
	mix(out, acc)
	return out, nil
}

// Sample draws from the model and maps each snapshot through a uniformly
// drawn group element, which samples the mixture.
func (s *symModel) Sample(dst []uint8, n int, lambda []float64, rng *rand.Rand) error {
	if err := s.m.Sample(dst, n, lambda, rng); err != nil {
		return err
	}
	N := s.m.Sites()
	tmp := make([]uint8, N)
	for r := 0; r < n; r++ {
		copy(tmp, dst[r*N:(r+1)*N])
		s.apply(dst[r*N:(r+1)*N], tmp, rng.IntN(len(s.perms)))
	}
	return nil
}
