package studyrun

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"strings"
	"syscall"
)

// Command is the run command's flags; Run carries them out.
type Command struct {
	// Study is the study file and Out the output folder.
	Study, Out string
	// Parallel, Unit, Slurm, DryRun and Quiet are the command's options.
	Parallel int
	Unit     string
	Slurm    bool
	DryRun   bool
	Quiet    bool
	// Stdout receives the progress lines; Version is recorded in the
	// checkpoints.
	Stdout  io.Writer
	Version string
}

// Execute runs the study file study with the command's options until it
// is done or SIGINT or SIGTERM stops it, printing to stdout. A stopped run
// returns an error that wraps interrupted.
func (c *Command) Execute(study string, stdout io.Writer, version string, interrupted error) error {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	c.Study, c.Stdout, c.Version = study, stdout, version
	err := c.Run(ctx)
	if err != nil && ctx.Err() != nil {
		return fmt.Errorf("run: stopped; the finished units are kept and the same command resumes the study: %w", interrupted)
	}
	return err
}

// Run loads the study and runs what the options ask for.
func (c *Command) Run(ctx context.Context) error {
	if c.Out == "" {
		return errors.New("run: --output: expected an output folder (-o OUT/), found none")
	}
	if c.Parallel < 1 {
		return fmt.Errorf("run: --parallel: expected at least 1 process, found %d", c.Parallel)
	}
	if c.Unit != "" && (c.Slurm || c.DryRun || c.Parallel > 1) {
		return errors.New("run: --unit runs units here, one by one: expected it without --slurm, --slurm-dry-run and --parallel")
	}
	st, err := Load(c.Study)
	if err != nil {
		return err
	}
	plan, err := NewPlan(st, c.Out)
	if err != nil {
		return err
	}
	Software = "tidemark " + c.Version
	var log io.Writer = c.Stdout
	if c.Quiet {
		log = nil
	}
	if c.Unit != "" {
		units, err := plan.ParseUnits(c.Unit)
		if err != nil {
			return err
		}
		if err := os.MkdirAll(c.Out, 0o755); err != nil {
			return err
		}
		for _, u := range units {
			ran, err := plan.RunUnit(ctx, u)
			if err != nil {
				return err
			}
			if log != nil {
				what := "done"
				if !ran {
					what = "up to date, skipped"
				}
				fmt.Fprintf(log, "%s (%s:%d): %s\n", u.Name, u.Stage, u.Index, what)
			}
		}
		return nil
	}
	self, err := c.command()
	if err != nil {
		return err
	}
	if err := os.MkdirAll(c.Out, 0o755); err != nil {
		return fmt.Errorf("run: %w", err)
	}
	// One run at a time writes into a folder; its units (--unit, in other
	// processes) lock each unit instead.
	release, err := lockFile(filepath.Join(c.Out, lockPath), false)
	if err != nil {
		return fmt.Errorf("run: %s: %w; wait for it to end or stop it", c.Out, err)
	}
	defer release()
	if c.Slurm || c.DryRun {
		return plan.Slurm(ctx, SlurmOptions{Command: self, Submit: !c.DryRun, Log: c.Stdout})
	}
	res, err := Run(ctx, plan, Options{Parallel: c.Parallel, Command: self, Log: log})
	if err != nil {
		return fmt.Errorf("run: %w", err)
	}
	if log != nil {
		fmt.Fprintf(log, "study finished: %d units ran, %d were up to date; summary in %s, report in %s\n",
			len(res.Ran), len(res.Skipped), filepath.Join(c.Out, summaryFile), filepath.Join(c.Out, reportFile))
		if why := notExtrapolated(c.Out); why != "" {
			fmt.Fprintf(log, "warning: the study asked for an extrapolation and has none: %s\n", why)
		}
	}
	return nil
}

// notExtrapolated returns why the finished study in out has no
// extrapolation, or "" when it has one or did not ask for it.
func notExtrapolated(out string) string {
	b, err := os.ReadFile(filepath.Join(out, summaryFile))
	if err != nil {
		return ""
	}
	var sum Summary
	if json.Unmarshal(b, &sum) != nil {
		return ""
	}
	return sum.NotExtrapolated
}

// command returns the command line that runs this study's units: this
// binary with absolute paths, so that it works from any folder.
func (c *Command) command() ([]string, error) {
	exe, err := os.Executable()
	if err != nil {
		return nil, fmt.Errorf("run: cannot find the tidemark binary to start units with: %w", err)
	}
	if strings.HasSuffix(exe, ".test") && (c.Parallel > 1 || c.Slurm && !c.DryRun) {
		return nil, fmt.Errorf("run: %s is a Go test binary, which cannot run units in other processes", exe)
	}
	study, err := filepath.Abs(c.Study)
	if err != nil {
		return nil, err
	}
	out, err := filepath.Abs(c.Out)
	if err != nil {
		return nil, err
	}
	return []string{exe, "run", study, "-o", out}, nil
}

// Help is the run command's long description.
const Help = `run carries out the study that STUDY.toml describes ([system], [model], [scan],
and optionally [extrapolate] and [slurm]; see the README) as independent units:
one per grid point and size (simulate), per size (gather, scan), per ensemble
member and size (train), per size and block of [scan] block snapshots (matrix:
the log-likelihoods the scan reads), and one that extrapolates and writes
OUT/summary.json and OUT/report.html. Every unit writes its outputs
atomically and then a stamp of its inputs' fingerprint; a unit whose stamp
matches is skipped, so a run that was stopped resumes where it stopped. Results do not depend on how the
units run: one by one, in --parallel processes, or as Slurm job arrays
(--slurm; each array task runs "tidemark run STUDY.toml -o OUT/ --unit STAGE:A-B").
One run at a time writes into OUT/ (it holds OUT/.lock); units run with --unit
lock each unit.`
