package studyrun_test

import (
	"fmt"
	"os"
	"path/filepath"

	"tidemark/cmd/internal/studyrun"
)

// ExampleNewPlan shows how a study file becomes units: one per size and
// grid point to simulate, one per size to gather and to scan, one per size
// and ensemble member to train, and the finish.
func ExampleNewPlan() {
	dir, _ := os.MkdirTemp("", "study")
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "study.toml")
	os.WriteFile(path, []byte(`[system]
kind = "ising"
sizes = [8, 12, 16]
grid = "T=2.0:2.6:13"
samples = 500
seed = 7
[model]
ensemble = 2
[scan]
bootstrap = 50
`), 0o644)
	st, err := studyrun.Load(path)
	if err != nil {
		fmt.Println(err)
		return
	}
	p, err := studyrun.NewPlan(st, filepath.Join(dir, "out"))
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, s := range studyrun.Stages {
		units := p.Units[s]
		fmt.Printf("%-8s %2d units, first %s\n", s, len(units), units[0].Name)
	}
	// Output:
	// simulate 39 units, first simulate/L8/p0
	// gather    3 units, first gather/L8
	// train     6 units, first train/L8/m1
	// matrix    3 units, first matrix/L8/b0
	// scan      3 units, first scan/L8
	// finish    1 units, first finish
}
