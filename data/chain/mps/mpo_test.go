package mps

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// denseMPO contracts h into its 2^N × 2^N matrix, index Σ_j s_j 2^j.
func denseMPO(h *MPO) *mat.Dense {
	n := h.N
	dim := 1 << n
	out := mat.NewDense(dim, dim, nil)
	for bra := 0; bra < dim; bra++ {
		for ket := 0; ket < dim; ket++ {
			vec := []float64{1}
			for j := 0; j < n; j++ {
				t := &h.w[j]
				s, sp := bra>>j&1, ket>>j&1
				next := make([]float64, t.wr)
				for a := 0; a < t.wl; a++ {
					if vec[a] == 0 {
						continue
					}
					for b := 0; b < t.wr; b++ {
						if t.nz[a*t.wr+b] {
							next[b] += vec[a] * t.at(a, b)[s*2+sp]
						}
					}
				}
				vec = next
			}
			out.Set(bra, ket, vec[0])
		}
	}
	return out
}

// densePauli builds Σ terms directly from the Pauli matrices (Y with its
// complex unit, keeping the real part, which is all of it for real terms).
func densePauli(n int, terms []Term) *mat.Dense {
	r, _ := densePauliParts(n, terms)
	return r
}

// densePauliParts returns the real and imaginary parts of Σ terms.
func densePauliParts(n int, terms []Term) (*mat.Dense, *mat.Dense) {
	dim := 1 << n
	out := mat.NewDense(dim, dim, nil)
	im := mat.NewDense(dim, dim, nil)
	for _, t := range terms {
		for ket := 0; ket < dim; ket++ {
			amp := complex(t.Coef, 0)
			bra := ket
			for k, s := range t.Sites {
				bit := ket >> s & 1
				switch t.Letters[k] {
				case 'X':
					bra ^= 1 << s
				case 'Y':
					bra ^= 1 << s
					if bit == 0 {
						amp *= 1i // Y|↑⟩ = i|↓⟩
					} else {
						amp *= -1i
					}
				case 'Z':
					if bit == 1 {
						amp = -amp
					}
				}
			}
			out.Set(bra, ket, out.At(bra, ket)+real(amp))
			im.Set(bra, ket, im.At(bra, ket)+imag(amp))
		}
	}
	return out, im
}

func TestMPOMatchesPauliSum(t *testing.T) {
	cases := []struct {
		name  string
		n     int
		terms []Term
	}{
		{"Ising periodic", 5, isingTerms(5, 0.7, false)},
		{"three-site and XX, shared suffixes", 6, []Term{
			{-1, []int{0, 1, 2}, "ZXZ"}, {-0.5, []int{1, 2, 3}, "XXZ"}, {0.3, []int{1, 2, 3}, "YZY"},
			{-0.25, []int{4, 5}, "XX"}, {0.4, []int{5, 0, 1}, "ZIX"}, {1.5, []int{2}, "I"}, {0.2, []int{3, 4}, "YY"},
		}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			h, err := BuildMPO(c.n, c.terms)
			if err != nil {
				t.Fatal(err)
			}
			a, b := denseMPO(h), densePauli(c.n, c.terms)
			var d mat.Dense
			d.Sub(a, b)
			if nrm := mat.Norm(&d, math.Inf(1)); nrm > 1e-12 {
				t.Errorf("MPO and direct Pauli sum differ by %g", nrm)
			}
		})
	}
}

// TestComplexMPOEmbedding checks the ancilla embedding of a complex H =
// H_r + iH_i: the MPO's dense matrix, with the ancilla as bit 0, must be
// [[H_r, −H_i], [H_i, H_r]] built directly from the Pauli matrices.
func TestComplexMPOEmbedding(t *testing.T) {
	const n = 4
	terms := []Term{{-1, []int{0, 1}, "XX"}, {-0.7, []int{1, 2}, "YY"}, {0.4, []int{2, 3}, "XY"}, {-0.4, []int{2, 3}, "YX"},
		{0.3, []int{3, 0, 1}, "YYY"}, {-0.5, []int{1}, "Z"}, {0.2, []int{0}, "Y"}}
	h, err := BuildMPO(n, terms)
	if err != nil {
		t.Fatal(err)
	}
	if !h.Ancilla || h.N != n+1 {
		t.Fatalf("expected an ancilla and %d sites, found %v and %d", n+1, h.Ancilla, h.N)
	}
	got := denseMPO(h)
	hr, hi := densePauliParts(n, terms)
	dim := 1 << n
	worst := 0.0
	for x := 0; x < dim; x++ {
		for y := 0; y < dim; y++ {
			// MPO index: ancilla bit 0, chain site j at bit j+1.
			want := [2][2]float64{{hr.At(x, y), -hi.At(x, y)}, {hi.At(x, y), hr.At(x, y)}}
			for a := 0; a < 2; a++ {
				for b := 0; b < 2; b++ {
					worst = max(worst, math.Abs(got.At(x<<1|a, y<<1|b)-want[a][b]))
				}
			}
		}
	}
	if worst > 1e-12 {
		t.Errorf("embedded MPO differs from [[H_r, −H_i], [H_i, H_r]] by %g", worst)
	}
}

// isingTerms is −Σ Z_iZ_{i+1} − h Σ X_i.
func isingTerms(n int, h float64, open bool) []Term {
	var ts []Term
	for i := 0; i < n; i++ {
		if i+1 < n || !open {
			ts = append(ts, Term{-1, []int{i, (i + 1) % n}, "ZZ"})
		}
		ts = append(ts, Term{-h, []int{i}, "X"})
	}
	return ts
}

func TestDMRGSmallAgainstDense(t *testing.T) {
	for _, open := range []bool{true, false} {
		n := 8
		terms := isingTerms(n, 0.9, open)
		h, _ := BuildMPO(n, terms)
		var es mat.EigenSym
		d := densePauli(n, terms)
		sym := mat.NewSymDense(1<<n, nil)
		for i := 0; i < 1<<n; i++ {
			for j := i; j < 1<<n; j++ {
				sym.SetSym(i, j, d.At(i, j))
			}
		}
		es.Factorize(sym, false)
		want := es.Values(nil)[0]
		m, res, err := GroundState(context.Background(), h, nil, Options{MaxBond: 32}, rand.New(rand.NewPCG(1, 1)))
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(res.Energy-want) > 1e-10*math.Abs(want) {
			t.Errorf("open=%v: DMRG energy %.14f, dense %.14f", open, res.Energy, want)
		}
		if e := Expect(m, h); math.Abs(e-want) > 1e-9 {
			t.Errorf("open=%v: ⟨H⟩ %.14f, dense %.14f", open, e, want)
		}
		t.Logf("open=%v sweeps %d bond %d disc %g", open, res.Sweeps, res.Bond, res.MaxDiscarded)
	}
}
