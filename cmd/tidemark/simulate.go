package main

import (
	"fmt"
	"strings"

	"github.com/spf13/cobra"
)

// simulateCommands lists the constructors of the "simulate" sub-commands;
// each generator's file adds its own in an init function.
var simulateCommands []func() *cobra.Command

func init() {
	commands = append(commands, func() *cobra.Command {
		c := &cobra.Command{
			Use:   "simulate",
			Short: "Generate snapshot datasets from reference models (Ising, spin chains)",
			Example: `  tidemark simulate ising --size 16 --grid "T=1.5:3.5:21" --samples 1000 --seed 1 -o film.npz
  tidemark simulate chain --sites 12 --hamiltonian "-ZZ - h*X" --grid "h=0.2:2:19" --basis random --samples 1000 --seed 1 -o chain.npz`,
			Args: cobra.ArbitraryArgs,
			// Without RunE cobra prints the help and exits 0 for an unknown
			// simulation; a typo must fail with status 2 instead.
			RunE: func(cmd *cobra.Command, args []string) error {
				if len(args) == 0 {
					return cmd.Help()
				}
				var names []string
				for _, sub := range cmd.Commands() {
					if !sub.Hidden && sub.Name() != "help" {
						names = append(names, sub.Name())
					}
				}
				return fmt.Errorf("simulate: expected a model to simulate (%s), found %q", strings.Join(names, ", "), args[0])
			},
		}
		for _, mk := range simulateCommands {
			c.AddCommand(mk())
		}
		return c
	})
}
