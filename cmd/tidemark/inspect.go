package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"slices"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"tidemark/data"
)

func init() { commands = append(commands, newInspectCmd) }

// inspectHooks are tried, in order, for a file that is not a zip archive;
// each returns handled = false for a file it does not recognise. Other
// inspectors (checkpoints) append themselves in their own files.
var inspectHooks []func(path string, asJSON bool, w io.Writer) (handled bool, err error)

type inspectOptions struct {
	json bool
}

func newInspectCmd() *cobra.Command {
	var o inspectOptions
	c := &cobra.Command{
		Use:   "inspect FILE",
		Short: "Describe a dataset (.npz) or checkpoint (.ckpt): sizes, parameters, grid",
		Long: `inspect prints what a file holds. For a dataset: the number of snapshots and
sites, the alphabet, the lattice, each parameter's name and range, the grid (points
per axis, and whether it is a product grid or scattered points), the number of
samples per grid point (min / median / max), the source generator and the file size.
With --json the same facts are printed as one JSON object with stable keys.`,
		Example: `  tidemark inspect film.npz
  tidemark inspect film.npz --json | jq .grid`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runInspect(cmd.OutOrStdout(), args[0], o.json)
		},
	}
	c.Flags().BoolVar(&o.json, "json", false, "print one JSON object instead of text")
	return c
}

func runInspect(w io.Writer, path string, asJSON bool) error {
	f, err := os.Open(path)
	if err != nil {
		return fmt.Errorf("%s: cannot open: %w", path, unwrapPathErr(err))
	}
	if st, err := f.Stat(); err == nil && st.IsDir() {
		f.Close()
		return fmt.Errorf("%s: expected a .npz dataset or a .ckpt checkpoint, found a folder", path)
	}
	head := make([]byte, 4)
	k, _ := io.ReadFull(f, head)
	f.Close()
	head = head[:k]
	if bytes.Equal(head, []byte("PK\x03\x04")) {
		return inspectDataset(w, path, asJSON)
	}
	for _, h := range inspectHooks {
		handled, err := h(path, asJSON, w)
		if err != nil {
			return err
		}
		if handled {
			return nil
		}
	}
	return fmt.Errorf("%s: expected a .npz dataset or a .ckpt checkpoint, found a file starting with %q", path, head)
}

func unwrapPathErr(err error) error {
	if pe, ok := err.(*os.PathError); ok {
		return pe.Err
	}
	return err
}

// datasetReport is the JSON form of inspect for a dataset; its keys are stable.
type datasetReport struct {
	Kind            string          `json:"kind"`
	File            string          `json:"file"`
	FileBytes       int64           `json:"file_bytes"`
	Samples         int             `json:"samples"`
	Sites           int             `json:"sites"`
	Alphabet        int             `json:"alphabet"`
	Lattice         []int           `json:"lattice"`
	Params          []paramReport   `json:"params"`
	Grid            *gridReport     `json:"grid"`
	SamplesPerPoint *countReport    `json:"samples_per_point"`
	Generator       string          `json:"generator"`
	Source          json.RawMessage `json:"source,omitempty"`
	Created         string          `json:"created,omitempty"`
}

type paramReport struct {
	Name   string  `json:"name"`
	Min    float64 `json:"min"`
	Max    float64 `json:"max"`
	Values int     `json:"values"`
}

type gridReport struct {
	Points  int   `json:"points"`
	Shape   []int `json:"shape"`
	Product bool  `json:"product"`
}

type countReport struct {
	Min    int     `json:"min"`
	Median float64 `json:"median"`
	Max    int     `json:"max"`
}

func describeDataset(path string) (*datasetReport, error) {
	ds, err := data.ReadWith(path, data.ReadOptions{Unlabelled: true})
	if err != nil {
		return nil, err
	}
	st, err := os.Stat(path)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	r := &datasetReport{
		Kind: "dataset", File: path, FileBytes: st.Size(),
		Samples: ds.M, Sites: ds.N, Alphabet: ds.Meta.Alphabet, Lattice: ds.Meta.Lattice,
		Params:    []paramReport{},
		Generator: ds.Meta.Generator(), Source: ds.Meta.Source, Created: ds.Meta.Created,
	}
	if ds.D == 0 {
		return r, nil
	}
	g := data.NewGrid(ds)
	for a, name := range g.Names {
		ax := g.Axes[a]
		r.Params = append(r.Params, paramReport{Name: name, Min: ax[0], Max: ax[len(ax)-1], Values: len(ax)})
	}
	r.Grid = &gridReport{Points: g.K(), Shape: g.Shape(), Product: g.Product}
	counts := make([]int, g.K())
	for k, idx := range g.Index {
		counts[k] = len(idx)
	}
	slices.Sort(counts)
	med := float64(counts[len(counts)/2])
	if len(counts)%2 == 0 {
		med = float64(counts[len(counts)/2-1]+counts[len(counts)/2]) / 2
	}
	r.SamplesPerPoint = &countReport{Min: counts[0], Median: med, Max: counts[len(counts)-1]}
	return r, nil
}

func inspectDataset(w io.Writer, path string, asJSON bool) error {
	r, err := describeDataset(path)
	if err != nil {
		return err
	}
	if asJSON {
		return writeJSON(w, r)
	}
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "dataset\t%s (%s)\n", r.File, humanBytes(r.FileBytes))
	fmt.Fprintf(tw, "samples\t%d\n", r.Samples)
	fmt.Fprintf(tw, "sites\t%d (lattice %s)\n", r.Sites, latticeString(r.Lattice))
	fmt.Fprintf(tw, "alphabet\t%d\n", r.Alphabet)
	if len(r.Params) == 0 {
		fmt.Fprintf(tw, "parameters\tnone (unlabelled dataset)\n")
	}
	for _, p := range r.Params {
		fmt.Fprintf(tw, "parameter\t%s from %g to %g, %d values\n", p.Name, p.Min, p.Max, p.Values)
	}
	if r.Grid != nil {
		shape := make([]string, len(r.Params))
		for i, p := range r.Params {
			shape[i] = fmt.Sprintf("%s: %d", p.Name, p.Values)
		}
		kind := "product grid"
		if !r.Grid.Product {
			kind = "scattered points (not a product grid: no 2-D maps)"
		}
		if len(r.Params) == 1 {
			kind = "1-D grid"
		}
		fmt.Fprintf(tw, "grid\t%d points (%s), %s\n", r.Grid.Points, strings.Join(shape, ", "), kind)
		s := r.SamplesPerPoint
		fmt.Fprintf(tw, "samples per point\tmin %d, median %g, max %d\n", s.Min, s.Median, s.Max)
	}
	gen := r.Generator
	if gen == "" {
		gen = "unknown"
	}
	fmt.Fprintf(tw, "source\t%s\n", gen)
	if r.Created != "" {
		fmt.Fprintf(tw, "created\t%s\n", r.Created)
	}
	return tw.Flush()
}

// humanBytes formats a size as "51.2 MB" (powers of 1000).
func humanBytes(n int64) string {
	const unit = 1000
	if n < unit {
		return fmt.Sprintf("%d B", n)
	}
	v, u := float64(n), 0
	for v >= unit && u < 4 {
		v /= unit
		u++
	}
	return fmt.Sprintf("%.1f %cB", v, "kMGTP"[u-1])
}
