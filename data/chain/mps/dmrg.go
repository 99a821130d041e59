package mps

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack"
	gonumlapack "gonum.org/v1/gonum/lapack/gonum"
)

// Options are the settings of a DMRG run.
type Options struct {
	// MaxBond caps the bond dimension.
	MaxBond int
	// Cutoff is the largest discarded weight Σ s_i² / Σ s² allowed per
	// two-site split (below MaxBond).
	Cutoff float64
	// Tol ends the sweeps once a full sweep (left to right and back)
	// changes the energy by at most Tol·max(1, |E|).
	Tol float64
	// MaxSweeps bounds the number of full sweeps.
	MaxSweeps int
	// MinSweeps is the least number of full sweeps.
	MinSweeps int
	// StartBond is the bond dimension of a random initial state.
	StartBond int
}

// DefaultOptions are the settings used when a field is zero.
var DefaultOptions = Options{MaxBond: 64, Cutoff: 1e-12, Tol: 1e-11, MaxSweeps: 30, MinSweeps: 2, StartBond: 8}

func (o Options) filled() Options {
	d := DefaultOptions
	if o.MaxBond > 0 {
		d.MaxBond = o.MaxBond
	}
	if o.Cutoff > 0 {
		d.Cutoff = o.Cutoff
	}
	if o.Tol > 0 {
		d.Tol = o.Tol
	}
	if o.MaxSweeps > 0 {
		d.MaxSweeps = o.MaxSweeps
	}
	if o.MinSweeps > 0 {
		d.MinSweeps = o.MinSweeps
	}
	if o.StartBond > 0 {
		d.StartBond = o.StartBond
	}
	return d
}

// Result reports a DMRG run.
type Result struct {
	// Energy is the lowest eigenvalue of the last two-site problem.
	Energy float64
	// MaxDiscarded is the largest discarded weight of the last full sweep.
	MaxDiscarded float64
	// Bond is the largest bond dimension reached.
	Bond int
	// Sweeps is the number of full sweeps run.
	Sweeps int
	// Converged reports that the energy change fell below the tolerance.
	Converged bool
}

// ErrNotConverged reports DMRG sweeps that ended at MaxSweeps with the
// energy still changing by more than the tolerance.
var ErrNotConverged = errors.New("DMRG did not converge")

// env is a left or right environment: w blocks of d×d (bra index × ket
// index).
type env struct {
	w, d int
	v    []float64
}

func (e *env) block(a int) []float64 { return e.v[a*e.d*e.d : (a+1)*e.d*e.d] }

// growLeft returns the environment left of site j+1 from the one left of j.
func growLeft(L *env, a []float64, dl, dr int, w *mpoTensor) *env {
	// T[a][l, s', r'] = L[a] · A
	T := make([]float64, L.w*dl*2*dr)
	for x := 0; x < L.w; x++ {
		gemm(false, false, dl, 2*dr, dl, 1, L.block(x), dl, a, 2*dr, 0, T[x*dl*2*dr:], 2*dr)
	}
	out := &env{w: w.wr, d: dr, v: make([]float64, w.wr*dr*dr)}
	U := make([]float64, dl*2*dr)
	sz := dl * 2 * dr
	for b := 0; b < w.wr; b++ {
		for i := range U {
			U[i] = 0
		}
		any := false
		for x := 0; x < w.wl; x++ {
			if !w.nz[x*w.wr+b] {
				continue
			}
			any = true
			addPhysical(U, w.at(x, b), T[x*sz:(x+1)*sz], dl, dr)
		}
		if any {
			gemm(true, false, dr, dr, dl*2, 1, a, dr, U, dr, 0, out.block(b), dr)
		}
	}
	return out
}

// growRight returns the environment right of site j−1 from the one right of
// j.
func growRight(R *env, a []float64, dl, dr int, w *mpoTensor) *env {
	// T[b][l', s', r] = A · R[b]ᵀ
	sz := dl * 2 * dr
	T := make([]float64, R.w*sz)
	for b := 0; b < R.w; b++ {
		gemm(false, true, dl*2, dr, dr, 1, a, dr, R.block(b), dr, 0, T[b*sz:], dr)
	}
	out := &env{w: w.wl, d: dl, v: make([]float64, w.wl*dl*dl)}
	U := make([]float64, sz)
	for x := 0; x < w.wl; x++ {
		for i := range U {
			U[i] = 0
		}
		any := false
		for b := 0; b < w.wr; b++ {
			if !w.nz[x*w.wr+b] {
				continue
			}
			any = true
			addPhysical(U, w.at(x, b), T[b*sz:(b+1)*sz], dl, dr)
		}
		if any {
			gemm(false, true, dl, dl, 2*dr, 1, a, 2*dr, U, 2*dr, 0, out.block(x), dl)
		}
	}
	return out
}

// twoSite is the effective Hamiltonian L·W1·W2·R of one bond, applied
// matrix-free.
type twoSite struct {
	L, R   *env
	dl, dr int
	pairs  []wpair
	t1, t2 []float64
}

// wpair is the 4×4 operator Σ_b W1[a,b]⊗W2[b,c] of one (a, c).
type wpair struct {
	a, c int
	op   [16]float64
}

func newTwoSite(L, R *env, w1, w2 *mpoTensor) *twoSite {
	h := &twoSite{L: L, R: R, dl: L.d, dr: R.d}
	for a := 0; a < w1.wl; a++ {
		for c := 0; c < w2.wr; c++ {
			var p wpair
			any := false
			for b := 0; b < w1.wr; b++ {
				if !w1.nz[a*w1.wr+b] || !w2.nz[b*w2.wr+c] {
					continue
				}
				any = true
				o1, o2 := w1.at(a, b), w2.at(b, c)
				for s1 := 0; s1 < 2; s1++ {
					for s2 := 0; s2 < 2; s2++ {
						for t1 := 0; t1 < 2; t1++ {
							for t2 := 0; t2 < 2; t2++ {
								p.op[(s1*2+s2)*4+t1*2+t2] += o1[s1*2+t1] * o2[s2*2+t2]
							}
						}
					}
				}
			}
			if any {
				p.a, p.c = a, c
				h.pairs = append(h.pairs, p)
			}
		}
	}
	sz := h.dl * 4 * h.dr
	h.t1 = make([]float64, L.w*sz)
	h.t2 = make([]float64, R.w*sz)
	return h
}

// apply writes H·x into y (both of length dl·4·dr, index [l][s1 s2][r]).
func (h *twoSite) apply(y, x []float64) {
	dl, dr := h.dl, h.dr
	sz := dl * 4 * dr
	for a := 0; a < h.L.w; a++ {
		gemm(false, false, dl, 4*dr, dl, 1, h.L.block(a), dl, x, 4*dr, 0, h.t1[a*sz:], 4*dr)
	}
	for i := range h.t2 {
		h.t2[i] = 0
	}
	for _, p := range h.pairs {
		src := h.t1[p.a*sz : (p.a+1)*sz]
		dst := h.t2[p.c*sz : (p.c+1)*sz]
		for l := 0; l < dl; l++ {
			for s := 0; s < 4; s++ {
				d := dst[(l*4+s)*dr : (l*4+s+1)*dr]
				for t := 0; t < 4; t++ {
					c := p.op[s*4+t]
					if c == 0 {
						continue
					}
					sr := src[(l*4+t)*dr : (l*4+t+1)*dr]
					for r := range d {
						d[r] += c * sr[r]
					}
				}
			}
		}
	}
	for i := range y {
		y[i] = 0
	}
	for c := 0; c < h.R.w; c++ {
		gemm(false, true, dl*4, dr, dr, 1, h.t2[c*sz:], dr, h.R.block(c), dr, 1, y, dr)
	}
}

// lanczos returns the lowest eigenpair of h starting from x0 (not
// modified), by Lanczos with full reorthogonalisation (classical
// Gram–Schmidt, twice, on BLAS), restarted from the Ritz vector until
// ‖Hv − Ev‖ ≤ tol·max(1, |E|) or the restarts run out. The tridiagonal
// matrix is diagonalised directly (LAPACK's Dsteqr from gonum).
func lanczos(h *twoSite, x0 []float64, tol float64) (float64, []float64) {
	n := len(x0)
	kmax := min(n, 40)
	v := append([]float64(nil), x0...)
	normalize(v)
	Q := make([]float64, kmax*n) // Lanczos vectors, one per row
	w := make([]float64, n)
	c := make([]float64, kmax)
	var impl gonumlapack.Implementation
	var e float64
	for restart := 0; restart < 20; restart++ {
		copy(Q, v)
		var alpha, beta []float64
		var d, sub, z []float64
		m := 0
		for k := 0; k < kmax; k++ {
			h.apply(w, Q[k*n:(k+1)*n])
			alpha = append(alpha, blas64.Dot(vec(w), vec(Q[k*n:(k+1)*n])))
			// w ← (1 − QQᵀ) w, twice
			qk := blas64.General{Rows: k + 1, Cols: n, Stride: n, Data: Q[:(k+1)*n]}
			for pass := 0; pass < 2; pass++ {
				blas64.Gemv(blas.NoTrans, 1, qk, vec(w), 0, vec(c[:k+1]))
				blas64.Gemv(blas.Trans, -1, qk, vec(c[:k+1]), 1, vec(w))
			}
			bn := blas64.Nrm2(vec(w))
			m = k + 1
			// Diagonalise T every third step (its cost grows as m³ and a
			// Lanczos step on these small blocks is cheap), and at the end.
			if m%3 != 0 && bn >= 1e-14 && k < kmax-1 {
				beta = append(beta, bn)
				row := Q[(k+1)*n : (k+2)*n]
				for i := range w {
					row[i] = w[i] / bn
				}
				continue
			}
			d = append(d[:0], alpha...)
			sub = append(sub[:0], beta...)
			z = make([]float64, m*m)
			work := make([]float64, max(1, 2*m-2))
			if !impl.Dsteqr(lapack.EVTridiag, m, d, sub, z, m, work) {
				break
			}
			// Dsteqr sorts the eigenvalues ascending: column 0 is the lowest.
			res := math.Abs(bn * z[(m-1)*m])
			if res <= tol || bn < 1e-14 || k == kmax-1 {
				break
			}
			beta = append(beta, bn)
			row := Q[(k+1)*n : (k+2)*n]
			for i := range w {
				row[i] = w[i] / bn
			}
		}
		e = d[0]
		nv := make([]float64, n)
		for k := 0; k < m; k++ {
			blas64.Axpy(z[k*m], vec(Q[k*n:(k+1)*n]), vec(nv))
		}
		normalize(nv)
		v = nv
		h.apply(w, v)
		blas64.Axpy(-e, vec(v), vec(w))
		if blas64.Nrm2(vec(w)) <= tol*max(1, math.Abs(e)) || m >= n {
			break
		}
	}
	return e, v
}

// vec views x as a BLAS vector.
func vec(x []float64) blas64.Vector { return blas64.Vector{N: len(x), Inc: 1, Data: x} }

func dotf(a, b []float64) float64 { return blas64.Dot(vec(a), vec(b)) }

func normalize(v []float64) {
	n := math.Sqrt(dotf(v, v))
	for i := range v {
		v[i] /= n
	}
}

// GroundState runs two-site DMRG for the lowest state of h from init (a
// right-canonical state as returned by this package; a random state of
// opt.StartBond drawn from rng when nil). It returns the state, right-
// canonical and normalised, and the run's report; it stops early with ctx's
// error. A run that ends at MaxSweeps without meeting the tolerance returns
// its state and an error wrapping ErrNotConverged.
func GroundState(ctx context.Context, h *MPO, init *MPS, opt Options, rng *rand.Rand) (*MPS, Result, error) {
	opt = opt.filled()
	n := h.N
	var m *MPS
	if init == nil {
		m = Random(n, opt.StartBond, rng)
	} else {
		if init.N != n {
			return nil, Result{}, fmt.Errorf("mps: initial state has %d sites, expected %d", init.N, n)
		}
		m = init.Clone()
	}
	m.Ancilla = h.Ancilla
	// Right environments R[j] = everything right of site j−1 … stored by
	// site: Rs[j] is the environment of sites j..N−1 (Rs[N] = trivial).
	Ls := make([]*env, n+1)
	Rs := make([]*env, n+1)
	Ls[0] = &env{w: 1, d: 1, v: []float64{1}}
	Rs[n] = &env{w: 1, d: 1, v: []float64{1}}
	for j := n - 1; j >= 2; j-- {
		Rs[j] = growRight(Rs[j+1], m.A[j], m.Dims[j], m.Dims[j+1], &h.w[j])
	}
	var res Result
	prev := math.Inf(1)
	tolLanczos := 1e-10
	for sweep := 1; sweep <= opt.MaxSweeps; sweep++ {
		if err := ctx.Err(); err != nil {
			return nil, res, err
		}
		worst := 0.0
		var e float64
		// left to right over bonds (j, j+1), j = 0 … N−2
		for j := 0; j < n-1; j++ {
			var disc float64
			var err error
			e, disc, err = m.optimize(h, Ls[j], Rs[j+2], j, true, opt, tolLanczos)
			if err != nil {
				return nil, res, err
			}
			worst = max(worst, disc)
			Ls[j+1] = growLeft(Ls[j], m.A[j], m.Dims[j], m.Dims[j+1], &h.w[j])
		}
		// right to left, j = N−2 … 0
		for j := n - 2; j >= 0; j-- {
			var disc float64
			var err error
			e, disc, err = m.optimize(h, Ls[j], Rs[j+2], j, false, opt, tolLanczos)
			if err != nil {
				return nil, res, err
			}
			worst = max(worst, disc)
			Rs[j+1] = growRight(Rs[j+2], m.A[j+1], m.Dims[j+1], m.Dims[j+2], &h.w[j+1])
		}
		res.Energy, res.MaxDiscarded, res.Sweeps, res.Bond = e, worst, sweep, m.MaxBond()
		if sweep >= opt.MinSweeps && math.Abs(prev-e) <= opt.Tol*max(1, math.Abs(e)) {
			res.Converged = true
			break
		}
		prev = e
	}
	// Normalise (site 0 holds the norm after the last right-to-left step).
	nrm := math.Sqrt(dotf(m.A[0], m.A[0]))
	for i := range m.A[0] {
		m.A[0][i] /= nrm
	}
	if !res.Converged {
		return m, res, fmt.Errorf("mps: %w after %d sweeps (energy %.12g, last change above %.1e·max(1,|E|))", ErrNotConverged, res.Sweeps, res.Energy, opt.Tol)
	}
	return m, res, nil
}

// optimize solves the two-site problem of bond (j, j+1) and splits it,
// moving the orthogonality centre right (toRight) or left.
func (m *MPS) optimize(h *MPO, L, R *env, j int, toRight bool, opt Options, tol float64) (float64, float64, error) {
	dl, dm, dr := m.Dims[j], m.Dims[j+1], m.Dims[j+2]
	theta := make([]float64, dl*2*2*dr)
	gemm(false, false, dl*2, 2*dr, dm, 1, m.A[j], dm, m.A[j+1], 2*dr, 0, theta, 2*dr)
	ts := newTwoSite(L, R, &h.w[j], &h.w[j+1])
	e, v := lanczos(ts, theta, tol)
	u, s, vt, k, disc, err := svdTrunc(v, dl*2, 2*dr, opt.MaxBond, opt.Cutoff)
	if err != nil {
		return 0, 0, fmt.Errorf("bond %d: %w", j, err)
	}
	nrm := math.Sqrt(dotf(s, s))
	for i := range s {
		s[i] /= nrm
	}
	if toRight {
		for l := 0; l < k; l++ {
			for i := 0; i < 2*dr; i++ {
				vt[l*2*dr+i] *= s[l]
			}
		}
	} else {
		for i := 0; i < dl*2; i++ {
			for l := 0; l < k; l++ {
				u[i*k+l] *= s[l]
			}
		}
	}
	m.A[j], m.A[j+1], m.Dims[j+1] = u, vt, k
	return e, disc, nil
}

// Expect returns ⟨m|h|m⟩ / ⟨m|m⟩.
func Expect(m *MPS, h *MPO) float64 {
	L := &env{w: 1, d: 1, v: []float64{1}}
	for j := 0; j < m.N; j++ {
		L = growLeft(L, m.A[j], m.Dims[j], m.Dims[j+1], &h.w[j])
	}
	return L.v[0] / Overlap(m, m)
}

// addPhysical adds to U[l, s, r] the sum over s' of o[s, s'] · t[l, s', r]:
// one MPO element's 2×2 operator applied to the physical index of a
// dl×2×dr block.
func addPhysical(U []float64, o *op2, t []float64, dl, dr int) {
	for l := 0; l < dl; l++ {
		for s := 0; s < 2; s++ {
			dst := U[(l*2+s)*dr : (l*2+s+1)*dr]
			for sp := 0; sp < 2; sp++ {
				c := o[s*2+sp]
				if c == 0 {
					continue
				}
				src := t[(l*2+sp)*dr : (l*2+sp+1)*dr]
				for r := range dst {
					dst[r] += c * src[r]
				}
			}
		}
	}
}
