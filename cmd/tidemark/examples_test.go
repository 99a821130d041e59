package main

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/spf13/cobra"
)

// shellFields splits a command line as a POSIX shell would for the
// examples: on blanks, with double-quoted words kept whole; a pipe or a
// comment ends it.
func shellFields(s string) []string {
	var out []string
	var cur strings.Builder
	inWord, quoted := false, false
	for _, r := range s {
		switch {
		case r == '"':
			quoted, inWord = !quoted, true
		case (r == '|' || r == '#') && !quoted:
			if inWord {
				out = append(out, cur.String())
			}
			return out
		case (r == ' ' || r == '\t') && !quoted:
			if inWord {
				out = append(out, cur.String())
				cur.Reset()
				inWord = false
			}
		default:
			cur.WriteRune(r)
			inWord = true
		}
	}
	if inWord {
		out = append(out, cur.String())
	}
	return out
}

// shrink turns an example's arguments into the same command on small data:
// fewer snapshots, sites, epochs, resamples and model samples, and a small
// built-in demo. The files the example reads are the small fixtures.
func shrink(args []string) []string {
	small := map[string]string{"--samples": "20", "--epochs": "2", "--hidden": "16,16", "--bootstrap": "5"}
	out := slices.Clone(args)
	for i := 0; i+1 < len(out); i++ {
		if v, ok := small[out[i]]; ok {
			out[i+1] = v
		}
		if (out[i] == "--size" || out[i] == "--size-y") && out[i+1] > "4" {
			out[i+1] = "4"
		}
		if out[i] == "--sites" {
			out[i+1] = "6"
			if strings.Contains(args[i+1], ",") {
				out[i+1] = "4,6"
			}
		}
		if out[i] == "--size" && strings.Contains(args[i+1], ",") {
			out[i+1] = "4,6"
		}
	}
	switch out[0] {
	case "demo":
		out = append(out, "--size", "8", "--points", "7", "--samples", "200", "--epochs", "4", "--model-samples", "100", "--bootstrap", "10", "--quiet")
	case "train":
		if !slices.Contains(out, "--epochs") {
			out = append(out, "--epochs", "1", "--hidden", "16")
		}
		out = append(out, "--quiet")
	case "scan":
		out = append(out, "--model-samples", "30", "--quiet")
	case "simulate", "score", "check":
		out = append(out, "--quiet")
	case "run":
		// In this process, --parallel would start this test binary for
		// each unit: the units run here (TestRunLocalParallelSlurm runs
		// the built binary in parallel).
		if i := slices.Index(out, "--parallel"); i >= 0 {
			out = slices.Delete(out, i, i+2)
		}
	case "extrapolate":
		// The fixtures' peaks, from a few hundred snapshots of small
		// lattices, cannot determine ν: the fit is run with ν given.
		if !slices.Contains(out, "--nu") {
			out = append(out, "--nu", "1")
		}
	}
	return out
}

// exampleFixtures makes, in dir, small versions of every file the help
// examples read: a 4×4 Ising dataset over T = 1.5…3.5 (film.npz and its
// copies), a model trained on it for one epoch (film.ckpt and copies),
// exact 4×4 samples, the measured 8-site chain of simulate chain's example
// and three text files to import.
func exampleFixtures(t *testing.T, dir string) {
	t.Helper()
	t.Chdir(dir)
	for _, args := range [][]string{
		{"simulate", "ising", "--size", "4", "--grid", "T=1.5:3.5:21", "--samples", "40", "--seed", "1", "--quiet", "-o", "film.npz"},
		{"train", "film.npz", "-o", "film.ckpt", "--hidden", "16", "--epochs", "1", "--quiet"},
		{"simulate", "ising", "--size", "4", "--grid", "T=1:4:4", "--samples", "20", "--exact-samples", "--quiet", "-o", "exact4.npz"},
		// The histogram example reads the dataset of simulate chain's own
		// example, as it is: 11 points × 1000 snapshots of 8 sites.
		{"simulate", "chain", "--sites", "8", "--hamiltonian", "-ZZ - h*X", "--grid", "h=0.5:1.5:11", "--basis", "z", "--open", "--quiet", "-o", "open8.npz"},
	} {
		if out, err := execTidemark(t, args...); err != nil {
			t.Fatalf("fixture %v: %v\n%s", args, err, out)
		}
	}
	// A size series scanned with the exact density, for extrapolate's
	// examples: the folders are named as the examples name them.
	if out, err := execTidemark(t, "simulate", "ising", "--size", "4,6,8,10,12", "--grid", "T=1.6:3.2:17", "--samples", "300", "--seed", "1", "--quiet", "-o", "series.npz"); err != nil {
		t.Fatalf("fixture series: %v\n%s", err, out)
	}
	for i, name := range []string{"scan8", "scan12", "scan16", "scan24", "scan32"} {
		ds := fmt.Sprintf("series-L%d.npz", 4+2*i)
		if out, err := execTidemark(t, "scan", "--data", ds, "--exact", "--indicators", "lbc,pbm,fisher", "--bootstrap", "5", "--quiet", "-o", name); err != nil {
			t.Fatalf("fixture %s: %v\n%s", name, err, out)
		}
		if i < 3 {
			if err := os.CopyFS(string(rune('a'+i)), os.DirFS(name)); err != nil {
				t.Fatal(err)
			}
		}
		if err := os.Remove(ds); err != nil {
			t.Fatal(err)
		}
	}
	copies := map[string]string{"a.ckpt": "film.ckpt", "b.ckpt": "film.ckpt", "film16.ckpt": "film.ckpt", "fresh16.npz": "film.npz", "old-images.npz": "film.npz"}
	for dst, src := range copies {
		b, err := os.ReadFile(src)
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(dst, b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	rows := func(sep string, params []string, n int, vals []string) string {
		var b strings.Builder
		for i, p := range params {
			fields := []string{p}
			for s := 0; s < n; s++ {
				fields = append(fields, vals[(i+s)%len(vals)])
			}
			b.WriteString(strings.Join(fields, sep) + "\n")
		}
		return b.String()
	}
	text := map[string]string{
		"study.toml": "[system]\nkind = \"ising\"\nsizes = [4]\ngrid = \"T=1.5:3.5:5\"\nsamples = 20\n[model]\nepochs = 1\nhidden = [16]\n[scan]\nbootstrap = 5\n",
		"snaps.csv":  rows(",", []string{"1", "1", "2", "2"}, 256, []string{"0", "1"}),
		"chain.txt":  rows(" ", []string{"0.5 1", "0.5 1", "1 1", "1 1"}, 6, []string{"0", "1", "2"}),
		"spins.txt":  rows(" ", []string{"1", "1", "2", "2"}, 64, []string{"-1", "1"}),
	}
	for name, body := range text {
		if err := os.WriteFile(name, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

// TestHelpExamplesRun runs every command's Example block, line by line,
// against small data: the files an example reads are small fixtures of the
// same kind, and its sizes are shrunk (shrink). Each line runs in its own
// folder holding the fixtures except the file it writes.
func TestHelpExamplesRun(t *testing.T) {
	fix := t.TempDir()
	exampleFixtures(t, fix)
	names, err := os.ReadDir(fix)
	if err != nil {
		t.Fatal(err)
	}
	var lines []string
	var walk func(c *cobra.Command)
	walk = func(c *cobra.Command) {
		for _, l := range strings.Split(c.Example, "\n") {
			if l = strings.TrimSpace(l); strings.HasPrefix(l, "tidemark ") && !slices.Contains(lines, l) {
				lines = append(lines, l)
			}
		}
		for _, sub := range c.Commands() {
			walk(sub)
		}
	}
	walk(newRootCmd())
	if len(lines) < 25 {
		t.Fatalf("found only %d example lines", len(lines))
	}
	for i, line := range lines {
		args := shellFields(line)[1:]
		out := ""
		if j := slices.Index(args, "-o"); j >= 0 && j+1 < len(args) {
			out = filepath.Clean(args[j+1])
		}
		dir := filepath.Join(t.TempDir(), fmt.Sprint(i))
		if err := os.MkdirAll(dir, 0o755); err != nil {
			t.Fatal(err)
		}
		for _, e := range names {
			if e.Name() == out {
				continue
			}
			if e.IsDir() {
				if err := os.CopyFS(filepath.Join(dir, e.Name()), os.DirFS(filepath.Join(fix, e.Name()))); err != nil {
					t.Fatal(err)
				}
				continue
			}
			b, err := os.ReadFile(filepath.Join(fix, e.Name()))
			if err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(filepath.Join(dir, e.Name()), b, 0o644); err != nil {
				t.Fatal(err)
			}
		}
		t.Chdir(dir)
		if text, err := execTidemark(t, shrink(args)...); err != nil {
			t.Errorf("%s\n  (run as %q): %v\n%s", line, shrink(args), err, text)
		}
	}
}
