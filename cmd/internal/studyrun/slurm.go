package studyrun

import (
	"context"
	"fmt"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"

	"tidemark/cmd/internal/textout"
)

// SlurmOptions says how Slurm writes and submits a plan's job arrays.
type SlurmOptions struct {
	// Command runs the study's units with --unit added (see Options.Command).
	Command []string
	// Submit submits the scripts with sbatch; false only writes them.
	Submit bool
	// Log receives the scripts' paths, the job ids and how to follow them.
	Log io.Writer
	// run runs sbatch (tests replace it); nil runs the real command.
	run func(name string, args ...string) ([]byte, error)
}

// taskTarget is how long an array task should last: Slurm starts about one
// task per second, so tasks of a few minutes keep it busy with work.
const taskTarget = 300.0 // seconds

// slurmStage is the script of one stage.
type slurmStage struct {
	stage   Stage
	script  string
	units   int
	perTask int
	tasks   int
}

// Slurm writes one sbatch script per stage that has units into OUT/slurm/
// and, with Submit, submits them as job arrays, each stage depending on the
// one before (afterok), and prints the job ids and the commands to follow
// them.
func (p *Plan) Slurm(ctx context.Context, opt SlurmOptions) error {
	dir := filepath.Join(p.Out, "slurm")
	if err := os.MkdirAll(filepath.Join(dir, "logs"), 0o755); err != nil {
		return err
	}
	var stages []slurmStage
	for _, s := range Stages {
		n := len(p.Units[s])
		if n == 0 {
			continue
		}
		res, cpus, est, mem := p.resources(s)
		per := res.UnitsPerTask
		if per <= 0 {
			per = int(math.Max(1, math.Floor(taskTarget/est)))
		}
		per = min(per, n)
		tasks := (n + per - 1) / per
		limit := res.Time
		if limit == "" {
			limit = minutes(3 * float64(per) * est)
		}
		if res.Mem != "" {
			mem = res.Mem
		}
		ss := slurmStage{stage: s, script: filepath.Join(dir, string(s)+".sh"), units: n, perTask: per, tasks: tasks}
		if err := os.WriteFile(ss.script, []byte(p.script(ss, cpus, mem, limit, opt.Command)), 0o755); err != nil {
			return err
		}
		stages = append(stages, ss)
		fmt.Fprintf(opt.Log, "wrote %s: %d units in %d array tasks (%d per task), %d CPUs, %s, %s\n", ss.script, n, tasks, per, cpus, mem, limit)
	}
	if !opt.Submit {
		fmt.Fprintf(opt.Log, "submit them in order, each after the one before: sbatch --parsable --dependency=afterok:JOBID %s/NEXT.sh\n", dir)
		return nil
	}
	run := opt.run
	if run == nil {
		run = func(name string, args ...string) ([]byte, error) {
			return exec.CommandContext(ctx, name, args...).Output()
		}
	}
	var ids []string
	for _, ss := range stages {
		args := []string{"--parsable"}
		if len(ids) > 0 {
			args = append(args, "--dependency=afterok:"+ids[len(ids)-1])
		}
		b, err := run("sbatch", append(args, ss.script)...)
		if err != nil {
			if ee, ok := err.(*exec.ExitError); ok {
				err = fmt.Errorf("%w: %s", err, strings.TrimSpace(string(ee.Stderr)))
			}
			return fmt.Errorf("run --slurm: sbatch %s: %w (submitted so far: %s)", ss.script, err, strings.Join(ids, ","))
		}
		id, _, _ := strings.Cut(strings.TrimSpace(string(b)), ";")
		ids = append(ids, id)
		fmt.Fprintf(opt.Log, "submitted %s as job %s\n", ss.stage, id)
	}
	all := strings.Join(ids, ",")
	fmt.Fprintf(opt.Log, "follow with: squeue -j %s   (afterwards: sacct -j %s -X -o JobID,JobName,State,Elapsed)\n", all, all)
	fmt.Fprintf(opt.Log, "logs in %s; the study's summary will be %s\n", filepath.Join(dir, "logs"), filepath.Join(p.Out, summaryFile))
	return nil
}

// script is the sbatch script of one stage: a job array whose task t runs
// units t·perTask … (t+1)·perTask − 1 of the stage.
func (p *Plan) script(ss slurmStage, cpus int, mem, limit string, command []string) string {
	sl := p.Study.Slurm
	var b strings.Builder
	b.WriteString("#!/bin/bash\n")
	fmt.Fprintf(&b, "#SBATCH --job-name=tidemark-%s\n", ss.stage)
	fmt.Fprintf(&b, "#SBATCH --array=0-%d\n", ss.tasks-1)
	fmt.Fprintf(&b, "#SBATCH --cpus-per-task=%d\n", cpus)
	fmt.Fprintf(&b, "#SBATCH --mem=%s\n", mem)
	fmt.Fprintf(&b, "#SBATCH --time=%s\n", limit)
	fmt.Fprintf(&b, "#SBATCH --output=%s\n", filepath.Join(abs(p.Out), "slurm", "logs", string(ss.stage)+"-%A_%a.out"))
	if sl.Partition != "" {
		fmt.Fprintf(&b, "#SBATCH --partition=%s\n", sl.Partition)
	}
	if sl.Account != "" {
		fmt.Fprintf(&b, "#SBATCH --account=%s\n", sl.Account)
	}
	for _, e := range sl.Extra {
		fmt.Fprintf(&b, "#SBATCH %s\n", e)
	}
	fmt.Fprintf(&b, "# Stage %s of the study %s: %d units, %d per array task.\n", ss.stage, p.Study.path, ss.units, ss.perTask)
	b.WriteString("set -euo pipefail\n")
	fmt.Fprintf(&b, "lo=$((SLURM_ARRAY_TASK_ID * %d))\n", ss.perTask)
	fmt.Fprintf(&b, "hi=$((lo + %d))\n", ss.perTask-1)
	fmt.Fprintf(&b, "if [ \"$hi\" -gt %d ]; then hi=%d; fi\n", ss.units-1, ss.units-1)
	var q []string
	for _, a := range command {
		q = append(q, textout.Quote(a))
	}
	fmt.Fprintf(&b, "exec %s --unit %s:\"$lo-$hi\"\n", strings.Join(q, " "), ss.stage)
	return b.String()
}

func abs(path string) string {
	if a, err := filepath.Abs(path); err == nil {
		return a
	}
	return path
}

// resources returns a stage's [slurm] overrides, its CPUs (the thread count
// the study fixes), a rough estimate of one unit's seconds and its memory.
func (p *Plan) resources(s Stage) (res Resources, cpus int, est float64, mem string) {
	st := p.Study
	lmax := 0
	for _, l := range st.System.Sizes {
		lmax = max(lmax, l)
	}
	sites := float64(lmax * lmax)
	if st.System.Kind != KindIsing {
		sites = float64(lmax)
	}
	samples := float64(max(st.System.Samples, 1000))
	points := float64(max(p.Points, 1))
	snapshots := points * samples
	sl := st.Slurm
	cpus, memMB := 1, 1000.0
	switch s {
	case StageSimulate:
		res, est = sl.Simulate, 1+5e-6*samples*sites
		if st.System.Kind == KindChain {
			est = points * (1 + 1e-5*math.Pow(2, math.Min(float64(lmax), 24)))
			memMB += 16 * math.Pow(2, math.Min(float64(lmax), 24)) / 1e6 * 8
		}
	case StageGather:
		res, est = sl.Gather, 5
		memMB += 2 * snapshots * sites / 1e6
	case StageTrain:
		res, cpus = sl.Train, st.Model.Threads
		ts, _ := st.trainSettings(0)
		est = 10 + float64(ts.Epochs)*snapshots*sites*2e-6/float64(cpus)
		memMB += 2 * snapshots * sites / 1e6
	case StageMatrix:
		res, cpus = sl.Matrix, st.Scan.Threads
		block := st.Scan.Block
		if block <= 0 {
			block = defaultBlock
		}
		rows := math.Min(snapshots, float64(block))
		est = 10 + float64(st.Model.Ensemble)*rows*points*sites*1e-7/float64(cpus)
		memMB += 2*snapshots*sites/1e6 + 8*rows*points*float64(st.Model.Ensemble)/1e6
	case StageScan:
		res, cpus = sl.ScanRes, st.Scan.Threads
		est = 30 + float64(st.Model.Ensemble)*snapshots*points*sites*1e-7/float64(cpus)
		memMB += 8 * snapshots * points / 1e6 * 2
	case StageFinish:
		res, est = sl.Finish, 60
	}
	return res, cpus, est, fmt.Sprintf("%dM", int(math.Ceil(memMB)))
}

// minutes formats a time limit of at least 10 minutes as Slurm's [D-]HH:MM:SS.
func minutes(sec float64) string {
	m := int(math.Ceil(math.Max(sec, 600) / 60))
	d, h := m/(24*60), (m/60)%24
	if d > 0 {
		return fmt.Sprintf("%d-%02d:%02d:00", d, h, m%60)
	}
	return fmt.Sprintf("%02d:%02d:00", h, m%60)
}
