package main

import (
	"github.com/spf13/cobra"
)

// commands lists the constructors of the sub-commands; each command file
// adds its own in an init function, so that adding a command touches one file.
var commands []func() *cobra.Command

func newRootCmd() *cobra.Command {
	root := &cobra.Command{
		Use:   "tidemark",
		Short: "Locate phase transitions in snapshot data with a conditioned autoregressive model",
		Long: `tidemark maps phase diagrams from snapshots of a many-body system (Monte Carlo
configurations or projective measurements) taken over a grid of control parameters.
It trains one parameter-conditioned autoregressive network (MADE) on all snapshots
and uses its exact log-likelihoods in Bayes-optimal phase-transition indicators.`,
		Example: `  tidemark demo -o tour/
  tidemark simulate ising --size 16 --grid "T=1.5:3.5:21" --samples 1000 -o film.npz
  tidemark train film.npz -o film.ckpt
  tidemark scan --model film.ckpt --data film.npz -o scan/`,
		Version:       version,
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	root.SetVersionTemplate("tidemark {{.Version}}\n")
	root.CompletionOptions.DisableDefaultCmd = true
	root.SetFlagErrorFunc(func(c *cobra.Command, err error) error {
		return usageError(c, err)
	})
	for _, mk := range commands {
		root.AddCommand(mk())
	}
	nameArgErrors(root)
	return root
}

// nameArgErrors makes a wrong number of arguments name the command, as flag
// errors do ("tidemark inspect: accepts 1 arg(s), received 2 (see --help)").
func nameArgErrors(c *cobra.Command) {
	if check := c.Args; check != nil {
		c.Args = func(cmd *cobra.Command, args []string) error {
			if err := check(cmd, args); err != nil {
				return usageError(cmd, err)
			}
			return nil
		}
	}
	for _, sub := range c.Commands() {
		nameArgErrors(sub)
	}
}

// usageError prefixes a flag or argument error with the command's path so the
// one line says where the problem is.
func usageError(c *cobra.Command, err error) error {
	return &cmdError{path: c.CommandPath(), err: err}
}

type cmdError struct {
	path string
	err  error
}

func (e *cmdError) Error() string { return e.path + ": " + e.err.Error() + " (see --help)" }
func (e *cmdError) Unwrap() error { return e.err }
