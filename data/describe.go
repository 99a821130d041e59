package data

import (
	"encoding/json"
	"fmt"
	"io"
	"os"
	"slices"
	"strconv"
	"strings"
	"text/tabwriter"
)

// Description is what a dataset file holds, as "tidemark inspect" prints
// it; its JSON keys are stable.
type Description struct {
	Kind            string             `json:"kind"`
	File            string             `json:"file"`
	FileBytes       int64              `json:"file_bytes"`
	Samples         int                `json:"samples"`
	Sites           int                `json:"sites"`
	Alphabet        int                `json:"alphabet"`
	Lattice         []int              `json:"lattice"`
	Params          []ParamDescription `json:"params"`
	Grid            *GridDescription   `json:"grid"`
	SamplesPerPoint *CountDescription  `json:"samples_per_point"`
	Generator       string             `json:"generator"`
	Source          json.RawMessage    `json:"source,omitempty"`
	Created         string             `json:"created,omitempty"`
}

// ParamDescription describes one parameter: its range and number of values.
type ParamDescription struct {
	Name   string  `json:"name"`
	Min    float64 `json:"min"`
	Max    float64 `json:"max"`
	Values int     `json:"values"`
}

// GridDescription describes the grid: its points, shape and whether it is a
// product of its axes.
type GridDescription struct {
	Points  int   `json:"points"`
	Shape   []int `json:"shape"`
	Product bool  `json:"product"`
}

// CountDescription summarises the snapshots per grid point.
type CountDescription struct {
	Min    int     `json:"min"`
	Median float64 `json:"median"`
	Max    int     `json:"max"`
}

// Describe reads the dataset file path (labelled or not) and describes it.
func Describe(path string) (*Description, error) {
	ds, err := ReadWith(path, ReadOptions{Unlabelled: true})
	if err != nil {
		return nil, err
	}
	st, err := os.Stat(path)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	r := &Description{
		Kind: "dataset", File: path, FileBytes: st.Size(),
		Samples: ds.M, Sites: ds.N, Alphabet: ds.Meta.Alphabet, Lattice: ds.Meta.Lattice,
		Params:    []ParamDescription{},
		Generator: ds.Meta.Generator(), Source: ds.Meta.Source, Created: ds.Meta.Created,
	}
	if ds.D == 0 {
		return r, nil
	}
	g := NewGrid(ds)
	for a, name := range g.Names {
		ax := g.Axes[a]
		r.Params = append(r.Params, ParamDescription{Name: name, Min: ax[0], Max: ax[len(ax)-1], Values: len(ax)})
	}
	r.Grid = &GridDescription{Points: g.K(), Shape: g.Shape(), Product: g.Product}
	counts := make([]int, g.K())
	for k, idx := range g.Index {
		counts[k] = len(idx)
	}
	slices.Sort(counts)
	med := float64(counts[len(counts)/2])
	if len(counts)%2 == 0 {
		med = float64(counts[len(counts)/2-1]+counts[len(counts)/2]) / 2
	}
	r.SamplesPerPoint = &CountDescription{Min: counts[0], Median: med, Max: counts[len(counts)-1]}
	return r, nil
}

// WriteText prints the description as aligned lines of text.
func (r *Description) WriteText(w io.Writer) error {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "dataset\t%s (%s)\n", r.File, HumanBytes(r.FileBytes))
	fmt.Fprintf(tw, "samples\t%d\n", r.Samples)
	fmt.Fprintf(tw, "sites\t%d (lattice %s)\n", r.Sites, FormatLattice(r.Lattice))
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

// HumanBytes formats a size as "51.2 MB" (powers of 1000).
func HumanBytes(n int64) string {
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

// FormatLattice formats lattice sizes as 16x16.
func FormatLattice(l []int) string {
	s := make([]string, len(l))
	for i, v := range l {
		s[i] = strconv.Itoa(v)
	}
	return strings.Join(s, "x")
}

// ParseLattice reads lattice sizes written as "16x16", "16,16" or "256".
func ParseLattice(s string) ([]int, error) {
	parts := strings.FieldsFunc(s, func(r rune) bool { return r == 'x' || r == 'X' || r == ',' || r == '×' })
	if len(parts) == 0 {
		return nil, fmt.Errorf("expected sizes like 16x16, found %q", s)
	}
	out := make([]int, len(parts))
	for i, p := range parts {
		v, err := strconv.Atoi(strings.TrimSpace(p))
		if err != nil || v <= 0 {
			return nil, fmt.Errorf("expected positive whole sizes like 16x16, found %q in %q", p, s)
		}
		out[i] = v
	}
	return out, nil
}
