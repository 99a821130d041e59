package mps

import (
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"
)

// MPS is a real matrix-product state of a spin-1/2 chain. Unless said
// otherwise, the states this package returns are right-canonical from site 1
// on, with the whole norm (1) in site 0.
type MPS struct {
	// N is the number of sites.
	N int
	// A holds the site tensors, A[j] of shape (Dims[j], 2, Dims[j+1]).
	A [][]float64
	// Dims holds the N+1 bond dimensions, Dims[0] = Dims[N] = 1.
	Dims []int
	// Ancilla reports that site 0 is the ancilla of a complex state (see
	// BuildMPO): the chain's sites are 1…N−1 and its amplitudes are
	// Ψ(0,·) + i·Ψ(1,·).
	Ancilla bool
}

// MaxBond returns the largest bond dimension.
func (m *MPS) MaxBond() int {
	b := 0
	for _, d := range m.Dims {
		b = max(b, d)
	}
	return b
}

// Clone returns a deep copy.
func (m *MPS) Clone() *MPS {
	c := &MPS{N: m.N, A: make([][]float64, m.N), Dims: append([]int(nil), m.Dims...), Ancilla: m.Ancilla}
	for j, a := range m.A {
		c.A[j] = append([]float64(nil), a...)
	}
	return c
}

// Random returns a right-canonical random state of bond dimension at most
// bond, drawn from rng.
func Random(n, bond int, rng *rand.Rand) *MPS {
	m := &MPS{N: n, A: make([][]float64, n), Dims: make([]int, n+1)}
	for j := 0; j <= n; j++ {
		d := 1
		for k := 0; k < min(j, n-j) && d < bond; k++ {
			d *= 2
		}
		m.Dims[j] = min(d, bond)
	}
	for j := 0; j < n; j++ {
		a := make([]float64, m.Dims[j]*2*m.Dims[j+1])
		for i := range a {
			a[i] = rng.NormFloat64()
		}
		m.A[j] = a
	}
	m.rightCanonical(0, 0)
	return m
}

// gemm computes C = alpha·op(A)·op(B) + beta·C on row-major slices.
func gemm(tA, tB bool, m, n, k int, alpha float64, a []float64, lda int, b []float64, ldb int, beta float64, c []float64, ldc int) {
	ta, tb := blas.NoTrans, blas.NoTrans
	ar, ac := m, k
	if tA {
		ta, ar, ac = blas.Trans, k, m
	}
	br, bc := k, n
	if tB {
		tb, br, bc = blas.Trans, n, k
	}
	blas64.Gemm(ta, tb, alpha,
		blas64.General{Rows: ar, Cols: ac, Stride: lda, Data: a},
		blas64.General{Rows: br, Cols: bc, Stride: ldb, Data: b},
		beta, blas64.General{Rows: m, Cols: n, Stride: ldc, Data: c})
}

// svdTrunc returns the truncated thin SVD of the r×c row-major matrix x:
// U (r×k), s (k), Vt (k×c), keeping the fewest singular values whose
// discarded weight Σ_{i≥k} s_i² is at most cutoff·Σ s_i², and at most maxBond
// of them. It returns the discarded weight relative to Σ s_i².
func svdTrunc(x []float64, r, c, maxBond int, cutoff float64) (u, s, vt []float64, k int, disc float64, err error) {
	var svd mat.SVD
	if !svd.Factorize(mat.NewDense(r, c, x), mat.SVDThin) {
		return nil, nil, nil, 0, 0, fmt.Errorf("mps: SVD of a %d×%d matrix did not converge", r, c)
	}
	vals := svd.Values(nil)
	tot := 0.0
	for _, v := range vals {
		tot += v * v
	}
	if tot == 0 || math.IsNaN(tot) {
		return nil, nil, nil, 0, 0, fmt.Errorf("mps: SVD of a %d×%d matrix: expected a nonzero finite matrix, found norm² %v", r, c, tot)
	}
	k = len(vals)
	tail := 0.0
	for k > 1 {
		w := vals[k-1] * vals[k-1]
		if (tail+w) > cutoff*tot && k <= maxBond {
			break
		}
		tail += w
		k--
	}
	var um, vm mat.Dense
	svd.UTo(&um)
	svd.VTo(&vm)
	u = make([]float64, r*k)
	for i := 0; i < r; i++ {
		for l := 0; l < k; l++ {
			u[i*k+l] = um.At(i, l)
		}
	}
	vt = make([]float64, k*c)
	for l := 0; l < k; l++ {
		for i := 0; i < c; i++ {
			vt[l*c+i] = vm.At(i, l)
		}
	}
	s = append([]float64(nil), vals[:k]...)
	return u, s, vt, k, tail / tot, nil
}

// rightCanonical makes sites N−1 … 1 right-canonical by SVDs from the right,
// truncating with maxBond and cutoff when maxBond > 0, and normalises the
// state (site 0 carries a unit norm). It returns the largest discarded
// weight.
func (m *MPS) rightCanonical(maxBond int, cutoff float64) float64 {
	if maxBond <= 0 {
		maxBond = math.MaxInt
		cutoff = 0
	}
	worst := 0.0
	for j := m.N - 1; j >= 1; j-- {
		dl, dr := m.Dims[j], m.Dims[j+1]
		u, s, vt, k, disc, err := svdTrunc(m.A[j], dl, 2*dr, maxBond, cutoff)
		if err != nil {
			panic(err) // a zero state cannot arise from the package's own constructions
		}
		worst = max(worst, disc)
		m.A[j] = vt
		// A[j−1] ← A[j−1]·U·S
		for i := 0; i < dl; i++ {
			for l := 0; l < k; l++ {
				u[i*k+l] *= s[l]
			}
		}
		pl := m.Dims[j-1]
		next := make([]float64, pl*2*k)
		gemm(false, false, pl*2, k, dl, 1, m.A[j-1], dl, u, k, 0, next, k)
		m.A[j-1] = next
		m.Dims[j] = k
	}
	nrm := 0.0
	for _, v := range m.A[0] {
		nrm += v * v
	}
	nrm = math.Sqrt(nrm)
	for i := range m.A[0] {
		m.A[0][i] /= nrm
	}
	return worst
}

// leftCanonical makes sites 0 … N−2 left-canonical by QR-like SVDs without
// truncation (the norm goes to site N−1).
func (m *MPS) leftCanonical() {
	for j := 0; j < m.N-1; j++ {
		dl, dr := m.Dims[j], m.Dims[j+1]
		u, s, vt, k, _, err := svdTrunc(m.A[j], dl*2, dr, math.MaxInt, 0)
		if err != nil {
			panic(err)
		}
		m.A[j] = u
		for l := 0; l < k; l++ {
			for i := 0; i < dr; i++ {
				vt[l*dr+i] *= s[l]
			}
		}
		nr := m.Dims[j+2]
		next := make([]float64, k*2*nr)
		gemm(false, false, k, 2*nr, dr, 1, vt, dr, m.A[j+1], 2*nr, 0, next, 2*nr)
		m.A[j+1] = next
		m.Dims[j+1] = k
	}
}

// Compress truncates m in place to bond dimension maxBond with relative
// discarded weight at most cutoff per bond and leaves it right-canonical and
// normalised; it returns the largest discarded weight.
func (m *MPS) Compress(maxBond int, cutoff float64) float64 {
	m.leftCanonical()
	return m.rightCanonical(maxBond, cutoff)
}

// Overlap returns ⟨a|b⟩.
func Overlap(a, b *MPS) float64 {
	env := []float64{1} // (Dims_a[j] × Dims_b[j])
	for j := 0; j < a.N; j++ {
		al, ar, bl, br := a.Dims[j], a.Dims[j+1], b.Dims[j], b.Dims[j+1]
		// t = env · B  : al × (2·br)
		t := make([]float64, al*2*br)
		gemm(false, false, al, 2*br, bl, 1, env, bl, b.A[j], 2*br, 0, t, 2*br)
		// env' = Aᵀ(reshaped al·2 × ar) · t(al·2 × br)
		next := make([]float64, ar*br)
		gemm(true, false, ar, br, al*2, 1, a.A[j], ar, t, br, 0, next, br)
		env = next
	}
	return env[0]
}

// FlipSector returns the normalised projection (1 ± ∏X)|ψ⟩/‖·‖ of m (sign
// +1 for the even, −1 for the odd sector of the global flip ∏X), compressed
// with maxBond and cutoff, with the weight ‖(1 ± ∏X)ψ/2‖² = (1 ± ⟨∏X⟩)/2
// of m in that sector and the largest discarded weight of the compression.
// With an ancilla, ∏X acts on the chain's sites only.
// The projection is the direct sum of ψ and ∏X·ψ, of twice the bond
// dimension, before the compression.
func (m *MPS) FlipSector(sign float64, maxBond int, cutoff float64) (*MPS, float64, float64) {
	n := m.N
	f := &MPS{N: n, A: make([][]float64, n), Dims: make([]int, n+1), Ancilla: m.Ancilla}
	first := 0
	if m.Ancilla {
		first = 1 // ∏X acts on the chain, not on the ancilla
	}
	f.Dims[0], f.Dims[n] = 1, 1
	for j := 1; j < n; j++ {
		f.Dims[j] = 2 * m.Dims[j]
	}
	for j := 0; j < n; j++ {
		dl, dr := m.Dims[j], m.Dims[j+1]
		fl, fr := f.Dims[j], f.Dims[j+1]
		a := make([]float64, fl*2*fr)
		for l := 0; l < dl; l++ {
			for s := 0; s < 2; s++ {
				for r := 0; r < dr; r++ {
					v := m.A[j][(l*2+s)*dr+r]
					// ψ block
					a[(l*2+s)*fr+r] = v
					// ∏X·ψ block: physical index flipped
					ol, or := l, r
					if j > 0 {
						ol = dl + l
					}
					if j < n-1 {
						or = dr + r
					}
					w := v
					if j == n-1 {
						w *= sign
					}
					fs := 1 - s
					if j < first {
						fs = s
					}
					a[(ol*2+fs)*fr+or] += w
				}
			}
		}
		f.A[j] = a
	}
	flip := Overlap(m, flipped(m))
	weight := (1 + sign*flip) / 2
	disc := f.Compress(maxBond, cutoff)
	return f, weight, disc
}

// flipped returns ∏X·m.
func flipped(m *MPS) *MPS {
	c := m.Clone()
	first := 0
	if m.Ancilla {
		first = 1
	}
	for j := first; j < m.N; j++ {
		dl, dr := m.Dims[j], m.Dims[j+1]
		for l := 0; l < dl; l++ {
			copy(c.A[j][(l*2+1)*dr:(l*2+2)*dr], m.A[j][(l*2)*dr:(l*2+1)*dr])
			copy(c.A[j][(l*2)*dr:(l*2+1)*dr], m.A[j][(l*2+1)*dr:(l*2+2)*dr])
		}
	}
	return c
}

// Dense returns the 2^N amplitudes of m, index Σ_j s_j·2^j with s_j the
// physical index of site j (for tests and small chains only).
func (m *MPS) Dense() []float64 {
	// vec[(s_0..s_j), r]
	vec := append([]float64(nil), m.A[0]...) // 1×2×d1 → (2) × d1
	rows := 2
	for j := 1; j < m.N; j++ {
		dl, dr := m.Dims[j], m.Dims[j+1]
		next := make([]float64, rows*2*dr)
		gemm(false, false, rows, 2*dr, dl, 1, vec, dl, m.A[j], 2*dr, 0, next, 2*dr)
		// next is indexed [(prev)][s_j][r]; reorder to index prev + s_j·rows.
		out := make([]float64, rows*2*dr)
		for p := 0; p < rows; p++ {
			for s := 0; s < 2; s++ {
				copy(out[(p+s*rows)*dr:(p+s*rows+1)*dr], next[(p*2+s)*dr:(p*2+s+1)*dr])
			}
		}
		vec, rows = out, rows*2
	}
	return vec
}
