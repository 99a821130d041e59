package main

import (
	"encoding/json"
	"math"
	"path/filepath"
	"testing"

	"tidemark/data/ising"
)

// TestKaufmanEntropyMatchesEnumeration checks the entropy check uses for
// large lattices against exact enumeration of the 4×4 and 4×6 lattices
// (s = ln Z/N + ⟨E⟩/(N T)), which the ising package checks against
// P. D. Beale's density of states (Phys. Rev. Lett. 76, 78 (1996)).
func TestKaufmanEntropyMatchesEnumeration(t *testing.T) {
	for _, tc := range []struct {
		ly, lx int
		c      ising.Couplings
	}{
		{4, 4, ising.Couplings{T: 1.5, Jx: 1, Jy: 1}},
		{4, 4, ising.Couplings{T: 2.269, Jx: 1, Jy: 1}},
		{4, 6, ising.Couplings{T: 3.2, Jx: 1, Jy: 0.5}},
	} {
		e, err := ising.NewEnumeration(ising.Lattice{Ly: tc.ly, Lx: tc.lx})
		if err != nil {
			t.Fatal(err)
		}
		n := float64(tc.ly * tc.lx)
		meanE, _, _ := e.Moments(tc.c)
		want := e.LogZ(tc.c)/n + meanE/n/tc.c.T
		got, ok := kaufmanEntropy(tc.ly, tc.lx, tc.c)
		if !ok || math.Abs(got-want) > 1e-9 {
			t.Errorf("%d×%d %+v: entropy per site %v (ok %v), enumeration %v", tc.ly, tc.lx, tc.c, got, ok, want)
		}
	}
	if _, ok := kaufmanEntropy(4, 4, ising.Couplings{T: 2, Jx: 1, Jy: 1, H: 0.1}); ok {
		t.Error("a field has no Kaufman entropy, but kaufmanEntropy accepted it")
	}
}

// TestCheckLargeIsingUsesKaufman runs check on a 6×6 dataset (36 sites, too
// many to enumerate): it reports NLL − S per point, and a model trained for
// one epoch sits well above the exact entropy.
func TestCheckLargeIsingUsesKaufman(t *testing.T) {
	dir := t.TempDir()
	ds := filepath.Join(dir, "six.npz")
	ck := filepath.Join(dir, "six.ckpt")
	if _, err := execTidemark(t, "simulate", "ising", "--size", "6", "--grid", "T=1.8:3:4", "--samples", "200", "--seed", "3", "--quiet", "-o", ds); err != nil {
		t.Fatal(err)
	}
	if _, err := execTidemark(t, "train", ds, "-o", ck, "--hidden", "32", "--epochs", "1", "--quiet"); err != nil {
		t.Fatal(err)
	}
	out, err := execTidemark(t, "check", ck, "--data", ds, "--json")
	if err != nil {
		t.Fatal(err)
	}
	var rep kaufmanReport
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("%v in %q", err, out)
	}
	if len(rep.Points) != 4 || rep.KLPerSite != nil {
		t.Fatalf("points %d, kl %v; want 4 points and no KL", len(rep.Points), rep.KLPerSite)
	}
	for _, p := range rep.Points {
		s, _ := kaufmanEntropy(6, 6, ising.Couplings{T: p.Params[0], Jx: 1, Jy: 1})
		if p.EntropyPerSite != s || !(p.StdErr > 0) {
			t.Errorf("%s: entropy %v (want %v), std err %v", p.Label, p.EntropyPerSite, s, p.StdErr)
		}
	}
	if rep.MeanNLLMinusS < 0.01 {
		t.Errorf("one epoch of training: mean NLL − S = %v nats per site, expected clearly positive", rep.MeanNLLMinusS)
	}
}
