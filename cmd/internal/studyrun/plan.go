package studyrun

import (
	"errors"
	"fmt"
	"path/filepath"
	"strconv"
	"strings"
	"tidemark/checkpoints"

	"tidemark/data"
)

// Stage names one step of a study; its units are independent of each other
// and depend only on the outputs of earlier stages.
type Stage string

// The stages, in the order they run.
const (
	// StageSimulate draws one grid point of one size (ising), or one size's
	// whole grid (chain, whose solver runs per size).
	StageSimulate Stage = "simulate"
	// StageGather joins one size's points into its dataset (ising only).
	StageGather Stage = "gather"
	// StageTrain trains one ensemble member of one size.
	StageTrain Stage = "train"
	// StageMatrix scores one block of one size's snapshots at every grid
	// point with every ensemble member: the scan's log-likelihood matrix,
	// block by block.
	StageMatrix Stage = "matrix"
	// StageScan scans one size with all its members, from its matrix blocks.
	StageScan Stage = "scan"
	// StageFinish extrapolates and writes the study's summary and page.
	StageFinish Stage = "finish"
)

// Stages lists every stage in order.
var Stages = []Stage{StageSimulate, StageGather, StageTrain, StageMatrix, StageScan, StageFinish}

// Unit is one piece of work.
type Unit struct {
	// Stage and Index name the unit as STAGE:INDEX on the command line.
	Stage Stage
	Index int
	// Name is the unit's stable name ("train/L8/m1"); its seed derives from it.
	Name string
	// Size is the system size (0 for finish); Point the grid point index
	// (simulate, ising); Member the ensemble member (train); Block the
	// block of snapshots [Lo, Hi) (matrix).
	Size, Point, Member int
	Block, Lo, Hi       int
}

// Plan is a study's units, stage by stage.
type Plan struct {
	// Study is the study file's content and Out the output folder.
	Study *Study
	Out   string
	// Points is the number of grid points per size (0 for import).
	Points int
	// Units lists each stage's units in the order of their indices.
	Units map[Stage][]Unit
}

// NewPlan lists the units of st with outputs under out.
func NewPlan(st *Study, out string) (*Plan, error) {
	p := &Plan{Study: st, Out: out, Units: map[Stage][]Unit{}}
	add := func(u Unit) {
		u.Index = len(p.Units[u.Stage])
		p.Units[u.Stage] = append(p.Units[u.Stage], u)
	}
	s := st.System
	if s.Kind != KindImport {
		spec, err := data.ParseGridSpec(s.Grid)
		if err != nil {
			return nil, fmt.Errorf("%s: [system] grid: %w", st.path, err)
		}
		p.Points = len(spec.Points())
	}
	for _, l := range s.Sizes {
		switch s.Kind {
		case KindIsing:
			for k := 0; k < p.Points; k++ {
				add(Unit{Stage: StageSimulate, Name: fmt.Sprintf("simulate/L%d/p%d", l, k), Size: l, Point: k})
			}
			add(Unit{Stage: StageGather, Name: fmt.Sprintf("gather/L%d", l), Size: l})
		case KindChain:
			add(Unit{Stage: StageSimulate, Name: fmt.Sprintf("simulate/L%d", l), Size: l})
		}
	}
	for _, l := range s.Sizes {
		for m := 1; m <= st.Model.Ensemble; m++ {
			add(Unit{Stage: StageTrain, Name: fmt.Sprintf("train/L%d/m%d", l, m), Size: l, Member: m})
		}
	}
	for _, l := range s.Sizes {
		blocks, err := p.blocks(l)
		if err != nil {
			return nil, err
		}
		for b, r := range blocks {
			add(Unit{Stage: StageMatrix, Name: fmt.Sprintf("matrix/L%d/b%d", l, b), Size: l, Block: b, Lo: r[0], Hi: r[1]})
		}
	}
	for _, l := range s.Sizes {
		add(Unit{Stage: StageScan, Name: fmt.Sprintf("scan/L%d", l), Size: l})
	}
	add(Unit{Stage: StageFinish, Name: "finish"})
	return p, nil
}

// Total is the number of units of the plan.
func (p *Plan) Total() int {
	n := 0
	for _, us := range p.Units {
		n += len(us)
	}
	return n
}

// ParseUnits reads a --unit value "STAGE:K" or "STAGE:A-B" (indices from 0,
// B included) and returns the units it names.
func (p *Plan) ParseUnits(spec string) ([]Unit, error) {
	name, rng, ok := strings.Cut(spec, ":")
	units, known := p.Units[Stage(name)]
	if !ok || !known && !isStage(name) {
		return nil, fmt.Errorf("--unit: expected STAGE:K or STAGE:A-B with STAGE one of %s, found %q", stageList(), spec)
	}
	lo, hi, isRange := strings.Cut(rng, "-")
	a, err1 := strconv.Atoi(lo)
	b, err2 := a, error(nil)
	if isRange {
		b, err2 = strconv.Atoi(hi)
	}
	if err1 != nil || err2 != nil || a < 0 || b < a || b >= len(units) {
		return nil, fmt.Errorf("--unit: expected unit indices 0 to %d of stage %s, found %q", len(units)-1, name, rng)
	}
	return units[a : b+1], nil
}

func isStage(s string) bool {
	for _, st := range Stages {
		if string(st) == s {
			return true
		}
	}
	return false
}

func stageList() string {
	var s []string
	for _, st := range Stages {
		s = append(s, string(st))
	}
	return strings.Join(s, ", ")
}

// Paths of a unit's outputs, relative to the output folder.

func pointPath(l, k int) string {
	return filepath.Join("points", fmt.Sprintf("L%d", l), fmt.Sprintf("p%d.npz", k))
}
func dataPath(l int) string { return filepath.Join("data", fmt.Sprintf("L%d.npz", l)) }

// modelPath names member m of size l's ensemble as train --ensemble does
// (models/L8.ckpt is member 1, models/L8.e2.ckpt member 2), so that scan,
// given member 1, reads them all.
func modelPath(l, m int) string {
	return checkpoints.MemberPath(filepath.Join("models", fmt.Sprintf("L%d.ckpt", l)), m)
}
func matrixPath(l, b int) string {
	return filepath.Join("matrices", fmt.Sprintf("L%d", l), fmt.Sprintf("b%d.npz", b))
}
func scanDir(l int) string { return filepath.Join("scans", fmt.Sprintf("L%d", l)) }
func stampPath(name string) string {
	return filepath.Join("stamps", strings.ReplaceAll(name, "/", "_")+".json")
}

const (
	extrapolationDir = "extrapolation"
	summaryFile      = "summary.json"
	reportFile       = "report.html"
)

// datasetOf returns the path of size l's dataset as the units read it: in
// the output folder, or the imported file.
func (p *Plan) datasetOf(l int) string {
	s := p.Study.System
	if s.Kind == KindImport {
		for i, size := range s.Sizes {
			if size == l {
				return p.importPath(s.Datasets[i])
			}
		}
	}
	return filepath.Join(p.Out, dataPath(l))
}

// datasetName returns how records name size l's dataset: its path in the
// output folder, or the imported file as the study file names it.
func (p *Plan) datasetName(l int) string {
	s := p.Study.System
	for i, size := range s.Sizes {
		if size == l && s.Kind == KindImport {
			return s.Datasets[i]
		}
	}
	return dataPath(l)
}

// importPath resolves an imported dataset's path relative to the study file.
func (p *Plan) importPath(path string) string {
	if filepath.IsAbs(path) {
		return path
	}
	return filepath.Join(filepath.Dir(p.Study.path), path)
}

// errLocked is the error of a lock another process holds.
var errLocked = errors.New("in use by another run")

// lockPath is the lock of the output folder a top-level run holds.
const lockPath = ".lock"

// unitLockPath is the lock a unit holds while it runs.
func unitLockPath(name string) string { return stampPath(name) + ".lock" }
