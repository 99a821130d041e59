package mps

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// freeFermionIsing returns the ground energy, ⟨X_i⟩ and ⟨Z_iZ_{i+1}⟩ of the
// open chain H = −Σ Z_iZ_{i+1} − h Σ X_i from its Majorana form (Lieb,
// Schultz and Mattis, Ann. Phys. 16, 407 (1961); Pfeuty, Ann. Phys. 57, 79
// (1970)). With γ_{2j} = (∏_{k<j} X_k) Z_j and γ_{2j+1} = (∏_{k<j} X_k) Y_j,
// X_j = iγ_{2j}γ_{2j+1} and Z_jZ_{j+1} = iγ_{2j+1}γ_{2j+2}, so
// H = (i/4) Σ A_ab γ_aγ_b with A_{2j,2j+1} = −2h, A_{2j+1,2j+2} = −2 (A
// antisymmetric). With A = UΣVᵀ the ground state has E0 = −¼ Σσ and
// Γ_ab = ⟨iγ_aγ_b⟩ = −(UVᵀ)_ab (the polar factor; gonum's SVD).
func freeFermionIsing(t testing.TB, n int, h float64) (e0 float64, x, zz []float64) {
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
		t.Fatal("SVD of the Majorana matrix failed")
	}
	for _, s := range svd.Values(nil) {
		e0 -= s / 4
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
	return e0, x, zz
}

// local returns ⟨m|term|m⟩.
func local(t testing.TB, m *MPS, term Term) float64 {
	h, err := BuildMPO(m.N, []Term{term})
	if err != nil {
		t.Fatal(err)
	}
	return Expect(m, h)
}

func checkFreeFermion(t *testing.T, n int) {
	for _, h := range []float64{0.5, 1, 1.5} {
		e0, x, zz := freeFermionIsing(t, n, h)
		// The Majorana energy must match the sum of the correlators: a
		// check of the reference's own signs.
		sum := 0.0
		for j := range x {
			sum -= h * x[j]
		}
		for j := range zz {
			sum -= zz[j]
		}
		if math.Abs(sum-e0) > 1e-9*math.Abs(e0) {
			t.Fatalf("reference: E0 %.12f but −Σ h⟨X⟩ − Σ⟨ZZ⟩ = %.12f", e0, sum)
		}
		mpo, _ := BuildMPO(n, isingTerms(n, h, true))
		m, res, err := GroundState(context.Background(), mpo, nil, Options{MaxBond: 64}, rand.New(rand.NewPCG(7, uint64(n))))
		if err != nil {
			t.Fatal(err)
		}
		if rel := math.Abs(res.Energy-e0) / math.Abs(e0); rel > 1e-8 {
			t.Errorf("N=%d h=%g: DMRG E0 %.12f, free fermions %.12f (relative %.1e)", n, h, res.Energy, e0, rel)
		}
		worst := 0.0
		for j := 0; j < n; j++ {
			worst = max(worst, math.Abs(local(t, m, Term{1, []int{j}, "X"})-x[j]))
			if j+1 < n {
				worst = max(worst, math.Abs(local(t, m, Term{1, []int{j, j + 1}, "ZZ"})-zz[j]))
			}
		}
		if worst > 1e-6 {
			t.Errorf("N=%d h=%g: ⟨X_i⟩, ⟨Z_iZ_i+1⟩ differ from free fermions by up to %.2e", n, h, worst)
		}
		t.Logf("N=%d h=%g: E0 %.10f (ref %.10f), sweeps %d, bond %d, discarded %.1e, worst local %.1e", n, h, res.Energy, e0, res.Sweeps, res.Bond, res.MaxDiscarded, worst)
	}
}

// TestIsingOpenChainFreeFermions checks DMRG on the open transverse-field
// Ising chain of 64 sites against the exact free-fermion solution (Pfeuty,
// Ann. Phys. 57, 79 (1970)): energy to 1e-8 relative, every ⟨X_i⟩ and
// ⟨Z_iZ_{i+1}⟩ to 1e-6.
func TestIsingOpenChainFreeFermions(t *testing.T) { checkFreeFermion(t, 64) }

// TestFlipSectorOrderedChain checks the ∏X projection on the ordered open
// chain, where DMRG's state is a symmetry-broken one: the projection has
// ⟨∏X⟩ = 1, the same energy (the doublet's splitting, of order h^N, is far
// below the tolerance; Pfeuty, Ann. Phys. 57, 79 (1970)), and the
// free-fermion ⟨X_i⟩, which do not see the symmetry breaking.
func TestFlipSectorOrderedChain(t *testing.T) {
	const n, h = 40, 0.5
	mpo, _ := BuildMPO(n, isingTerms(n, h, true))
	m, res, err := GroundState(context.Background(), mpo, nil, Options{MaxBond: 32}, rand.New(rand.NewPCG(3, 3)))
	if err != nil {
		t.Fatal(err)
	}
	f, w, disc := m.FlipSector(1, 64, 1e-12)
	if p := Overlap(f, flipped(f)); math.Abs(p-1) > 1e-10 {
		t.Errorf("⟨∏X⟩ of the even projection is %.12f, expected 1", p)
	}
	if e := Expect(f, mpo); math.Abs(e-res.Energy) > 1e-9*math.Abs(e) {
		t.Errorf("projected energy %.12f, DMRG %.12f", e, res.Energy)
	}
	_, x, _ := freeFermionIsing(t, n, h)
	for j := 0; j < n; j += 7 {
		if v := local(t, f, Term{1, []int{j}, "X"}); math.Abs(v-x[j]) > 1e-6 {
			t.Errorf("⟨X_%d⟩ %.8f, free fermions %.8f", j, v, x[j])
		}
	}
	t.Logf("DMRG bond %d, weight in the even sector %.4f, projected bond %d, discarded %.1e", res.Bond, w, f.MaxBond(), disc)
}

// TestFlipSectorComplexOrdered is TestFlipSectorOrderedChain for a complex
// Hamiltonian that commutes with ∏X (−ZZ − hX − gZY, embedded with an
// ancilla): the projection must act on the chain and leave the ancilla
// alone, giving ⟨∏X⟩ = 1 at the DMRG energy.
func TestFlipSectorComplexOrdered(t *testing.T) {
	const n, h, g = 40, 0.5, 0.2
	terms := isingTerms(n, h, true)
	for i := 0; i+1 < n; i++ {
		terms = append(terms, Term{-g, []int{i, i + 1}, "ZY"})
	}
	mpo, err := BuildMPO(n, terms)
	if err != nil {
		t.Fatal(err)
	}
	m, res, err := GroundState(context.Background(), mpo, nil, Options{MaxBond: 32}, rand.New(rand.NewPCG(3, 4)))
	if err != nil {
		t.Fatal(err)
	}
	f, w, _ := m.FlipSector(1, 64, 1e-12)
	if p := Overlap(f, flipped(f)); math.Abs(p-1) > 1e-10 {
		t.Errorf("⟨∏X⟩ of the even projection is %.12f, expected 1", p)
	}
	if e := Expect(f, mpo); math.Abs(e-res.Energy) > 1e-9*math.Abs(e) {
		t.Errorf("projected energy %.12f, DMRG %.12f", e, res.Energy)
	}
	t.Logf("weight in the even sector %.4f, bond %d → %d", w, res.Bond, f.MaxBond())
}
