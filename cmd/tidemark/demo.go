package main

import (
	"errors"
	"fmt"
	"io"

	"github.com/spf13/cobra"

	"tidemark/indicator/study"
)

func init() { commands = append(commands, newDemoCmd) }

// demoOptions are the demo's flags: the scenario, and whether to draw
// progress bars.
type demoOptions struct {
	study.Demo
	quiet bool
}

// defaultDemo is the built-in scenario.
func defaultDemo() demoOptions { return demoOptions{Demo: study.DefaultDemo()} }

func newDemoCmd() *cobra.Command {
	o := defaultDemo()
	o.Threads = 0
	c := &cobra.Command{
		Use:   "demo [-o FOLDER]",
		Short: "Run the whole job on a built-in scenario: simulate, train, scan and write a report",
		Long: `demo runs tidemark's whole job on a built-in scenario of its own: an easy-axis
magnetic monolayer imaged at a series of temperatures, modelled as the 2-D Ising
model (J = 1, no field) on a 12×12 periodic lattice, 600 snapshots at each of 14
temperatures between T = 1.6 and 3.2 (Monte Carlo with Wolff clusters).

It simulates the snapshots, trains the conditioned autoregressive model on them
(declaring the lattice's symmetries, as train --augment does), scans the
Bayes-optimal indicators with bootstrap errors and writes everything to
FOLDER: the dataset (monolayer.npz), the checkpoint (monolayer.ckpt), the scan
(scan/: indicators.csv, summary.json, pictures, report.html) and report.html, a
page to read in a browser.

It ends by saying where the transition lies: the mean of the highest peaks of
the indicators, with an error that covers their spread, beside the same estimate
from the exact density of the same snapshots (and whether the two agree within
their errors), the exact answer for the same finite lattice (the maximum of the
heat capacity from Kaufman's partition function, Phys. Rev. 76, 1232 (1949)) and
Onsager's T_c = 2/ln(1+√2) ≈ 2.2692 of the infinite lattice (Phys. Rev. 65, 117
(1944)). Its fisher_deriv averages over the data's own snapshots, as scan does on
the data's grid. No network is needed; the run takes under a minute on two
cores.`,
		Example: `  tidemark demo
  tidemark demo -o tour/ --force --threads 2
  tidemark demo --quiet --seed 7 -o seed7/`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			_, err := demo(cmd.OutOrStdout(), &o)
			return err
		},
	}
	f := c.Flags()
	f.StringVarP(&o.Out, "output", "o", o.Out, "output folder (created; an existing non-empty folder needs --force)")
	f.BoolVar(&o.Force, "force", false, "replace an existing output folder")
	f.BoolVar(&o.quiet, "quiet", false, "draw no progress bars and print no per-epoch lines")
	f.Uint64Var(&o.Seed, "seed", o.Seed, "seed of the simulation, the training and the scan")
	f.IntVar(&o.Threads, "threads", 0, "worker threads (default: all CPUs)")
	// Hidden: a smaller scenario for tests.
	f.IntVar(&o.Size, "size", o.Size, "lattice side L in sites")
	f.IntVar(&o.Points, "points", o.Points, "number of temperatures")
	f.IntVar(&o.Samples, "samples", o.Samples, "snapshots per temperature")
	f.IntVar(&o.Epochs, "epochs", o.Epochs, "maximum training epochs")
	f.IntVar(&o.ModelSamples, "model-samples", o.ModelSamples, "snapshots drawn from the model per point where the scan samples")
	f.IntVar(&o.Bootstrap, "bootstrap", o.Bootstrap, "bootstrap resamples")
	f.BoolVar(&o.Symmetric, "symmetric", o.Symmetric, "spin-flip symmetric model")
	f.Float64Var(&o.TLo, "t-lo", o.TLo, "lowest temperature")
	f.Float64Var(&o.THi, "t-hi", o.THi, "highest temperature")
	for _, n := range []string{"size", "points", "samples", "epochs", "model-samples", "bootstrap", "t-lo", "t-hi", "symmetric"} {
		f.MarkHidden(n)
	}
	return c
}

// demo runs the scenario with the options' progress bars and turns a
// stopped run into the interrupted exit status.
func demo(w io.Writer, o *demoOptions) (*study.Outcome, error) {
	d := o.Demo
	if err := d.Validate(); err != nil {
		return nil, err
	}
	d.Threads = threadsOrDefault(d.Threads)
	d.Software = version
	var done func()
	d.Progress, done = stageBars(o.quiet)
	defer done()
	ctx, stop := signalContext()
	defer stop()
	out, err := d.Run(ctx, w)
	if errors.Is(err, study.ErrStopped) {
		return nil, fmt.Errorf("demo: stopped; nothing was written to %s: %w", d.Out, errInterrupted)
	}
	if err != nil {
		return nil, fmt.Errorf("demo: %w", err)
	}
	return out, nil
}
