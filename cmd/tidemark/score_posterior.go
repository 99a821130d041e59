package main

import (
	"fmt"
	"io"

	"github.com/spf13/cobra"

	"tidemark/cmd/internal/progress"
	"tidemark/data"
	"tidemark/data/safefile"
	"tidemark/indicator/scorestat"
	"tidemark/model"
)

// runPosterior is score --posterior.
func runPosterior(cmd *cobra.Command, m *model.Model, ds *data.Dataset, grid [][]float64, names []string, ckPath, dataPath, ext string, o *scoreOptions) error {
	bar := progress.New(ds.M, "posterior", o.quiet)
	pr, err := scorestat.Posterior(m, ds, grid, threadsOrDefault(o.threads), bar.Func())
	bar.Done()
	if err != nil {
		return fmt.Errorf("score --posterior: %w", err)
	}
	if ext == ".csv" {
		err = safefile.Write(o.out, o.force, func(w io.Writer) error { return pr.WriteSnapshotsCSV(w, names, ds) })
		if err == nil {
			err = safefile.Write(scorestat.Sidecar(o.out, "groups"), o.force, func(w io.Writer) error { return pr.WriteGroupsCSV(w, names) })
		}
	} else {
		err = data.WriteNPZFile(o.out, o.force, map[string]any{
			"param_names": names, "checkpoint": ckPath, "data": dataPath, "prior": "uniform over the grid points",
			"grid": o.grid, "credible_mass": scorestat.Credible, "interval": "central (equal-tailed)", "units": "nats", "software_version": version,
		}, pr.Arrays(ds.M, len(names))...)
	}
	if err != nil {
		return err
	}
	w := cmd.OutOrStdout()
	pr.WriteGroups(w, names)
	fmt.Fprintf(w, "wrote %s: posteriors of %d snapshots over %d grid points\n", o.out, ds.M, len(grid))
	if ext == ".csv" {
		fmt.Fprintf(w, "wrote %s: the groups\n", scorestat.Sidecar(o.out, "groups"))
	}
	return nil
}
