package main

import (
	"bytes"
	"fmt"
	"io"
	"os"

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

func inspectDataset(w io.Writer, path string, asJSON bool) error {
	r, err := data.Describe(path)
	if err != nil {
		return err
	}
	if asJSON {
		return writeJSON(w, r)
	}
	return r.WriteText(w)
}
