package studyrun

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"time"
)

// Options says how Run runs a plan.
type Options struct {
	// Parallel is the number of local processes that run a stage's units
	// (≤ 1: the units run one by one in this process).
	Parallel int
	// Command is the command line that runs this study with --unit added:
	// the tidemark binary, "run", the study file, "-o", the output folder.
	// Parallel and Slurm runs need it.
	Command []string
	// Log receives one progress line per unit (nil: none).
	Log io.Writer
	// OnUnit, if set, is called after each unit run in this process, with
	// whether it ran (false: it was up to date).
	OnUnit func(u Unit, ran bool)
}

// Outcome says which units a run ran and which were up to date.
type Outcome struct {
	Ran, Skipped []string
}

// Run runs every unit of the plan, stage by stage, skipping those whose
// stamps match, and returns which units ran.
func Run(ctx context.Context, p *Plan, opt Options) (*Outcome, error) {
	if err := os.MkdirAll(p.Out, 0o755); err != nil {
		return nil, err
	}
	out := &Outcome{}
	var mu sync.Mutex
	done := 0
	total := p.Total()
	note := func(u Unit, ran bool, took time.Duration) {
		mu.Lock()
		defer mu.Unlock()
		done++
		what := "up to date, skipped"
		if ran {
			out.Ran = append(out.Ran, u.Name)
			what = fmt.Sprintf("done in %.1fs", took.Seconds())
		} else {
			out.Skipped = append(out.Skipped, u.Name)
		}
		if opt.Log != nil {
			fmt.Fprintf(opt.Log, "[%d/%d] %s (%s:%d): %s\n", done, total, u.Name, u.Stage, u.Index, what)
		}
		if opt.OnUnit != nil {
			opt.OnUnit(u, ran)
		}
	}
	for _, s := range Stages {
		units := p.Units[s]
		if opt.Parallel <= 1 {
			for _, u := range units {
				start := time.Now()
				ran, err := p.RunUnit(ctx, u)
				if err != nil {
					return out, err
				}
				note(u, ran, time.Since(start))
			}
			continue
		}
		if err := p.runProcesses(ctx, units, opt, note); err != nil {
			return out, err
		}
	}
	return out, nil
}

// RunUnit runs one unit in this process unless its stamp matches; ran
// reports whether it ran. Its outputs and then its stamp are written
// atomically, so a unit stopped half-way is redone by the next run.
func (p *Plan) RunUnit(ctx context.Context, u Unit) (ran bool, err error) {
	w, err := p.work(u)
	if err != nil {
		return false, fmt.Errorf("%s: %w", u.Name, err)
	}
	fp, err := fingerprint(u.Name, w.settings, w.inputs)
	if err != nil {
		return false, err
	}
	if upToDate(p.Out, u.Name, fp) {
		return false, nil
	}
	// Two processes never run one unit at once (two Slurm tasks, or a task
	// beside a local run): the second waits, then finds it done.
	release, err := lockFile(filepath.Join(p.Out, unitLockPath(u.Name)), true)
	if err != nil {
		return false, fmt.Errorf("%s: %w", u.Name, err)
	}
	defer release()
	if upToDate(p.Out, u.Name, fp) {
		return false, nil
	}
	if err := os.Remove(filepath.Join(p.Out, stampPath(u.Name))); err != nil && !errors.Is(err, os.ErrNotExist) {
		return false, err
	}
	if err := ctx.Err(); err != nil {
		return false, fmt.Errorf("%s: %w", u.Name, err)
	}
	if err := w.run(ctx); err != nil {
		return false, fmt.Errorf("%s: %w", u.Name, err)
	}
	return true, writeStamp(p.Out, u.Name, fp, w.outputs)
}

// runProcesses runs the units in opt.Parallel processes of opt.Command,
// each with --unit STAGE:K. A unit already up to date is not started.
func (p *Plan) runProcesses(ctx context.Context, units []Unit, opt Options, note func(Unit, bool, time.Duration)) error {
	if len(opt.Command) == 0 {
		return errors.New("parallel run: no command to start the units with")
	}
	jobs := make(chan Unit)
	errs := make(chan error, len(units))
	var wg sync.WaitGroup
	for i := 0; i < opt.Parallel; i++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for u := range jobs {
				if w, err := p.work(u); err == nil {
					if fp, err := fingerprint(u.Name, w.settings, w.inputs); err == nil && upToDate(p.Out, u.Name, fp) {
						note(u, false, 0)
						continue
					}
				}
				start := time.Now()
				args := append(append([]string(nil), opt.Command[1:]...), "--unit", fmt.Sprintf("%s:%d", u.Stage, u.Index))
				cmd := exec.CommandContext(ctx, opt.Command[0], args...)
				var stderr bytes.Buffer
				cmd.Stderr = &stderr
				if err := cmd.Run(); err != nil {
					msg := strings.TrimSpace(stderr.String())
					if msg == "" {
						msg = err.Error()
					}
					errs <- fmt.Errorf("unit %s (%s:%d) failed: %s", u.Name, u.Stage, u.Index, msg)
					continue
				}
				note(u, true, time.Since(start))
			}
		}()
	}
	for _, u := range units {
		jobs <- u
	}
	close(jobs)
	wg.Wait()
	close(errs)
	return <-errs
}
