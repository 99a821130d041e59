package main

import (
	"errors"
	"fmt"
	"io"

	"github.com/spf13/cobra"

	"tidemark/indicator/report"
	"tidemark/indicator/scaling"
)

func init() { commands = append(commands, newExtrapolateCmd) }

type extrapolateOptions struct {
	nu, omega float64
	sizes     string
	bootstrap int
	seed      uint64
	force     bool
	out       string
}

func newExtrapolateCmd() *cobra.Command {
	var o extrapolateOptions
	c := &cobra.Command{
		Use:   "extrapolate SCAN... -o OUT/",
		Short: "Extrapolate the indicator peaks of scans at several system sizes to the infinite system",
		Long: `extrapolate reads the summary.json of several scan folders (exact, model or
histogram scans, in any mix) of the same parameter at different system sizes
and fits, per indicator, the peak positions to
  λ*(L) = λ_c + a·L^(−1/ν)   [+ b·L^(−1/ν−ω) with --omega]
by least squares weighted with the peaks' errors. L is the linear size of each
scan's lattice (the chain length, or the side of a square lattice) or, for
scans that record no lattice, the matching entry of --sizes. ν is fitted when
--nu is not given (at least 4 sizes; 5 with --omega).

The error of λ_c is the spread of a parametric bootstrap that redraws every
peak from a normal distribution with its error, multiplied by √(χ²/dof) when
the peaks scatter more than their errors, with the change of λ_c when the
smallest size is left out added in quadrature. Exact peaks without errors are
fitted unweighted, with an error estimated from the residuals. The indicators'
estimates are combined by inverse-variance weighting (never with an error
below the best single one, since they come from the same snapshots).

OUT/ receives summary.json (per-indicator estimates and the combined one),
peaks.svg/.png (peak position against L^(−1/ν) with the fits), a data-collapse
picture per indicator (the scans' curves against (λ − λ_c)·L^(1/ν)) and
report.html. At least 3 different sizes are needed.`,
		Example: `  tidemark extrapolate scan8/ scan12/ scan16/ scan24/ --nu 1 -o fss/
  tidemark extrapolate scan8/ scan12/ scan16/ scan24/ scan32/ -o fss/
  tidemark extrapolate a/ b/ c/ --sizes 8,12,16 --nu 1 -o fss/`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runExtrapolate(cmd.OutOrStdout(), args, &o)
		},
	}
	f := c.Flags()
	f.Float64Var(&o.nu, "nu", 0, "correlation-length exponent ν (default: fitted, needs at least 4 sizes)")
	f.Float64Var(&o.omega, "omega", 0, "correction-to-scaling exponent ω: adds b·L^(−1/ν−ω) (default: no correction)")
	f.StringVar(&o.sizes, "sizes", "", "linear sizes of the scans in the order given, e.g. 8,12,16 (default: from each scan's lattice)")
	f.IntVar(&o.bootstrap, "bootstrap", 1000, "parametric bootstrap replicates for the error of λ_c (0: the fit's covariance)")
	f.Uint64Var(&o.seed, "seed", 1, "random seed of the bootstrap")
	f.BoolVar(&o.force, "force", false, "replace the output folder if it exists")
	f.StringVarP(&o.out, "output", "o", "", "output folder")
	return c
}

func runExtrapolate(w io.Writer, dirs []string, o *extrapolateOptions) error {
	if o.out == "" {
		return errors.New("extrapolate: --output: expected an output folder (-o OUT/), found none")
	}
	opt := scaling.Options{Fit: scaling.FitOptions{Nu: o.nu, Omega: o.omega, Bootstrap: o.bootstrap, Seed: o.seed}}
	if err := opt.Fit.Check(); err != nil {
		return fmt.Errorf("extrapolate: --%w", err)
	}
	if o.sizes != "" {
		s, err := scaling.ParseSizes(o.sizes)
		if err != nil {
			return fmt.Errorf("extrapolate: --sizes: %w", err)
		}
		for _, v := range s {
			opt.Sizes = append(opt.Sizes, float64(v))
		}
	}
	if err := report.CheckDir(o.out, o.force); err != nil {
		return fmt.Errorf("extrapolate: %w", err)
	}
	res, err := scaling.Run(dirs, opt)
	if err != nil {
		return fmt.Errorf("extrapolate: %w", err)
	}
	if err := scaling.Write(o.out, o.force, res); err != nil {
		return fmt.Errorf("extrapolate: %w", err)
	}
	fmt.Fprintf(w, "wrote %s: %d scans, %s\n", o.out, len(res.Scans), res.Form)
	res.WriteText(w)
	return nil
}
