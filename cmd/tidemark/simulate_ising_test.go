package main

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"tidemark/data"
	"tidemark/data/ising"
)

func TestSimulateIsingBadFlags(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "x.npz")
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"small lattice", []string{"--size", "1", "--grid", "T=1:2:3", "--samples", "10"}, "--size"},
		{"small height", []string{"--size", "4", "--size-y", "1", "--grid", "T=1:2:3", "--samples", "10"}, "--size-y"},
		{"few samples", []string{"--size", "4", "--grid", "T=1:2:3", "--samples", "1"}, "--samples"},
		{"zero temperature", []string{"--size", "4", "--grid", "T=0:2:3", "--samples", "10"}, "temperatures above 0"},
		{"negative temperature", []string{"--size", "4", "--grid", "T=-1;2", "--samples", "10"}, "temperatures above 0"},
		{"no temperature", []string{"--size", "4", "--grid", "h=0:1:3", "--samples", "10"}, "--temperature"},
		{"unknown axis", []string{"--size", "4", "--grid", "beta=0.3:0.5:3", "--samples", "10"}, `unknown axis "beta"`},
		{"three axes", []string{"--size", "4", "--grid", "T=1;2,h=0;1,Jx=1;2", "--samples", "10"}, "one or two axes"},
		{"one point", []string{"--size", "4", "--grid", "T=2;", "--samples", "10"}, "--grid"},
		{"exact too big", []string{"--size", "5", "--grid", "T=1:2:3", "--samples", "10", "--exact-samples"}, "at most 24 sites"},
		{"bad grid", []string{"--size", "4", "--grid", "T=1:2", "--samples", "10"}, "--grid"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			args := append([]string{"simulate", "ising", "-o", out, "--quiet"}, tc.args...)
			wantOneLineError(t, args, tc.want, out)
		})
	}
	// run maps the error to exit status 2 (common practice for usage errors).
	if st := run([]string{"simulate", "ising", "--size", "1", "--grid", "T=1:2:3", "--samples", "10", "-o", out}); st != exitUsage {
		t.Errorf("exit status %d, want %d", st, exitUsage)
	}
}

func TestSimulateIsingWritesRebuildableDataset(t *testing.T) {
	dir := t.TempDir()
	for _, exact := range []bool{true, false} {
		out := filepath.Join(dir, "film.npz")
		args := []string{"simulate", "ising", "--size", "4", "--size-y", "3", "--grid", "T=1.5:3.5:3,h=0;0.2", "--jx", "0.8", "--samples", "50", "--seed", "3", "--quiet", "-o", out}
		if exact {
			args = append(args, "--exact-samples")
		}
		if st := run(append(args, "--force")); st != exitOK {
			t.Fatalf("exact=%v: exit status %d", exact, st)
		}
		ds, err := data.Read(out)
		if err != nil {
			t.Fatal(err)
		}
		if ds.M != 6*50 || ds.N != 12 || ds.D != 2 || ds.Meta.Alphabet != 2 || ds.Meta.Lattice[0] != 3 || ds.Meta.Lattice[1] != 4 {
			t.Fatalf("shape M=%d N=%d D=%d meta %+v", ds.M, ds.N, ds.D, ds.Meta)
		}
		sm, err := ising.ParseSourceMeta(ds.Meta)
		if err != nil {
			t.Fatal(err)
		}
		if len(sm.Points) != 6 || sm.ExactSamples != exact || sm.Jx != 0.8 || sm.Grid != "T=1.5:3.5:3,h=0;0.2" {
			t.Errorf("meta.source %+v", sm)
		}
		for _, p := range sm.Points {
			if !exact && (p.SpacingSweeps < 1 || p.BurnIn < ising.ThermSweeps || p.TauEnergy < 0.5) {
				t.Errorf("point %+v lacks its Monte Carlo record", p)
			}
		}
		src, err := ising.SourceFromMeta(ds.Meta)
		if err != nil {
			t.Fatal(err)
		}
		lp := make([]float64, 1)
		if err := src.LogProb(lp, ds.Row(0), ds.ParamRow(0)); err != nil || lp[0] > 0 || math.IsNaN(lp[0]) {
			t.Errorf("log p of row 0 = %v, %v", lp[0], err)
		}
		// Without --force an existing file is kept.
		before, _ := os.ReadFile(out)
		root := newRootCmd()
		root.SetArgs(args)
		root.SetOut(new(strings.Builder))
		if err := root.Execute(); err == nil {
			t.Errorf("overwrite without --force accepted")
		}
		if after, _ := os.ReadFile(out); string(after) != string(before) {
			t.Errorf("file changed by a refused overwrite")
		}
	}
}
