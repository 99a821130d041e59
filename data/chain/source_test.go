package chain

import (
	"encoding/json"
	"math"
	"math/bits"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"tidemark/data"
	"tidemark/data/density"
)

var (
	_ density.Sampler    = (*Source)(nil)
	_ density.Enumerable = (*Source)(nil)
)

// pfeutyDE0 is dE0/dh of pfeutyE0 (P. Pfeuty, Ann. Phys. 57, 79 (1970),
// differentiated analytically).
func pfeutyDE0(n int, h float64) float64 {
	d := 0.0
	for m := 1; m <= n; m++ {
		k := float64(2*m-1-n) * math.Pi / float64(n)
		d -= (h - math.Cos(k)) / math.Sqrt(1+h*h-2*h*math.Cos(k))
	}
	return d
}

// isingCorrelators returns ⟨X_i⟩ and ⟨Z_i Z_{i+1}⟩ of the periodic
// transverse-field Ising ground state from Pfeuty's energy by the
// Hellmann–Feynman theorem: ⟨X⟩ = −(1/N) dE0/dh, ⟨ZZ⟩ = −(E0 − h dE0/dh)/N.
func isingCorrelators(n int, h float64) (x, zz float64) {
	e, d := pfeutyE0(n, h), pfeutyDE0(n, h)
	return -d / float64(n), -(e - h*d) / float64(n)
}

// siteMeans returns the mean and standard error over snapshots of
// f(row), where f averages a per-site quantity over the chain.
func meanSE(rows []uint8, n int, f func(row []uint8) float64) (mean, se float64) {
	m := len(rows) / n
	var s, s2 float64
	for i := 0; i < m; i++ {
		v := f(rows[i*n : (i+1)*n])
		s += v
		s2 += v * v
	}
	mean = s / float64(m)
	v := s2/float64(m) - mean*mean
	return mean, math.Sqrt(v / float64(m-1))
}

func spin(v uint8) float64 { return 2*float64(v) - 1 } // stored 1 = eigenvalue +1

func TestSamplesReproduceIsingCorrelators(t *testing.T) {
	const n, shots = 8, 20000
	for _, h := range []float64{0.5, 1, 1.5} {
		wantX, wantZZ := isingCorrelators(n, h) // Pfeuty (1970) via Hellmann–Feynman
		for _, b := range []Basis{BasisZ, BasisX} {
			s, err := New(Config{Sites: n, Hamiltonian: "-ZZ - h*X", Params: []string{"h"}, Basis: b})
			if err != nil {
				t.Fatal(err)
			}
			var f func(row []uint8) float64
			want := wantZZ
			if b == BasisZ {
				f = func(r []uint8) float64 {
					a := 0.0
					for i := range r {
						a += spin(r[i]) * spin(r[(i+1)%n])
					}
					return a / n
				}
			} else {
				want = wantX
				f = func(r []uint8) float64 {
					a := 0.0
					for _, v := range r {
						a += spin(v)
					}
					return a / n
				}
			}
			// The exact probabilities give the exact value.
			p, err := s.Probabilities([]float64{h})
			if err != nil {
				t.Fatal(err)
			}
			exact := 0.0
			row := make([]uint8, n)
			for idx, pi := range p {
				for j := range row {
					row[j] = uint8(idx >> j & 1)
				}
				exact += pi * f(row)
			}
			if math.Abs(exact-want) > 1e-8 {
				t.Errorf("h=%v basis %v: exact expectation %.10f, Pfeuty %.10f", h, b, exact, want)
			}
			xs := make([]uint8, shots*n)
			if err := s.Sample(xs, shots, []float64{h}, rand.New(rand.NewPCG(3, uint64(b)))); err != nil {
				t.Fatal(err)
			}
			got, se := meanSE(xs, n, f)
			if math.Abs(got-want) > 4*se {
				t.Errorf("h=%v basis %v: sample mean %.4f ± %.4f, exact %.4f (more than 4 standard errors)", h, b, got, se, want)
			}
		}
	}
}

func TestBasisConventions(t *testing.T) {
	// Product ground states of single-site fields: −P is minimised by the
	// P = +1 eigenstate, which is stored as 1 (common practice: Ising storage).
	tests := []struct {
		text  string
		basis Basis
		want  uint8
	}{
		{"-Z", BasisZ, 1}, {"Z", BasisZ, 0}, {"-X", BasisX, 1}, {"X", BasisX, 0},
		{"-Y", BasisY, 1}, {"Y", BasisY, 0},
	}
	for _, tc := range tests {
		s, err := New(Config{Sites: 3, Hamiltonian: tc.text, Basis: tc.basis, Sector: SectorNone})
		if err != nil {
			t.Fatal(err)
		}
		xs := make([]uint8, 3*50)
		if err := s.Sample(xs, 50, nil, rand.New(rand.NewPCG(1, 1))); err != nil {
			t.Fatal(err)
		}
		for i, v := range xs {
			if v != tc.want {
				t.Fatalf("%s in basis %v: value %d at %d, want %d everywhere", tc.text, tc.basis, v, i, tc.want)
			}
		}
	}
}

// enumerate lists all q^n snapshots, site 0 fastest.
func enumerate(q, n int) []uint8 {
	total := int(math.Pow(float64(q), float64(n)))
	xs := make([]uint8, total*n)
	for i := 0; i < total; i++ {
		v := i
		for j := 0; j < n; j++ {
			xs[i*n+j] = uint8(v % q)
			v /= q
		}
	}
	return xs
}

func TestRandomBasisChiSquare(t *testing.T) {
	const n, shots = 4, 60000
	for _, text := range []string{"-ZZ - h*X", "-XX - YY + 0.3*XY - 0.3*YX - h*Z"} {
		s, err := New(Config{Sites: n, Hamiltonian: text, Params: []string{"h"}, Basis: BasisRandom, Open: true})
		if err != nil {
			t.Fatal(err)
		}
		if !s.Enumerable() || s.Alphabet() != 6 {
			t.Fatalf("Enumerable=%v alphabet=%d, want true 6", s.Enumerable(), s.Alphabet())
		}
		lam := []float64{0.8}
		all := enumerate(6, n)
		lp := make([]float64, len(all)/n)
		if err := s.LogProb(lp, all, lam); err != nil {
			t.Fatal(err)
		}
		sum := 0.0
		for _, v := range lp {
			sum += math.Exp(v)
		}
		if math.Abs(sum-1) > 1e-12 {
			t.Errorf("%s: Σ p over all 6^%d snapshots = %.15f, want 1", text, n, sum)
		}
		xs := make([]uint8, shots*n)
		if err := s.Sample(xs, shots, lam, rand.New(rand.NewPCG(11, 0))); err != nil {
			t.Fatal(err)
		}
		counts := make([]float64, len(lp))
		for m := 0; m < shots; m++ {
			idx := 0
			for j := n - 1; j >= 0; j-- {
				idx = idx*6 + int(xs[m*n+j])
			}
			counts[idx]++
		}
		// Pearson's chi-square with cells of expected count < 5 pooled
		// (common practice); p-value from gonum's distuv.ChiSquared.
		var chi2, poolObs, poolExp float64
		cells := 0
		for i, v := range lp {
			e := shots * math.Exp(v)
			if e < 5 {
				poolObs += counts[i]
				poolExp += e
				continue
			}
			chi2 += (counts[i] - e) * (counts[i] - e) / e
			cells++
		}
		if poolExp > 0 {
			chi2 += (poolObs - poolExp) * (poolObs - poolExp) / poolExp
			cells++
		}
		pval := 1 - distuv.ChiSquared{K: float64(cells - 1)}.CDF(chi2)
		if pval < 1e-3 {
			t.Errorf("%s: chi-square %.1f on %d cells, p = %.2g: frequencies disagree with exact probabilities", text, chi2, cells, pval)
		}
	}
}

func TestRandomBasisMatchesFixed(t *testing.T) {
	// Snapshots whose random bases are all equal have probability (1/3)^N
	// times the fixed-basis probability (two independent code paths).
	const n = 5
	text := "-XX - YY + 0.3*XY - 0.3*YX - h*Z"
	lam := []float64{0.6}
	rs, err := New(Config{Sites: n, Hamiltonian: text, Params: []string{"h"}, Basis: BasisRandom})
	if err != nil {
		t.Fatal(err)
	}
	for bi, b := range []Basis{BasisX, BasisY, BasisZ} {
		fs, err := New(Config{Sites: n, Hamiltonian: text, Params: []string{"h"}, Basis: b})
		if err != nil {
			t.Fatal(err)
		}
		xs := enumerate(2, n)
		fixed := make([]float64, 1<<n)
		if err := fs.LogProb(fixed, xs, lam); err != nil {
			t.Fatal(err)
		}
		for i := range xs {
			xs[i] += uint8(2 * bi)
		}
		random := make([]float64, 1<<n)
		if err := rs.LogProb(random, xs, lam); err != nil {
			t.Fatal(err)
		}
		for i := range fixed {
			if math.Abs(random[i]-fixed[i]-n*math.Log(1.0/3)) > 1e-9 {
				t.Fatalf("basis %v, snapshot %d: random-basis log p %.12f, fixed %.12f + N log(1/3)", b, i, random[i], fixed[i])
			}
		}
	}
}

// fisherZ is the exact Fisher information of Z-basis snapshots with respect
// to h, Σ_x p (∂_h log p)², by central differences of log p.
func fisherZ(t testing.TB, s *Source, h float64) float64 {
	const dh = 1e-4
	p0, err := s.Probabilities([]float64{h})
	if err != nil {
		t.Fatal(err)
	}
	pm, err := s.Probabilities([]float64{h - dh})
	if err != nil {
		t.Fatal(err)
	}
	pp, err := s.Probabilities([]float64{h + dh})
	if err != nil {
		t.Fatal(err)
	}
	f := 0.0
	for i, p := range p0 {
		if p == 0 {
			continue
		}
		d := (math.Log(pp[i]) - math.Log(pm[i])) / (2 * dh)
		f += p * d * d
	}
	return f
}

// fisherPeak scans h and refines the maximum with a parabola.
func fisherPeak(t testing.TB, n int, lo, hi, step float64) float64 {
	s, err := New(Config{Sites: n, Hamiltonian: "-ZZ - h*X", Params: []string{"h"}})
	if err != nil {
		t.Fatal(err)
	}
	var hs, fs []float64
	for h := lo; h <= hi+1e-9; h += step {
		hs = append(hs, h)
		fs = append(fs, fisherZ(t, s, h))
	}
	k := 0
	for i := range fs {
		if fs[i] > fs[k] {
			k = i
		}
	}
	if k == 0 || k == len(fs)-1 {
		t.Fatalf("N=%d: Fisher information maximal at the scan's edge h=%v", n, hs[k])
	}
	a, b, c := fs[k-1], fs[k], fs[k+1]
	return hs[k] + 0.5*(hs[1]-hs[0])*(a-c)/(a-2*b+c)
}

func TestFisherPeakNearCriticalField(t *testing.T) {
	// h_c = 1 for the transverse-field Ising chain (P. Pfeuty, Ann. Phys. 57,
	// 79 (1970)); finite chains peak nearby and approach it with N.
	p8 := fisherPeak(t, 8, 0.5, 1.5, 0.05)
	p12 := fisherPeak(t, 12, 0.5, 1.5, 0.05)
	t.Logf("Fisher peak: N=8 at h=%.4f, N=12 at h=%.4f", p8, p12)
	for _, p := range []float64{p8, p12} {
		if math.Abs(p-1) > 0.25 {
			t.Errorf("Fisher peak at h=%.4f, want within 0.25 of h_c = 1", p)
		}
	}
	if math.Abs(p12-1) >= math.Abs(p8-1) {
		t.Errorf("Fisher peak does not approach h_c = 1: N=8 at %.4f, N=12 at %.4f", p8, p12)
	}
}

func TestXParityExact(t *testing.T) {
	// In the even ∏X sector an odd number of X = −1 outcomes is impossible.
	s, err := New(Config{Sites: 6, Hamiltonian: "-ZZ - h*X", Params: []string{"h"}, Basis: BasisX})
	if err != nil {
		t.Fatal(err)
	}
	p, err := s.Probabilities([]float64{0.7})
	if err != nil {
		t.Fatal(err)
	}
	for idx, v := range p {
		minus := 6 - bits.OnesCount(uint(idx)) // stored 0 = X = −1
		if minus%2 == 1 && v != 0 {
			t.Fatalf("snapshot %06b with %d X=−1 outcomes has p = %g, want 0", idx, minus, v)
		}
	}
}

func TestRegisteredWithExact(t *testing.T) {
	s, err := New(Config{Sites: 4, Hamiltonian: "-ZZ - h*X", Params: []string{"h"}, Basis: BasisY, Open: true})
	if err != nil {
		t.Fatal(err)
	}
	src, err := json.Marshal(s.Meta(1, "h=0:1:2", nil))
	if err != nil {
		t.Fatal(err)
	}
	m := data.Meta{ParamNames: []string{"h"}, Alphabet: 2, Lattice: []int{4}, Source: src}
	got, err := density.ReferenceFor(m)
	if err != nil {
		t.Fatal(err)
	}
	cs, ok := got.(*Source)
	if !ok {
		t.Fatalf("density.ReferenceFor returned %T, want *chain.Source", got)
	}
	if c := cs.Config(); c.Basis != BasisY || !c.Open || c.Sector != SectorEven || c.Sites != 4 {
		t.Errorf("rebuilt config %+v", c)
	}
	for _, bad := range []data.Meta{
		{ParamNames: []string{"h"}, Alphabet: 6, Lattice: []int{4}, Source: src},
		{ParamNames: []string{"h"}, Alphabet: 2, Lattice: []int{2, 2}, Source: src},
		{ParamNames: []string{"g"}, Alphabet: 2, Lattice: []int{4}, Source: src},
	} {
		if _, err := SourceFromMeta(bad); err == nil {
			t.Errorf("SourceFromMeta accepted alphabet %d lattice %v params %v", bad.Alphabet, bad.Lattice, bad.ParamNames)
		}
	}
}
