// Package densitytest checks that a density.Source keeps the contract of
// package density, and holds the fake sources tidemark's tests share.
//
// A source's own test calls Conformance with a few parameter points:
//
//	func TestConformance(t *testing.T) {
//		densitytest.Conformance(t, src, [][]float64{{2.0}, {2.5}})
//	}
package densitytest

import (
	"math"
	"math/rand/v2"
	"testing"

	"tidemark/data/density"
)

// maxNormStates bounds the states Conformance sums over to check the
// normalisation of an enumerable source.
const maxNormStates = 1 << 16

// Conformance checks the density contract of src at the parameter points
// lambdas:
//   - Sites, Alphabet and ParamDim are positive (ParamDim ≥ 0);
//   - LogProb refuses a λ of the wrong length and a snapshot slice of the
//     wrong length with an error (no panic), and gives no NaN and no value
//     above 0 (a probability is at most 1);
//   - an Enumerable source that reports true sums to 1 over all its states
//     (when there are at most 2^16 of them), to 1e-9;
//   - a Sampler draws states in 0..q−1 that it scores finitely, and the same
//     seed draws the same snapshots;
//   - a MatrixSource's matrix agrees with LogProb to 1e-9 relative.
func Conformance(t testing.TB, src density.Source, lambdas [][]float64) {
	t.Helper()
	N, q, d := src.Sites(), src.Alphabet(), src.ParamDim()
	if N < 1 || q < 2 || d < 0 {
		t.Fatalf("conformance: %d sites, alphabet %d, %d parameters; expected N ≥ 1, q ≥ 2, d ≥ 0", N, q, d)
	}
	if len(lambdas) == 0 {
		t.Fatal("conformance: no parameter points to check at")
	}
	xs := make([]uint8, 3*N)
	for i := range xs {
		xs[i] = uint8(i % q)
	}
	dst := make([]float64, 3)
	for _, l := range lambdas {
		if len(l) != d {
			t.Fatalf("conformance: point %v has %d parameters, the source %d", l, len(l), d)
		}
		if err := noPanic(func() error { return src.LogProb(dst, xs, append(append([]float64(nil), l...), 0)) }); err == nil {
			t.Errorf("LogProb at a λ of %d values accepted; the source has %d parameters", d+1, d)
		}
		if err := noPanic(func() error { return src.LogProb(dst, xs[:len(xs)-1], l) }); err == nil {
			t.Errorf("LogProb of %d values for %d snapshots of %d sites accepted", len(xs)-1, len(dst), N)
		}
		if err := src.LogProb(dst, xs, l); err != nil {
			t.Errorf("LogProb at %v: %v", l, err)
			continue
		}
		for m, v := range dst {
			if math.IsNaN(v) || v > 1e-12 {
				t.Errorf("LogProb at %v of row %d: %v, expected a log-probability ≤ 0", l, m, v)
			}
		}
	}
	if density.IsEnumerable(src) {
		checkNormalised(t, src, lambdas)
	}
	if s, ok := src.(density.Sampler); ok {
		checkSampler(t, s, lambdas)
	}
	if ms, ok := src.(density.MatrixSource); ok {
		checkMatrix(t, ms, xs, 3, lambdas)
	}
}

// noPanic runs f and turns a panic into a test-visible nil error: a
// contract violation, since bad input must give an error.
func noPanic(f func() error) (err error) {
	defer func() {
		if r := recover(); r != nil {
			err = nil
		}
	}()
	return f()
}

// checkNormalised sums exp LogProb over all q^N states.
func checkNormalised(t testing.TB, src density.Source, lambdas [][]float64) {
	t.Helper()
	N, q := src.Sites(), src.Alphabet()
	M := 1
	for i := 0; i < N; i++ {
		M *= q
		if M > maxNormStates {
			return
		}
	}
	xs := density.AllStates(q, N, M)
	lp := make([]float64, M)
	for _, l := range lambdas {
		if err := src.LogProb(lp, xs, l); err != nil {
			t.Errorf("LogProb of all %d states at %v: %v", M, l, err)
			continue
		}
		s := 0.0
		for _, v := range lp {
			s += math.Exp(v)
		}
		if math.Abs(s-1) > 1e-9 {
			t.Errorf("at %v the %d states' probabilities sum to %.12g, expected 1", l, M, s)
		}
	}
}

// checkSampler draws twice from the same seed at every point.
func checkSampler(t testing.TB, s density.Sampler, lambdas [][]float64) {
	t.Helper()
	N, q := s.Sites(), s.Alphabet()
	const n = 50
	for k, l := range lambdas {
		a := make([]uint8, n*N)
		b := make([]uint8, n*N)
		if err := s.Sample(a, n, l, rand.New(rand.NewPCG(7, uint64(k)))); err != nil {
			t.Errorf("Sample at %v: %v", l, err)
			continue
		}
		if err := s.Sample(b, n, l, rand.New(rand.NewPCG(7, uint64(k)))); err != nil {
			t.Errorf("Sample at %v: %v", l, err)
			continue
		}
		for i := range a {
			if a[i] != b[i] {
				t.Errorf("Sample at %v: the same seed drew different snapshots (value %d)", l, i)
				break
			}
			if int(a[i]) >= q {
				t.Errorf("Sample at %v: value %d at %d, expected one of 0..%d", l, a[i], i, q-1)
				break
			}
		}
		lp := make([]float64, n)
		if err := s.LogProb(lp, a, l); err != nil {
			t.Errorf("LogProb of its own samples at %v: %v", l, err)
			continue
		}
		for m, v := range lp {
			if math.IsInf(v, 0) || math.IsNaN(v) {
				t.Errorf("sample %d drawn at %v has log-probability %v", m, l, v)
				break
			}
		}
	}
}

// checkMatrix compares LogProbMatrix with LogProb at every point.
func checkMatrix(t testing.TB, ms density.MatrixSource, xs []uint8, n int, lambdas [][]float64) {
	t.Helper()
	out, err := ms.LogProbMatrix(xs, n, lambdas, 1)
	if err != nil {
		t.Errorf("LogProbMatrix: %v", err)
		return
	}
	K := len(lambdas)
	if len(out) != n*K {
		t.Errorf("LogProbMatrix returned %d values for %d snapshots at %d points", len(out), n, K)
		return
	}
	lp := make([]float64, n)
	for k, l := range lambdas {
		if err := ms.LogProb(lp, xs, l); err != nil {
			t.Errorf("LogProb at %v: %v", l, err)
			continue
		}
		for m := 0; m < n; m++ {
			if v := out[m*K+k]; math.Abs(v-lp[m]) > 1e-9*math.Max(1, math.Abs(lp[m])) {
				t.Errorf("LogProbMatrix[%d][%d] = %v, LogProb %v", m, k, v, lp[m])
			}
		}
	}
}
