package chain

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"

	"tidemark/data"
	"tidemark/data/density"
)

var (
	_ density.Sampler    = (*MPSSource)(nil)
	_ density.Enumerable = (*MPSSource)(nil)
)

// mpsEDCases are the N = 12 chains on which the MPS source must reproduce
// the exact diagonalisation of this package (the reference here is the ED
// code's own Lanczos, itself checked against Pfeuty in source_test.go).
var mpsEDCases = []struct {
	name, ham string
	params    []string
	lambda    []float64
	open      bool
}{
	{"Ising open ordered", "-ZZ - h*X", []string{"h"}, []float64{0.5}, true},
	{"Ising open critical", "-ZZ - h*X", []string{"h"}, []float64{1}, true},
	{"Ising periodic ordered", "-ZZ - h*X", []string{"h"}, []float64{0.5}, false},
	{"Ising periodic disordered", "-ZZ - h*X", []string{"h"}, []float64{1.5}, false},
	{"three-site open", "-ZXZ - h*X - J*XX", []string{"h", "J"}, []float64{0.7, 0.4}, true},
	{"three-site periodic", "-ZXZ - h*X - J*XX", []string{"h", "J"}, []float64{0.5, 0.3}, false},
	{"complex open", "-XX - YY - D*XY + D*YX - h*Z", []string{"D", "h"}, []float64{0.5, 0.3}, true},
	{"complex periodic", "-XX - YY - D*XY + D*YX - h*Z", []string{"D", "h"}, []float64{0.5, 0.3}, false},
	{"complex in the even sector", "-ZZ - h*X - g*ZY", []string{"h", "g"}, []float64{0.7, 0.4}, true},
}

// edTight are DMRG settings that make the 12-site MPS exact to rounding:
// the bond cap 64 = 2^6 is the largest bond of any 12-site state and the
// cutoff keeps singular values down to the rounding level.
var edTight = MPSOptions{MaxBond: 64, Cutoff: 1e-20, Tol: 1e-13}

func TestMPSAgainstED(t *testing.T) {
	const n = 12
	for _, c := range mpsEDCases {
		t.Run(c.name, func(t *testing.T) {
			// Z basis: every one of the 2^12 outcome probabilities.
			cfg := Config{Sites: n, Hamiltonian: c.ham, Params: c.params, Open: c.open, Basis: BasisZ}
			ed, err := New(cfg)
			if err != nil {
				t.Fatal(err)
			}
			st, err := ed.GroundState(c.lambda)
			if err != nil {
				t.Fatal(err)
			}
			if st.Gap < 1e-3 {
				t.Fatalf("the ED sector gap %.2g is too small for a unique reference state; pick another point", st.Gap)
			}
			ms, err := NewMPS(cfg, edTight, 3)
			if err != nil {
				t.Fatal(err)
			}
			mst, err := ms.GroundState(c.lambda)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(mst.Energy-st.E0) > 1e-9*math.Abs(st.E0) {
				t.Errorf("energy: MPS %.12f, ED %.12f", mst.Energy, st.E0)
			}
			p, err := ed.Probabilities(c.lambda)
			if err != nil {
				t.Fatal(err)
			}
			xs := make([]uint8, len(p)*n)
			for i := range p {
				for j := 0; j < n; j++ {
					xs[i*n+j] = uint8(i >> j & 1)
				}
			}
			lp := make([]float64, len(p))
			if err := ms.LogProb(lp, xs, c.lambda); err != nil {
				t.Fatal(err)
			}
			worst := 0.0
			for i := range p {
				worst = max(worst, math.Abs(math.Exp(lp[i])-p[i]))
			}
			if worst > 1e-9 {
				t.Errorf("Z basis: probabilities differ by up to %.2e", worst)
			}
			// Random basis: 1,000 outcomes drawn from ED.
			cfg.Basis = BasisRandom
			edr, _ := New(cfg)
			msr, _ := NewMPS(cfg, edTight, 3)
			const m = 1000
			rx := make([]uint8, m*n)
			if err := edr.Sample(rx, m, c.lambda, rand.New(rand.NewPCG(5, 6))); err != nil {
				t.Fatal(err)
			}
			le, lm := make([]float64, m), make([]float64, m)
			if err := edr.LogProb(le, rx, c.lambda); err != nil {
				t.Fatal(err)
			}
			if err := msr.LogProb(lm, rx, c.lambda); err != nil {
				t.Fatal(err)
			}
			// Compare the probabilities of the outcomes given the bases
			// (the (1/3)^N of the bases is common to both).
			bases := float64(n) * math.Log(3)
			worstR := 0.0
			for i := range le {
				worstR = max(worstR, math.Abs(math.Exp(le[i]+bases)-math.Exp(lm[i]+bases)))
			}
			if worstR > 1e-9 {
				t.Errorf("random basis: outcome probabilities differ by up to %.2e", worstR)
			}
			t.Logf("E0 %.10f, bond %d, sweeps %d, sector weight %.3f; worst |Δp| Z %.1e, random %.1e", mst.Energy, mst.Bond, mst.Sweeps, mst.SectorWeight, worst, worstR)
		})
	}
}

// TestMPSSamplingChiSquare draws Z- and X-basis snapshots of a 10-site chain
// by perfect sampling and compares their frequencies with the exact
// probabilities of the ED code (Pearson's chi-square test, common practice;
// bins with fewer than 5 expected counts are pooled).
func TestMPSSamplingChiSquare(t *testing.T) {
	const n, shots = 10, 40000
	for _, b := range []Basis{BasisZ, BasisX} {
		cfg := Config{Sites: n, Hamiltonian: "-ZZ - h*X", Params: []string{"h"}, Open: true, Basis: b}
		ed, _ := New(cfg)
		ms, err := NewMPS(cfg, MPSOptions{}, 1)
		if err != nil {
			t.Fatal(err)
		}
		lam := []float64{0.8}
		p, err := ed.Probabilities(lam)
		if err != nil {
			t.Fatal(err)
		}
		xs := make([]uint8, shots*n)
		if err := ms.Sample(xs, shots, lam, rand.New(rand.NewPCG(11, 12))); err != nil {
			t.Fatal(err)
		}
		counts := make([]float64, len(p))
		for m := 0; m < shots; m++ {
			idx := 0
			for j := 0; j < n; j++ {
				idx |= int(xs[m*n+j]) << j
			}
			counts[idx]++
		}
		var chi2, poolE, poolO float64
		bins := 0
		for i, q := range p {
			e := q * shots
			if e < 5 {
				poolE += e
				poolO += counts[i]
				continue
			}
			chi2 += (counts[i] - e) * (counts[i] - e) / e
			bins++
		}
		if poolE > 0 {
			chi2 += (poolO - poolE) * (poolO - poolE) / poolE
			bins++
		}
		pv := 1 - distuv.ChiSquared{K: float64(bins - 1)}.CDF(chi2)
		if pv < 1e-3 {
			t.Errorf("basis %s: chi² %.1f with %d bins, p-value %.2g", b, chi2, bins, pv)
		}
		t.Logf("basis %s: chi² %.1f with %d bins, p-value %.3f", b, chi2, bins, pv)
	}
}

// freeFermionCorrelators returns ⟨X_i⟩ and ⟨Z_iZ_{i+1}⟩ of the open chain
// −Σ Z_iZ_{i+1} − h Σ X_i from the Majorana correlation matrix (Lieb,
// Schultz and Mattis, Ann. Phys. 16, 407 (1961); Pfeuty, Ann. Phys. 57, 79
// (1970)); see freeFermionIsing in package mps's tests for the derivation.
func freeFermionCorrelators(t testing.TB, n int, h float64) (x, zz []float64) {
	A := mat.NewDense(2*n, 2*n, nil)
	for j := 0; j < n; j++ {
		A.Set(2*j, 2*j+1, -2*h)
		A.Set(2*j+1, 2*j, 2*h)
		if j+1 < n {
			A.Set(2*j+1, 2*j+2, -2)
			A.Set(2*j+2, 2*j+1, 2)
		}
	}
	var svd mat.SVD
	if !svd.Factorize(A, mat.SVDFull) {
		t.Fatal("SVD failed")
	}
	var u, v, g mat.Dense
	svd.UTo(&u)
	svd.VTo(&v)
	g.Mul(&u, v.T())
	for j := 0; j < n; j++ {
		x = append(x, -g.At(2*j, 2*j+1))
		if j+1 < n {
			zz = append(zz, -g.At(2*j+1, 2*j+2))
		}
	}
	return x, zz
}

// TestMPSSamplesFreeFermions64 checks perfect sampling at N = 64: the sample
// means of every ⟨X_i⟩ (X basis) and ⟨Z_iZ_{i+1}⟩ (Z basis) lie within 4
// standard errors of the free-fermion values.
func TestMPSSamplesFreeFermions64(t *testing.T) {
	const n, shots = 64, 4000
	h := 0.9
	x, zz := freeFermionCorrelators(t, n, h)
	for _, b := range []Basis{BasisX, BasisZ} {
		ms, err := NewMPS(Config{Sites: n, Hamiltonian: "-ZZ - h*X", Params: []string{"h"}, Open: true, Basis: b}, MPSOptions{}, 1)
		if err != nil {
			t.Fatal(err)
		}
		xs := make([]uint8, shots*n)
		if err := ms.Sample(xs, shots, []float64{h}, rand.New(rand.NewPCG(21, uint64(b)))); err != nil {
			t.Fatal(err)
		}
		bad, worst := 0, 0.0
		check := func(i int, f func(row []uint8) float64, want float64) {
			var s, s2 float64
			for m := 0; m < shots; m++ {
				v := f(xs[m*n : (m+1)*n])
				s += v
				s2 += v * v
			}
			mean := s / shots
			se := math.Sqrt((s2/shots - mean*mean) / (shots - 1))
			z := math.Abs(mean-want) / se
			worst = max(worst, z)
			if z > 4 {
				bad++
				t.Errorf("basis %s, index %d: sample mean %.4f ± %.4f, free fermions %.4f", b, i, mean, se, want)
			}
		}
		if b == BasisX {
			for i := 0; i < n; i++ {
				check(i, func(r []uint8) float64 { return spin(r[i]) }, x[i])
			}
		} else {
			for i := 0; i+1 < n; i++ {
				check(i, func(r []uint8) float64 { return spin(r[i]) * spin(r[i+1]) }, zz[i])
			}
		}
		t.Logf("basis %s: largest deviation %.2f standard errors", b, worst)
	}
}

// TestMPSSourceFromMeta rebuilds the source from its meta object through the
// exact registry and checks that it gives the same log-probabilities (the
// rebuild follows the same warm-started runs, so to rounding) and the
// recorded energies.
func TestMPSSourceFromMeta(t *testing.T) {
	cfg := Config{Sites: 20, Hamiltonian: "-ZZ - h*X", Params: []string{"h"}, Open: true, Basis: BasisRandom}
	ms, err := NewMPS(cfg, MPSOptions{MaxBond: 32}, 9)
	if err != nil {
		t.Fatal(err)
	}
	points := [][]float64{{0.6}, {0.9}, {1.2}}
	res, err := SimulateMPS(context.Background(), ms, points, 50, 4, 2, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	ds, err := data.New(len(points)*50, 20, []string{"h"}, 6, []int{20}, ms.Meta(4, "h=0.6:1.2:3", res.Points))
	if err != nil {
		t.Fatal(err)
	}
	meta := ds.Meta
	src, err := density.ReferenceFor(meta)
	if err != nil {
		t.Fatal(err)
	}
	if _, ok := src.(*MPSSource); !ok {
		t.Fatalf("density.ReferenceFor returned %T, expected *MPSSource", src)
	}
	for k, p := range points {
		st, err := src.(*MPSSource).GroundState(p)
		if err != nil {
			t.Fatal(err)
		}
		if st.Energy != res.Points[k].E0 {
			t.Errorf("point %v: rebuilt energy %.15g, recorded %.15g", p, st.Energy, res.Points[k].E0)
		}
		xs := res.States[k*50*20 : (k+1)*50*20]
		a, b := make([]float64, 50), make([]float64, 50)
		if err := ms.LogProb(a, xs, p); err != nil {
			t.Fatal(err)
		}
		if err := src.LogProb(b, xs, p); err != nil {
			t.Fatal(err)
		}
		for i := range a {
			if math.Abs(a[i]-b[i]) > 1e-12 {
				t.Fatalf("point %v row %d: log p %.10f before, %.10f rebuilt", p, i, a[i], b[i])
			}
		}
	}
	if _, err := SourceFromMeta(meta); err == nil {
		t.Error("the ED SourceFromMeta accepted an MPS dataset")
	}
}

func TestNewMPSRejects(t *testing.T) {
	cases := []struct {
		name string
		cfg  Config
	}{
		{"too many sites", Config{Sites: MaxMPSSites + 1, Hamiltonian: "-ZZ - h*X", Params: []string{"h"}}},
		{"axis not in H", Config{Sites: 20, Hamiltonian: "-ZZ - h*X", Params: []string{"h", "g"}}},
		{"sector of a non-commuting H", Config{Sites: 20, Hamiltonian: "-ZZ - h*Z", Params: []string{"h"}, Sector: SectorEven}},
	}
	for _, c := range cases {
		if _, err := NewMPS(c.cfg, MPSOptions{}, 1); err == nil {
			t.Errorf("%s: expected an error", c.name)
		}
	}
}

// TestMPSPeriodicPfeuty checks the periodic MPS path beyond ED sizes: the
// even-sector ground energy of the periodic 24-site transverse-field chain
// against Pfeuty's closed form (Ann. Phys. 57, 79 (1970)) at a gapped field
// in each phase (the ordered one relies on the ∏X projection). Periodic
// chains need larger bonds; the tolerance is 1e-9 relative.
func TestMPSPeriodicPfeuty(t *testing.T) {
	const n = 24
	for _, h := range []float64{0.6, 1.5} {
		ms, err := NewMPS(Config{Sites: n, Hamiltonian: "-ZZ - h*X", Params: []string{"h"}}, MPSOptions{MaxBond: 48}, 1)
		if err != nil {
			t.Fatal(err)
		}
		st, err := ms.GroundState([]float64{h})
		if err != nil {
			t.Fatal(err)
		}
		want := pfeutyE0(n, h)
		if rel := math.Abs(st.Energy-want) / math.Abs(want); rel > 1e-9 {
			t.Errorf("h=%g: MPS energy %.10f, Pfeuty %.10f (relative %.1e)", h, st.Energy, want, rel)
		}
		t.Logf("h=%g: E0 %.10f (Pfeuty %.10f), bond %d, sweeps %d, discarded %.1e, sector weight %.3f", h, st.Energy, want, st.Bond, st.Sweeps, st.MaxDiscarded, st.SectorWeight)
	}
}
