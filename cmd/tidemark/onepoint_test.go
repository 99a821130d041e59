package main

import (
	"path/filepath"
	"strings"
	"testing"
)

// TestOnePointGrid checks that a dataset at a single parameter point is
// written by simulate and accepted by inspect, score, score --posterior and
// check, while train and scan, which compare points, refuse it with one
// line and exit status 2.
func TestOnePointGrid(t *testing.T) {
	dir := t.TempDir()
	p := func(name string) string { return filepath.Join(dir, name) }
	for _, args := range [][]string{
		{"simulate", "ising", "--size", "3", "--grid", "T=2.3", "--samples", "50", "--exact-samples", "--quiet", "-o", p("one.npz")},
		{"simulate", "chain", "--sites", "4", "--hamiltonian", "-ZZ - h*X", "--grid", "h=1", "--samples", "20", "--quiet", "-o", p("chain1.npz")},
		{"simulate", "ising", "--size", "3", "--grid", "T=1.5:3.5:5", "--samples", "200", "--exact-samples", "--quiet", "-o", p("multi.npz")},
		{"train", p("multi.npz"), "--hidden", "16", "--epochs", "2", "--quiet", "-o", p("m.ckpt")},
		{"inspect", p("one.npz")},
		{"score", p("m.ckpt"), p("one.npz"), "--quiet", "-o", p("s.npz")},
		{"score", p("m.ckpt"), p("one.npz"), "--posterior", "--grid", "T=1.5:3.5:21", "--quiet", "-o", p("post.csv")},
		{"check", p("m.ckpt"), "--data", p("one.npz"), "--quiet"},
	} {
		if out, err := execTidemark(t, args...); err != nil {
			t.Fatalf("%v: %v\n%s", args, err, out)
		}
	}
	for _, args := range [][]string{
		{"train", p("one.npz"), "--quiet", "-o", p("one.ckpt")},
		{"scan", "--data", p("one.npz"), "--exact", "--quiet", "-o", p("scan")},
	} {
		_, err := execTidemark(t, args...)
		if err == nil || !strings.Contains(err.Error(), "at least 2 distinct grid points, found 1") || strings.Contains(err.Error(), "\n") {
			t.Errorf("%v: %v, want one line saying it needs at least 2 grid points", args, err)
		}
		if got := run(args); got != exitUsage {
			t.Errorf("%v: exit status %d, want %d", args, got, exitUsage)
		}
	}
}
