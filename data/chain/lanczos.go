package chain

import (
	"errors"
	"fmt"
	"math"
	"math/bits"
	"math/cmplx"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"
)

// scalar is the arithmetic of a state vector: real or complex.
type scalar interface{ float64 | complex128 }

func fromComplex[T scalar](c complex128) T {
	var z T
	switch any(z).(type) {
	case float64:
		return any(real(c)).(T)
	default:
		return any(c).(T)
	}
}

func re[T scalar](x T) float64 {
	switch v := any(x).(type) {
	case float64:
		return v
	case complex128:
		return real(v)
	}
	return 0
}

// dot returns ⟨a|b⟩ = Σ conj(a_i) b_i.
func dot[T scalar](a, b []T) T {
	switch a := any(a).(type) {
	case []float64:
		b := any(b).([]float64)
		s := 0.0
		for i, v := range a {
			s += v * b[i]
		}
		return any(s).(T)
	case []complex128:
		b := any(b).([]complex128)
		var sr, si float64
		for i, v := range a {
			w := b[i]
			sr += real(v)*real(w) + imag(v)*imag(w)
			si += real(v)*imag(w) - imag(v)*real(w)
		}
		return any(complex(sr, si)).(T)
	}
	panic("unreachable")
}

func norm[T scalar](a []T) float64 { return math.Sqrt(re(dot(a, a))) }

func axpy[T scalar](alpha T, x, y []T) {
	for i, v := range x {
		y[i] += alpha * v
	}
}

func scale[T scalar](alpha T, x []T) {
	for i := range x {
		x[i] *= alpha
	}
}

// matrix is H at one λ, ready for matrix-free products: a diagonal and the
// off-diagonal Pauli strings grouped by their flip mask x, each string with
// its coefficient including i^{nY}, stored as (c, −c) for the two parities of
// popcount(b&z) so that the product needs no branches.
type matrix[T scalar] struct {
	n      int
	diag   []T
	groupX []uint32 // flip mask of each group
	start  []int    // group g holds terms start[g]..start[g+1]-1
	termZ  []uint32
	termC  [][2]T
}

func ipow(k int) complex128 {
	switch k % 4 {
	case 0:
		return 1
	case 1:
		return 1i
	case 2:
		return -1
	}
	return -1i
}

func buildMatrix[T scalar](op *operator, lambda []float64) *matrix[T] {
	dim := 1 << op.n
	m := &matrix[T]{n: op.n, diag: make([]T, dim)}
	groups := map[uint32]int{}
	type term struct {
		z uint32
		c T
	}
	var byGroup [][]term
	for _, ps := range op.order {
		v := op.value(ps, lambda)
		if v == 0 {
			continue
		}
		c := complex(v, 0) * ipow(ps.nY())
		if ps.x == 0 {
			// Diagonal: (−1)^{popcount(b&z)}; nY = 0 here.
			for b := range m.diag {
				if bits.OnesCount32(uint32(b)&ps.z)&1 == 1 {
					m.diag[b] -= fromComplex[T](c)
				} else {
					m.diag[b] += fromComplex[T](c)
				}
			}
			continue
		}
		g, ok := groups[ps.x]
		if !ok {
			g = len(m.groupX)
			groups[ps.x] = g
			m.groupX = append(m.groupX, ps.x)
			byGroup = append(byGroup, nil)
		}
		byGroup[g] = append(byGroup[g], term{ps.z, fromComplex[T](c)})
	}
	for _, ts := range byGroup {
		m.start = append(m.start, len(m.termZ))
		for _, t := range ts {
			m.termZ = append(m.termZ, t.z)
			m.termC = append(m.termC, [2]T{t.c, -t.c})
		}
	}
	m.start = append(m.start, len(m.termZ))
	return m
}

// apply sets dst = H src in one pass (gather form):
// (Hψ)[a] = d[a]ψ[a] + Σ_t c_t (−1)^{popcount((a⊕x_t)&z_t)} ψ[a⊕x_t].
func (m *matrix[T]) apply(dst, src []T) {
	for a := range dst {
		s := m.diag[a] * src[a]
		for g, x := range m.groupX {
			b := uint32(a) ^ x
			var c T
			for t := m.start[g]; t < m.start[g+1]; t++ {
				c += m.termC[t][bits.OnesCount32(b&m.termZ[t])&1]
			}
			s += c * src[b]
		}
		dst[a] = s
	}
}

// Sector selects an eigenspace of the global spin flip ∏X.
type Sector int

// The sectors: SectorAuto resolves to SectorEven for Hamiltonians that
// commute with ∏X and to SectorNone otherwise.
const (
	SectorAuto Sector = iota
	SectorEven
	SectorOdd
	SectorNone
)

// String returns the sector's name as used on the command line.
func (s Sector) String() string {
	switch s {
	case SectorEven:
		return "even"
	case SectorOdd:
		return "odd"
	case SectorNone:
		return "none"
	}
	return "auto"
}

// ParseSector reads "even", "odd", "none" or "" / "auto".
func ParseSector(s string) (Sector, error) {
	switch s {
	case "", "auto":
		return SectorAuto, nil
	case "even":
		return SectorEven, nil
	case "odd":
		return SectorOdd, nil
	case "none":
		return SectorNone, nil
	}
	return 0, fmt.Errorf("sector: expected even, odd or none, found %q", s)
}

// projector returns the projection onto the ∏X eigenspace of s, in place,
// or nil for SectorNone. ∏X maps amplitude b to b⊕(2^N−1).
func projector[T scalar](n int, s Sector) func([]T) {
	if s != SectorEven && s != SectorOdd {
		return nil
	}
	full := 1<<n - 1
	sign := T(1)
	if s == SectorOdd {
		sign = -1
	}
	return func(v []T) {
		for b := range v {
			c := full ^ b
			if c < b {
				continue
			}
			p := (v[b] + sign*v[c]) / 2
			v[b] = p
			v[c] = sign * p
		}
	}
}

// eigenResult is one converged eigenpair.
type eigenResult[T scalar] struct {
	value    float64
	vector   []T
	residual float64
	matvecs  int
}

// lanczosOptions bounds the solver.
type lanczosOptions struct {
	krylov   int     // Krylov space size per restart
	tol      float64 // required ‖Hψ − Eψ‖
	restarts int     // maximum number of restarts
}

var defaultLanczos = lanczosOptions{krylov: 48, tol: 1e-9, restarts: 400}

// errNoConvergence reports a Lanczos run that did not reach its tolerance.
var errNoConvergence = errors.New("Lanczos did not converge")

// startVector returns a deterministic pseudo-random vector (its stream is
// fixed by stream, never by the caller's seed, so that ground states do not
// depend on the sampling seed).
func startVector[T scalar](dim int, stream uint64) []T {
	rng := rand.New(rand.NewPCG(0x5eed_c4a1, stream))
	v := make([]T, dim)
	var z T
	_, isC := any(z).(complex128)
	for i := range v {
		if isC {
			v[i] = fromComplex[T](complex(rng.NormFloat64(), rng.NormFloat64()))
		} else {
			v[i] = fromComplex[T](complex(rng.NormFloat64(), 0))
		}
	}
	return v
}

// lowest finds the lowest eigenpair of H restricted to the range of project
// (nil: everything) and orthogonal to the locked vectors, by thick-free
// restarted Lanczos with full reorthogonalisation (C. Lanczos, J. Res. Natl.
// Bur. Stand. 45, 255 (1950); restarts from the best Ritz vector).
func lowest[T scalar](h *matrix[T], project func([]T), locked [][]T, start []T, opt lanczosOptions) (eigenResult[T], error) {
	dim := len(start)
	// orth is classical Gram–Schmidt against the locked and Krylov vectors,
	// repeated once when the first pass cancelled most of w (the DGKS
	// criterion: J. W. Daniel, W. B. Gragg, L. Kaufman, G. W. Stewart,
	// Math. Comp. 30, 772 (1976)).
	orth := func(w []T, basis [][]T) {
		for pass := 0; pass < 2; pass++ {
			before := norm(w)
			for _, u := range locked {
				axpy(-dot(u, w), u, w)
			}
			for _, u := range basis {
				axpy(-dot(u, w), u, w)
			}
			if norm(w) > 0.7*before {
				return
			}
		}
	}
	v := append([]T(nil), start...)
	if project != nil {
		project(v)
	}
	orth(v, nil)
	nv := norm(v)
	if nv == 0 {
		return eigenResult[T]{}, fmt.Errorf("chain: start vector vanishes in the chosen sector")
	}
	scale(fromComplex[T](complex(1/nv, 0)), v)
	m := opt.krylov
	if m > dim {
		m = dim
	}
	w := make([]T, dim)
	hv := make([]T, dim)
	res := eigenResult[T]{}
	best := math.Inf(1)
	for restart := 0; restart <= opt.restarts; restart++ {
		basis := [][]T{v}
		var alpha, beta []float64
		for j := 0; j < m; j++ {
			h.apply(w, basis[j])
			res.matvecs++
			if project != nil {
				project(w)
			}
			alpha = append(alpha, re(dot(basis[j], w)))
			orth(w, basis)
			b := norm(w)
			if j == m-1 || b <= 1e-13*math.Max(1, math.Abs(alpha[j])) {
				break
			}
			beta = append(beta, b)
			nw := make([]T, dim)
			copy(nw, w)
			scale(fromComplex[T](complex(1/b, 0)), nw)
			basis = append(basis, nw)
		}
		k := len(alpha)
		tri := mat.NewSymDense(k, nil)
		for i := 0; i < k; i++ {
			tri.SetSym(i, i, alpha[i])
			if i+1 < k {
				tri.SetSym(i, i+1, beta[i])
			}
		}
		var es mat.EigenSym
		if !es.Factorize(tri, true) {
			return res, fmt.Errorf("chain: tridiagonal eigensolver failed")
		}
		var vecs mat.Dense
		es.VectorsTo(&vecs)
		psi := make([]T, dim)
		for i := 0; i < k; i++ {
			axpy(fromComplex[T](complex(vecs.At(i, 0), 0)), basis[i], psi)
		}
		if project != nil {
			project(psi)
		}
		orth(psi, nil)
		scale(fromComplex[T](complex(1/norm(psi), 0)), psi)
		h.apply(hv, psi)
		res.matvecs++
		e := re(dot(psi, hv))
		axpy(fromComplex[T](complex(-e, 0)), psi, hv)
		r := norm(hv)
		if r < best {
			best = r
			res.value, res.vector, res.residual = e, psi, r
		}
		if r <= opt.tol {
			return res, nil
		}
		v = psi
	}
	return res, fmt.Errorf("chain: %w: residual ‖Hψ−Eψ‖ = %.3g after %d restarts, required %.3g", errNoConvergence, best, opt.restarts, opt.tol)
}

// phaseFix multiplies a complex vector by a global phase so that its largest
// amplitude is real and positive (a deterministic gauge); real vectors get
// the sign that makes the largest amplitude positive.
func phaseFix[T scalar](v []T) {
	big, at := -1.0, 0
	for i, x := range v {
		var a float64
		switch x := any(x).(type) {
		case float64:
			a = math.Abs(x)
		case complex128:
			a = cmplx.Abs(x)
		}
		if a > big+1e-12 {
			big, at = a, i
		}
	}
	if big <= 0 {
		return
	}
	switch x := any(v[at]).(type) {
	case float64:
		if x < 0 {
			scale(fromComplex[T](-1), v)
		}
	case complex128:
		scale(fromComplex[T](cmplx.Conj(x)/complex(cmplx.Abs(x), 0)), v)
	}
}
