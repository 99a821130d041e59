package gemm

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/gonum"
)

// gemmFunc is the signature of Dgemm and Sgemm.
type gemmFunc[T float32 | float64] func(tA, tB blas.Transpose, m, n, k int, alpha T, a []T, lda int, b []T, ldb int, beta T, c []T, ldc int)

// shape is one product: op(A) m×k, op(B) k×n, with pad extra entries per
// row of every matrix (strides larger than the width).
type shape struct{ m, n, k, pad int }

// shapes covers the tile sizes (6×16, 6×8) and their edges: dimensions of
// 1, primes, non-multiples of 6, 8 and 16, k = 0 and k beyond one block
// of 256; the last ones are the shapes tidemark multiplies (blocks of 64
// columns, chunks of 128 rows).
var shapes = []shape{
	{1, 1, 1, 0}, {1, 17, 5, 0}, {7, 1, 3, 2}, {5, 5, 0, 0}, {6, 16, 1, 0},
	{6, 8, 4, 1}, {12, 32, 9, 3}, {13, 17, 11, 0}, {2, 3, 300, 1}, {29, 31, 37, 5},
	{61, 59, 2, 0}, {97, 89, 263, 7}, {128, 64, 130, 0}, {300, 41, 19, 1},
	{37, 300, 7, 0}, {257, 263, 269, 3},
}

// unit roundoff of T: 2⁻²⁴ for float32, 2⁻⁵³ for float64.
func unit[T float32 | float64]() float64 {
	var x T
	if _, ok := any(x).(float32); ok {
		return 0x1p-24
	}
	return 0x1p-53
}

func fill[T float32 | float64](rng *rand.Rand, n int) []T {
	v := make([]T, n)
	for i := range v {
		v[i] = T(2*rng.Float64() - 1)
	}
	return v
}

// checkCase multiplies with got and with gonum's ref on the same inputs
// and compares every entry of C, including the padding between rows,
// which neither may touch.
//
// Tolerance: both results are floating-point sums of the same k products
// plus the beta term, in different orders and with or without fused
// multiply-adds. Each is within γ·(|α|·Σₚ|a_ip||b_pj| + |β||c_ij|) of the
// exact value with γ = (k+2)·u/(1−(k+2)·u) (the standard bound for a dot
// product of length k, Higham, Accuracy and Stability of Numerical
// Algorithms, 2nd ed., SIAM 2002, §3.1, plus one rounding each for the
// alpha and beta terms), so they differ by at most twice that.
func checkCase[T float32 | float64](t *testing.T, name string, got, ref gemmFunc[T], tA, tB blas.Transpose, s shape, alpha, beta T, seed uint64) {
	t.Helper()
	rng := rand.New(rand.NewPCG(seed, uint64(s.m*1000003+s.n*1009+s.k)))
	m, n, k := s.m, s.n, s.k
	ar, ac := m, k
	if tA == blas.Trans {
		ar, ac = k, m
	}
	br, bc := k, n
	if tB == blas.Trans {
		br, bc = n, k
	}
	lda, ldb, ldc := max(1, ac)+s.pad, max(1, bc)+s.pad, max(1, n)+s.pad
	a := fill[T](rng, max(0, (ar-1)*lda+ac))
	b := fill[T](rng, max(0, (br-1)*ldb+bc))
	c0 := fill[T](rng, (m-1)*ldc+n)
	if beta == 0 {
		// C must not be read: NaNs in it are overwritten.
		for i := range c0 {
			c0[i] = T(math.NaN())
		}
	}
	// The padding between rows holds a mark that must survive.
	const mark = 12345
	for i := range m {
		for j := n; j < ldc && i*ldc+j < len(c0); j++ {
			c0[i*ldc+j] = mark
		}
	}
	cg := append([]T(nil), c0...)
	cr := append([]T(nil), c0...)
	got(tA, tB, m, n, k, alpha, a, lda, b, ldb, beta, cg, ldc)
	ref(tA, tB, m, n, k, alpha, a, lda, b, ldb, beta, cr, ldc)
	opA := func(i, p int) float64 {
		if tA == blas.Trans {
			return float64(a[p*lda+i])
		}
		return float64(a[i*lda+p])
	}
	opB := func(p, j int) float64 {
		if tB == blas.Trans {
			return float64(b[j*ldb+p])
		}
		return float64(b[p*ldb+j])
	}
	g := float64(k+2) * unit[T]()
	g = 2 * g / (1 - g)
	bad := 0
	for i := range m {
		for j := range ldc {
			idx := i*ldc + j
			if idx >= len(c0) {
				break
			}
			if j >= n {
				if cg[idx] != mark {
					t.Fatalf("%s: C[%d] in the padding of row %d changed to %v", name, idx, i, cg[idx])
				}
				continue
			}
			bound := 0.0
			for p := range k {
				bound += math.Abs(opA(i, p) * opB(p, j))
			}
			bound *= math.Abs(float64(alpha))
			if beta != 0 {
				bound += math.Abs(float64(beta) * float64(c0[idx]))
			}
			tol := g * bound
			d := math.Abs(float64(cg[idx]) - float64(cr[idx]))
			if !(d <= tol) {
				if bad < 3 {
					t.Errorf("%s: C[%d,%d] = %v, gonum %v (difference %.3g, allowed %.3g)", name, i, j, cg[idx], cr[idx], d, tol)
				}
				bad++
			}
		}
	}
	if bad > 0 {
		t.Fatalf("%s: %d of %d entries outside the bound", name, bad, m*n)
	}
}

var transposes = []blas.Transpose{blas.NoTrans, blas.Trans}

// runAll checks got against gonum's ref on every shape of at most
// maxWork multiply-adds, every transpose pair, alpha ∈ {0, 1, −0.5} and
// beta ∈ {0, 1, 0.3}; products larger than 10⁶ multiply-adds get only the
// transposes with alpha = −0.5, beta = 0.3, to keep the test fast.
func runAll[T float32 | float64](t *testing.T, got, ref gemmFunc[T], maxWork int) {
	for si, s := range shapes {
		if s.m*s.n*s.k > maxWork {
			continue
		}
		for _, tA := range transposes {
			for _, tB := range transposes {
				for _, alpha := range []T{0, 1, -0.5} {
					for _, beta := range []T{0, 1, 0.3} {
						if s.m*s.n*s.k > 1e6 && (alpha != -0.5 || beta != 0.3) {
							continue
						}
						name := fmt.Sprintf("%dx%dx%d pad %d tA %c tB %c alpha %v beta %v", s.m, s.n, s.k, s.pad, tA, tB, alpha, beta)
						checkCase(t, name, got, ref, tA, tB, s, alpha, beta, uint64(si))
					}
				}
			}
		}
	}
}

func TestDgemmMatchesGonum(t *testing.T) {
	var impl Implementation
	var ref gonum.Implementation
	t.Logf("kernels: %s", Kernels())
	runAll(t, impl.Dgemm, ref.Dgemm, math.MaxInt)
}

func TestSgemmMatchesGonum(t *testing.T) {
	var impl Implementation
	var ref gonum.Implementation
	runAll(t, impl.Sgemm, ref.Sgemm, math.MaxInt)
}

// withConfig runs the driver on cf directly (skipping the small-product
// shortcut), after gonum's argument checks.
func withConfig[T float32 | float64](cf *config[T]) gemmFunc[T] {
	return func(tA, tB blas.Transpose, m, n, k int, alpha T, a []T, lda int, b []T, ldb int, beta T, c []T, ldc int) {
		aT, bT, none := check(tA, tB, m, n, k, len(a), lda, len(b), ldb, len(c), ldc)
		if !none {
			gemm(cf, aT, bT, m, n, k, alpha, a, lda, b, ldb, beta, c, ldc)
		}
	}
}

// TestDriverBlocks runs the driver with tiny cache blocks, so that the
// shapes above cross many kc, mc and nc boundaries, on the plain-Go
// kernel (on every architecture) and on the assembly kernels (where the
// CPU has them).
func TestDriverBlocks(t *testing.T) {
	var ref gonum.Implementation
	type tc struct {
		name string
		s    *config[float32]
		d    *config[float64]
		// maxWork limits the shapes (the plain-Go kernel is slow).
		maxWork int
	}
	cases := []tc{{
		name:    "go kernel",
		s:       &config[float32]{mr: 6, nr: 16, kc: 5, mc: 13, nc: 35, kernel: goKernel[float32](6, 16)},
		d:       &config[float64]{mr: 6, nr: 8, kc: 7, mc: 7, nc: 20, kernel: goKernel[float64](6, 8)},
		maxWork: 300000,
	}}
	ss, ds := asmConfigs()
	for i := range ss {
		s, d := ss[i], ds[i]
		cases = append(cases, tc{
			name:    fmt.Sprintf("asm %dx%d %dx%d", s.mr, s.nr, d.mr, d.nr),
			s:       &config[float32]{mr: s.mr, nr: s.nr, kc: 9, mc: 14, nc: 2*s.nr + 1, kernel: s.kernel},
			d:       &config[float64]{mr: d.mr, nr: d.nr, kc: 3, mc: 19, nc: 2*d.nr + 1, kernel: d.kernel},
			maxWork: 300000,
		})
		if s == s32 {
			// Dgemm and Sgemm run these; the tests above checked them.
			continue
		}
		cases = append(cases, tc{
			name:    fmt.Sprintf("asm %dx%d %dx%d default blocks", s.mr, s.nr, d.mr, d.nr),
			s:       &config[float32]{mr: s.mr, nr: s.nr, kc: s.kc, mc: s.mc, nc: s.nc, kernel: s.kernel},
			d:       &config[float64]{mr: d.mr, nr: d.nr, kc: d.kc, mc: d.mc, nc: d.nc, kernel: d.kernel},
			maxWork: math.MaxInt,
		})
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			runAll(t, withConfig(c.s), ref.Sgemm, c.maxWork)
			runAll(t, withConfig(c.d), ref.Dgemm, c.maxWork)
		})
	}
}

// TestFallback turns the assembly off: Dgemm and Sgemm must then be
// gonum's, bit for bit.
func TestFallback(t *testing.T) {
	saved := useAsm
	useAsm = false
	defer func() { useAsm = saved }()
	var impl Implementation
	var ref gonum.Implementation
	rng := rand.New(rand.NewPCG(3, 0))
	for _, s := range []shape{{97, 89, 263, 7}, {128, 64, 130, 0}} {
		for _, tA := range transposes {
			for _, tB := range transposes {
				a := fill[float64](rng, s.m*s.k)
				b := fill[float64](rng, s.k*s.n)
				lda, ldb := s.k, s.n
				if tA == blas.Trans {
					lda = s.m
				}
				if tB == blas.Trans {
					ldb = s.k
				}
				cg, cr := fill[float64](rng, s.m*s.n), make([]float64, s.m*s.n)
				copy(cr, cg)
				impl.Dgemm(tA, tB, s.m, s.n, s.k, -0.5, a, lda, b, ldb, 0.3, cg, s.n)
				ref.Dgemm(tA, tB, s.m, s.n, s.k, -0.5, a, lda, b, ldb, 0.3, cr, s.n)
				for i := range cg {
					if math.Float64bits(cg[i]) != math.Float64bits(cr[i]) {
						t.Fatalf("%v %c%c: C[%d] = %v, gonum %v", s, tA, tB, i, cg[i], cr[i])
					}
				}
				a32, b32 := fill[float32](rng, s.m*s.k), fill[float32](rng, s.k*s.n)
				c32g := fill[float32](rng, s.m*s.n)
				c32r := append([]float32(nil), c32g...)
				impl.Sgemm(tA, tB, s.m, s.n, s.k, 1, a32, lda, b32, ldb, 1, c32g, s.n)
				ref.Sgemm(tA, tB, s.m, s.n, s.k, 1, a32, lda, b32, ldb, 1, c32r, s.n)
				for i := range c32g {
					if math.Float32bits(c32g[i]) != math.Float32bits(c32r[i]) {
						t.Fatalf("%v %c%c: float32 C[%d] = %v, gonum %v", s, tA, tB, i, c32g[i], c32r[i])
					}
				}
			}
		}
	}
}

// TestPanics checks that bad arguments panic with gonum's message.
func TestPanics(t *testing.T) {
	const n = 10
	a, b, c := make([]float64, n*n), make([]float64, n*n), make([]float64, n*n)
	type args struct {
		name          string
		tA, tB        blas.Transpose
		m, nn, k      int
		lda, ldb, ldc int
		la, lb, lc    int
	}
	cases := []args{
		{"bad tA", 'x', blas.NoTrans, n, n, n, n, n, n, n * n, n * n, n * n},
		{"bad tB", blas.NoTrans, 'y', n, n, n, n, n, n, n * n, n * n, n * n},
		{"m<0", blas.NoTrans, blas.NoTrans, -n, -n, n, n, n, n, n * n, n * n, n * n},
		{"n<0", blas.NoTrans, blas.NoTrans, n, -n, -n, n, n, n, n * n, n * n, n * n},
		{"k<0", blas.NoTrans, blas.NoTrans, -n, n, -n, n, n, n, n * n, n * n, n * n},
		{"lda", blas.NoTrans, blas.NoTrans, n, n, n, n - 1, n, n, n * n, n * n, n * n},
		{"lda T", blas.Trans, blas.NoTrans, n, n, n - 2, n - 1, n, n, n * n, n * n, n * n},
		{"ldb", blas.NoTrans, blas.NoTrans, n, n, n, n, n - 1, n, n * n, n * n, n * n},
		{"ldb T", blas.NoTrans, blas.Trans, n, n, n, n, n - 1, n, n * n, n * n, n * n},
		{"ldc", blas.NoTrans, blas.NoTrans, n, n, n, n, n, n - 1, n * n, n * n, n * n},
		{"short a", blas.NoTrans, blas.NoTrans, n, n, n, n, n, n, n*n - 1, n * n, n * n},
		{"short b", blas.NoTrans, blas.Trans, n, n, n, n, n, n, n * n, n*n - 1, n * n},
		{"short c", blas.Trans, blas.NoTrans, n, n, n, n, n, n, n * n, n * n, n*n - 1},
	}
	catch := func(f func()) (msg any) {
		defer func() { msg = recover() }()
		f()
		return nil
	}
	var impl Implementation
	var ref gonum.Implementation
	for _, c0 := range cases {
		want := catch(func() {
			ref.Dgemm(c0.tA, c0.tB, c0.m, c0.nn, c0.k, 1, a[:c0.la], c0.lda, b[:c0.lb], c0.ldb, 0, c[:c0.lc], c0.ldc)
		})
		if want == nil {
			t.Fatalf("%s: gonum does not panic; the case is wrong", c0.name)
		}
		got := catch(func() {
			impl.Dgemm(c0.tA, c0.tB, c0.m, c0.nn, c0.k, 1, a[:c0.la], c0.lda, b[:c0.lb], c0.ldb, 0, c[:c0.lc], c0.ldc)
		})
		if got != want {
			t.Errorf("%s: Dgemm panics with %v, gonum with %v", c0.name, got, want)
		}
		a32, b32, c32 := make([]float32, c0.la), make([]float32, c0.lb), make([]float32, c0.lc)
		got = catch(func() {
			impl.Sgemm(c0.tA, c0.tB, c0.m, c0.nn, c0.k, 1, a32, c0.lda, b32, c0.ldb, 0, c32, c0.ldc)
		})
		if got != want {
			t.Errorf("%s: Sgemm panics with %v, gonum's Dgemm with %v", c0.name, got, want)
		}
	}
}

// TestNoAllocs checks that a product reuses its pack buffers: after a
// warm-up call, Dgemm and Sgemm allocate nothing (a garbage collection
// may empty the pool once in a while, hence the average below 0.1).
func TestNoAllocs(t *testing.T) {
	if !Accelerated() {
		t.Skip("gonum's own Dgemm and Sgemm run here")
	}
	if raceEnabled {
		t.Skip("the race detector's sync.Pool drops buffers at random")
	}
	var impl Implementation
	const m, n, k = 128, 64, 300
	a, b, c := make([]float64, m*k), make([]float64, k*n), make([]float64, m*n)
	a32, b32, c32 := make([]float32, m*k), make([]float32, k*n), make([]float32, m*n)
	f := func() {
		impl.Dgemm(blas.NoTrans, blas.Trans, m, n, k, 1, a, k, b, k, 0, c, n)
		impl.Sgemm(blas.Trans, blas.NoTrans, m, n, k, 1, a32, m, b32, n, 0.5, c32, n)
	}
	f()
	if avg := testing.AllocsPerRun(50, f); avg > 0.1 {
		t.Errorf("%.2f allocations per pair of products, want 0", avg)
	}
}
