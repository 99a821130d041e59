package studyrun

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/indicator/report"
	"tidemark/indicator/study"
)

const blockStudy = `[system]
kind = "ising"
sizes = [6]
grid = "T=1.5:3.5:5"
samples = 30
seed = 3
[model]
ensemble = 2
epochs = 1
hidden = [8]
[scan]
bootstrap = 5
indicators = ["fisher", "local"]
[extrapolate]
enabled = false
`

// TestMatrixBlocks checks that the scan's results do not depend on how its
// log-likelihood matrix was split into units: one block, blocks of 37
// snapshots (not a multiple of the model kernels' row blocks, so kernel
// blocks straddle unit boundaries), and the plain scan that computes the
// matrix itself give the same indicators.csv and summary.json, byte for
// byte; and that the scan did take its matrix from the blocks. Both
// architectures are checked, since each has its own scoring kernel.
func TestMatrixBlocks(t *testing.T) {
	if testing.Short() {
		t.Skip("trains small models")
	}
	for _, arch := range []string{"dense", "conv"} {
		t.Run(arch, func(t *testing.T) {
			testMatrixBlocks(t, strings.Replace(blockStudy, "[model]\n", "[model]\narch = \""+arch+"\"\n", 1))
		})
	}
}

func testMatrixBlocks(t *testing.T, blockStudy string) {
	one, outOne := loadSmall(t, blockStudy)
	if _, err := Run(context.Background(), one, Options{}); err != nil {
		t.Fatal(err)
	}
	outMany := filepath.Join(t.TempDir(), "out")
	if err := os.CopyFS(outMany, os.DirFS(outOne)); err != nil {
		t.Fatal(err)
	}
	st, err := Load(writeStudy(t, strings.Replace(blockStudy, "[scan]\n", "[scan]\nblock = 37\n", 1)))
	if err != nil {
		t.Fatal(err)
	}
	many, err := NewPlan(st, outMany)
	if err != nil {
		t.Fatal(err)
	}
	res, err := Run(context.Background(), many, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var want []string
	for b := 0; b < 5; b++ { // 150 snapshots: 4 blocks of 37 and one of 2
		want = append(want, fmt.Sprintf("matrix/L6/b%d", b))
	}
	// The scan reruns on its new inputs; the finish does not, since the
	// scan's summary.json came out the same and that is all it reads of it.
	want = append(want, "scan/L6")
	if !slices.Equal(res.Ran, want) {
		t.Fatalf("with blocks of 37 the run ran %v, want %v", res.Ran, want)
	}

	// The plain path: the scan computes its own matrix from the models.
	in := filepath.Join(outOne, dataPath(6))
	ds, err := data.Read(in)
	if err != nil {
		t.Fatal(err)
	}
	cfg, err := st.scanConfig(deriveSeed(st.System.Seed, "scan/L6"))
	if err != nil {
		t.Fatal(err)
	}
	member1 := filepath.Join(outOne, modelPath(6, 1))
	plain, err := study.Sources(study.SourceModel, ds, in, []string{member1})
	if err != nil {
		t.Fatal(err)
	}
	var blocks []string
	for b := 0; b < 5; b++ {
		blocks = append(blocks, filepath.Join(outMany, matrixPath(6, b)))
	}
	fromBlocks, bs, _, err := blockSources(ds, member1, blocks)
	if err != nil {
		t.Fatal(err)
	}
	scanTo := func(sources []density.Source) string {
		r, _, err := study.Scan(context.Background(), sources, ds, cfg)
		if err != nil {
			t.Fatal(err)
		}
		dir := filepath.Join(t.TempDir(), "scan")
		if _, err := report.Write(dir, true, r, report.Info{Source: study.SourceModel, Seed: cfg.Seed}); err != nil {
			t.Fatal(err)
		}
		return dir
	}
	plainDir, blockDir := scanTo(plain), scanTo(fromBlocks)
	// Served whole, the blocks were dropped: a second scan asks the models.
	againDir := scanTo(fromBlocks)
	for i, b := range bs {
		if b.hits.Load() == 0 {
			t.Errorf("member %d: the scan never took its matrix from the blocks", i+1)
		}
	}
	for _, c := range []struct{ name, a, b string }{
		{"indicators.csv", filepath.Join(outOne, scanDir(6)), filepath.Join(outMany, scanDir(6))},
		{summaryFile, filepath.Join(outOne, scanDir(6)), filepath.Join(outMany, scanDir(6))},
		{summaryFile, outOne, outMany},
		{"indicators.csv", plainDir, blockDir},
		{"indicators.csv", plainDir, againDir},
		{"indicators.csv", plainDir, filepath.Join(outOne, scanDir(6))},
	} {
		a, err1 := os.ReadFile(filepath.Join(c.a, c.name))
		b, err2 := os.ReadFile(filepath.Join(c.b, c.name))
		if err1 != nil || err2 != nil {
			t.Fatal(err1, err2)
		}
		if !bytes.Equal(a, b) {
			t.Errorf("%s differs between %s and %s", c.name, c.a, c.b)
		}
	}
}
