package main

import (
	"github.com/spf13/cobra"

	"tidemark/cmd/internal/studyrun"
)

func init() { commands = append(commands, newRunCmd) }

func newRunCmd() *cobra.Command {
	var o studyrun.Command
	c := &cobra.Command{
		Use:     "run STUDY.toml -o OUT/",
		Short:   "Run a whole study from one file (simulate, train, scan, extrapolate) here, in parallel or on Slurm",
		Long:    studyrun.Help,
		Example: "  tidemark run study.toml -o study/ --parallel 2\n  tidemark run study.toml -o study/ --slurm-dry-run   # --slurm submits",
		Args:    cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return o.Execute(args[0], cmd.OutOrStdout(), version, errInterrupted)
		},
	}
	f := c.Flags()
	f.StringVarP(&o.Out, "output", "o", "", "output folder of the study (created; rerunning into it resumes)")
	f.IntVar(&o.Parallel, "parallel", 1, "units of a stage run at once, each in its own process")
	f.StringVar(&o.Unit, "unit", "", "run only these units: STAGE:K or STAGE:A-B (what each Slurm array task runs)")
	f.BoolVar(&o.Slurm, "slurm", false, "write one sbatch script per stage to OUT/slurm/ and submit them as dependent job arrays")
	f.BoolVar(&o.DryRun, "slurm-dry-run", false, "write the sbatch scripts to OUT/slurm/ without submitting them")
	f.BoolVar(&o.Quiet, "quiet", false, "print no progress lines")
	return c
}
