package main

import (
	"fmt"
	"strings"

	"github.com/spf13/cobra"

	"tidemark/data"
	"tidemark/data/textimport"
)

func init() { commands = append(commands, newImportCmd) }

type importOptions struct {
	out      string
	params   string
	lattice  string
	alphabet int
	spins    string
	force    bool
}

func newImportCmd() *cobra.Command {
	var o importOptions
	c := &cobra.Command{
		Use:   "import FILE -o OUT.npz",
		Short: "Convert snapshots in a text or CSV file into a dataset (.npz)",
		Long: `import reads one snapshot a line: first the parameter columns named by --params,
then the site values, in row-major order of --lattice. Site values are integers
0..q-1 separated by commas or whitespace, or one string of digits ("0110..."),
or Ising spins -1/+1 with --spins pm1 (stored as 0 and 1). Blank lines and lines
starting with # are skipped; a first line that is not numeric is a header.
Without --params the file has no parameter columns (an unlabelled dataset).`,
		Example: `  tidemark import snaps.csv --params T --lattice 16x16 -o snaps.npz
  tidemark import chain.txt --params h,J --alphabet 3 -o chain.npz
  tidemark import spins.txt --params T --spins pm1 --lattice 8x8 -o spins.npz --force`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runImport(cmd, args[0], &o)
		},
	}
	f := c.Flags()
	f.StringVarP(&o.out, "output", "o", "", "output dataset file (.npz)")
	f.StringVar(&o.params, "params", "", "comma-separated names of the leading parameter columns, e.g. T,h (their count is d)")
	f.StringVar(&o.lattice, "lattice", "", "lattice shape in sites, e.g. 16x16 (default: a chain of all sites)")
	f.IntVar(&o.alphabet, "alphabet", 0, "number of site values q (default: largest value + 1, at least 2)")
	f.StringVar(&o.spins, "spins", "", `site encoding: "" for values 0..q-1, "pm1" for spins -1/+1 stored as 0/1`)
	f.BoolVar(&o.force, "force", false, "overwrite the output file if it exists")
	c.MarkFlagRequired("output")
	return c
}

func runImport(cmd *cobra.Command, in string, o *importOptions) error {
	opt := textimport.Options{Alphabet: o.alphabet}
	if o.params != "" {
		seen := map[string]bool{}
		for _, p := range strings.Split(o.params, ",") {
			p = strings.TrimSpace(p)
			if p == "" || seen[p] {
				return fmt.Errorf("--params: expected distinct non-empty names like T,h, found %q", o.params)
			}
			seen[p] = true
			opt.ParamNames = append(opt.ParamNames, p)
		}
	}
	switch o.spins {
	case "":
	case "pm1":
		opt.Spins = true
	default:
		return fmt.Errorf("--spins: expected pm1 (or nothing), found %q", o.spins)
	}
	if o.lattice != "" {
		lat, err := data.ParseLattice(o.lattice)
		if err != nil {
			return fmt.Errorf("--lattice: %w", err)
		}
		opt.Lattice = lat
	}
	if err := checkOutput(o.out, o.force); err != nil {
		return err
	}
	ds, err := textimport.ReadFile(in, opt)
	if err != nil {
		return err
	}
	if err := ds.Write(o.out, o.force); err != nil {
		return err
	}
	w := cmd.OutOrStdout()
	fmt.Fprintf(w, "wrote %s: %d snapshots of %d sites (lattice %s, alphabet %d)", o.out, ds.M, ds.N, data.FormatLattice(ds.Meta.Lattice), ds.Meta.Alphabet)
	if ds.D > 0 {
		g := data.NewGrid(ds)
		fmt.Fprintf(w, " at %d grid points of %s", g.K(), strings.Join(g.Names, ", "))
	}
	fmt.Fprintln(w)
	return nil
}
