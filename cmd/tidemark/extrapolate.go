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
	corr, pks string
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
		Long: `extrapolate reads scan folders (exact, model or histogram scans, in any mix)
of one parameter at 3 or more sizes L (each scan's chain length or square side,
or --sizes), locates each indicator's peak (--peaks) and fits the positions to
  λ*(L) = λ_c + a·L^(−1/ν) + Σ_k b_k·L^(−1/ν−k·ω)   (k = 1 … --corrections)
weighted with their errors (ν fitted unless --nu). --corrections auto fits as
many terms (0–2) as leave at least as many degrees of freedom as terms: with ν
given one from 4 sizes, two from 6 (Akaike's χ² + 2p is reported, not used).
The error is statistical (a bootstrap, times √(χ²/dof) if that exceeds 1) plus
the systematic shift on leaving out the smallest size or the last correction.
Indicators are combined by inverse-variance weighting (never below the best
single error). OUT/ gets summary.json, peak and collapse pictures, report.html.`,
		Example: `  tidemark extrapolate scan8/ scan12/ scan16/ scan24/ --nu 1 -o fss/
  tidemark extrapolate scan8/ scan12/ scan16/ scan24/ scan32/ --corrections 0 -o fss/
  tidemark extrapolate a/ b/ c/ --sizes 8,12,16 --nu 1 -o fss/`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runExtrapolate(cmd.OutOrStdout(), args, &o)
		},
	}
	f := c.Flags()
	f.Float64Var(&o.nu, "nu", 0, "correlation-length exponent ν (default: fitted, needs at least 4 sizes)")
	f.StringVar(&o.corr, "corrections", "auto", "correction terms b_k·L^(−1/ν−k·ω): auto (as many as the sizes allow), or 0, 1, 2")
	f.StringVar(&o.pks, "peaks", "curve", "peak positions: curve (a parabola through the top of each scan's curve, with a bootstrap error) or scan (the scans' own peaks)")
	f.Float64Var(&o.omega, "omega", 1, "spacing ω of the correction exponents (1: 1/L² and 1/L³ with ν = 1)")
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
	opt := scaling.Options{Fit: scaling.FitOptions{Nu: o.nu, Omega: o.omega, Auto: o.corr == "auto", Bootstrap: o.bootstrap, Seed: o.seed}, CurvePeaks: o.pks == "curve"}
	if o.pks != "curve" && o.pks != "scan" {
		return fmt.Errorf("extrapolate: --peaks: expected curve or scan, found %q", o.pks)
	}
	if _, err := fmt.Sscan(o.corr, &opt.Fit.Corrections); !opt.Fit.Auto && (err != nil || fmt.Sprint(opt.Fit.Corrections) != o.corr) {
		return fmt.Errorf("extrapolate: --corrections: expected auto, 0, 1 or 2, found %q", o.corr)
	} else if o.corr == "0" {
		opt.Fit.Omega = 0 // the leading form alone
	}
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
