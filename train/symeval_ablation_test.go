//go:build ablation

package train

import (
	"math"
	"math/rand/v2"

	"tidemark/model"
)

// symModel is the mixture (1/|G|) Σ_g p(g·x|λ) of a model over a group of
// lattice maps (experiment only).
type symModel struct {
	m     *model.Model
	perms [][]int
	flips []bool
}

func d4flip(L int, trans bool) ([][]int, []bool) {
	seen := map[string]bool{}
	var ps [][]int
	var fs []bool
	sh := []int{0}
	if trans {
		sh = nil
		for i := 0; i < L; i++ {
			sh = append(sh, i)
		}
	}
	for _, dy := range sh {
		for _, dx := range sh {
			for rot := 0; rot < 4; rot++ {
				for my := 0; my < 2; my++ {
					p := make([]int, L*L)
					for y := 0; y < L; y++ {
						for x := 0; x < L; x++ {
							u, v := y, x
							for range rot {
								u, v = v, L-1-u
							}
							if my == 1 {
								u = L - 1 - u
							}
							p[y*L+x] = ((u+dy)%L)*L + (v+dx)%L
						}
					}
					k := string(func() []byte {
						b := make([]byte, len(p))
						for i, v := range p {
							b[i] = byte(v)
						}
						return b
					}())
					if seen[k] {
						continue
					}
					seen[k] = true
					for _, f := range []bool{false, true} {
						ps = append(ps, p)
						fs = append(fs, f)
					}
				}
			}
		}
	}
	return ps, fs
}

func (s *symModel) Sites() int    { return s.m.Sites() }
func (s *symModel) Alphabet() int { return s.m.Alphabet() }
func (s *symModel) ParamDim() int { return s.m.ParamDim() }
func (s *symModel) Enumerable() bool {
	return s.m.Enumerable()
}

func (s *symModel) mapped(xs []uint8, g int) []uint8 {
	N := s.m.Sites()
	out := make([]uint8, len(xs))
	f := uint8(0)
	if s.flips[g] {
		f = 1
	}
	p := s.perms[g]
	for r := 0; r < len(xs)/N; r++ {
		for i := 0; i < N; i++ {
			out[r*N+i] = xs[r*N+p[i]] ^ f
		}
	}
	return out
}

func (s *symModel) LogProb(dst []float64, xs []uint8, lambda []float64) error {
	G := len(s.perms)
	acc := make([][]float64, G)
	for g := range G {
		acc[g] = make([]float64, len(dst))
		if err := s.m.LogProb(acc[g], s.mapped(xs, g), lambda); err != nil {
			return err
		}
	}
	for i := range dst {
		mx := math.Inf(-1)
		for g := range G {
			mx = math.Max(mx, acc[g][i])
		}
		sum := 0.0
		for g := range G {
			sum += math.Exp(acc[g][i] - mx)
		}
		dst[i] = mx + math.Log(sum/float64(G))
	}
	return nil
}

func (s *symModel) LogProbMatrix(xs []uint8, n int, lambdas [][]float64, threads int) ([]float64, error) {
	G := len(s.perms)
	K := len(lambdas)
	acc := make([][]float64, G)
	for g := range G {
		o, err := s.m.LogProbMatrix(s.mapped(xs, g), n, lambdas, threads)
		if err != nil {
			return nil, err
		}
		acc[g] = o
	}
	out := make([]float64, n*K)
	for i := range out {
		mx := math.Inf(-1)
		for g := range G {
			mx = math.Max(mx, acc[g][i])
		}
		sum := 0.0
		for g := range G {
			sum += math.Exp(acc[g][i] - mx)
		}
		out[i] = mx + math.Log(sum/float64(G))
	}
	return out, nil
}

func (s *symModel) Sample(dst []uint8, n int, lambda []float64, rng *rand.Rand) error {
	if err := s.m.Sample(dst, n, lambda, rng); err != nil {
		return err
	}
	N := s.m.Sites()
	tmp := make([]uint8, N)
	for r := 0; r < n; r++ {
		g := rng.IntN(len(s.perms))
		f := uint8(0)
		if s.flips[g] {
			f = 1
		}
		copy(tmp, dst[r*N:(r+1)*N])
		for i, p := range s.perms[g] {
			dst[r*N+i] = tmp[p] ^ f
		}
	}
	return nil
}
