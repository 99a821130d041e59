package main

import (
	"encoding/json"
	"math"
	"path/filepath"
	"testing"

	"tidemark/data"
	"tidemark/data/chain"
)

func TestSimulateChainBadFlags(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "x.npz")
	base := func(extra ...string) []string {
		return append([]string{"--hamiltonian", "-ZZ - h*X", "--grid", "h=0.5:1.5:3", "--samples", "10"}, extra...)
	}
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"one site", base("--sites", "1"), "--sites: expected 2 to 16 sites, found 1"},
		{"too many sites", base("--sites", "17", "--solver", "ed"), "--sites: expected 2 to 16 sites, found 17"},
		{"too many MPS sites", base("--sites", "2000"), "--sites: expected 2 to 1024 sites with the MPS solver, found 2000"},
		{"unknown solver", base("--sites", "4", "--solver", "qmc"), `--solver: expected ed, mps or auto, found "qmc"`},
		{"bad cutoff", base("--sites", "20", "--cutoff", "2"), "--cutoff"},
		{"unknown basis", base("--sites", "4", "--basis", "w"), `--basis: expected z, x, y or random, found "w"`},
		{"unknown sector", base("--sites", "4", "--sector", "up"), `--sector: expected even, odd or none, found "up"`},
		{"axis not in H", []string{"--sites", "4", "--hamiltonian", "-ZZ - h*X", "--grid", "h=0:1:3,g=0;1", "--samples", "10"}, `axis "g" does not appear in the Hamiltonian`},
		{"parameter not on grid", []string{"--sites", "4", "--hamiltonian", "-ZZ - h*X - g*Z", "--grid", "h=0:1:3", "--samples", "10"}, `parameter "g" is not a grid axis`},
		{"parse error", []string{"--sites", "4", "--hamiltonian", "-ZZ - h*", "--grid", "h=0:1:3", "--samples", "10"}, "column 9"},
		{"word too long", []string{"--sites", "2", "--hamiltonian", "-ZZZ - h*X", "--grid", "h=0:1:3", "--samples", "10"}, "at most 2 letters"},
		{"sector without symmetry", []string{"--sites", "4", "--hamiltonian", "-ZZ - h*Z", "--grid", "h=0:1:3", "--samples", "10", "--sector", "even"}, "--sector"},
		{"no hamiltonian", []string{"--sites", "4", "--grid", "h=0:1:3"}, "--hamiltonian"},
		{"no grid", []string{"--sites", "4", "--hamiltonian", "-ZZ - h*X"}, "--grid"},
		{"one point", base("--sites", "4", "--grid", "h=1;"), "--grid"},
		{"few samples", base("--sites", "4", "--samples", "1"), "--samples"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			args := append([]string{"simulate", "chain", "-o", out, "--quiet"}, tc.args...)
			wantOneLineError(t, args, tc.want, out)
		})
	}
	if st := run([]string{"simulate", "chain", "--sites", "1", "--hamiltonian", "-ZZ - h*X", "--grid", "h=0:1:3", "-o", out}); st != exitUsage {
		t.Errorf("exit status %d, want %d", st, exitUsage)
	}
}

func TestSimulateChainWritesRebuildableDataset(t *testing.T) {
	dir := t.TempDir()
	for _, basis := range []string{"random", "x"} {
		out := filepath.Join(dir, basis+".npz")
		args := []string{"simulate", "chain", "--sites", "5", "--hamiltonian", "-ZZ - h*X", "--grid", "h=0.5:1.5:3",
			"--basis", basis, "--samples", "40", "--seed", "7", "--open", "--quiet", "-o", out}
		if st := run(args); st != exitOK {
			t.Fatalf("basis %s: exit status %d", basis, st)
		}
		// A second run without --force must refuse and keep the file.
		if st := run(args); st != exitUsage {
			t.Fatalf("basis %s: rerun without --force: exit status %d, want %d", basis, st, exitUsage)
		}
		ds, err := data.Read(out)
		if err != nil {
			t.Fatal(err)
		}
		q := 2
		if basis == "random" {
			q = 6
		}
		if ds.M != 120 || ds.N != 5 || ds.D != 1 || ds.Meta.Alphabet != q || len(ds.Meta.Lattice) != 1 || ds.Meta.Lattice[0] != 5 {
			t.Fatalf("shape M=%d N=%d D=%d alphabet %d lattice %v", ds.M, ds.N, ds.D, ds.Meta.Alphabet, ds.Meta.Lattice)
		}
		var sm chain.SourceMeta
		if err := json.Unmarshal(ds.Meta.Source, &sm); err != nil {
			t.Fatal(err)
		}
		if sm.Generator != "chain" || sm.Boundary != "open" || sm.Sector != "even" || sm.Basis != basis || sm.Seed != 7 || len(sm.Points) != 3 {
			t.Fatalf("meta.source %+v", sm)
		}
		src, err := chain.SourceFromMeta(ds.Meta)
		if err != nil {
			t.Fatal(err)
		}
		// The rebuilt source gives every stored snapshot a finite
		// log-probability and reproduces the recorded energies.
		g := data.NewGrid(ds)
		for k, p := range g.Points {
			st, err := src.GroundState(p)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(st.E0-sm.Points[k].E0) > 1e-12 {
				t.Errorf("point %v: rebuilt E0 %v, recorded %v", p, st.E0, sm.Points[k].E0)
			}
			idx := g.Index[k]
			xs := make([]uint8, 0, len(idx)*ds.N)
			for _, m := range idx {
				xs = append(xs, ds.Row(m)...)
			}
			lp := make([]float64, len(idx))
			if err := src.LogProb(lp, xs, p); err != nil {
				t.Fatal(err)
			}
			for i, v := range lp {
				if math.IsInf(v, 0) || math.IsNaN(v) || v > 0 {
					t.Fatalf("point %v snapshot %d: log p = %v", p, i, v)
				}
			}
		}
	}
}
