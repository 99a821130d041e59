package main

import (
	"archive/zip"
	"fmt"
	"io"

	"github.com/spf13/cobra"

	"tidemark/checkpoints"
	"tidemark/data"
	"tidemark/data/safefile"
)

func init() { commands = append(commands, newExportCmd) }

type exportOptions struct {
	out   string
	last  bool
	force bool
}

func newExportCmd() *cobra.Command {
	var o exportOptions
	c := &cobra.Command{
		Use:   "export MODEL.ckpt -o WEIGHTS.npz",
		Short: "Write a checkpoint's weights and masks as a NumPy .npz archive for Python",
		Long: `export writes every weight tensor of a checkpoint as one float64 array of its
own shape (named as in the checkpoint, e.g. "made.w0", "cond.b0"), every 0/1
connectivity mask ("mask.w0", …), and an array "config": the UTF-8 bytes of a
JSON object with the model configuration, the parameter names, the lattice,
the tensor names in order and which weights were exported. In Python:

  z = numpy.load("weights.npz"); cfg = json.loads(z["config"].tobytes())

The best weights (lowest validation NLL) are exported unless --last is given.`,
		Example: `  tidemark export film.ckpt -o weights.npz
  tidemark export film.ckpt --last -o last.npz --force`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runExport(cmd, args[0], &o)
		},
	}
	f := c.Flags()
	f.StringVarP(&o.out, "output", "o", "", "output archive (.npz)")
	f.BoolVar(&o.last, "last", false, "export the weights of the last epoch instead of the best")
	f.BoolVar(&o.force, "force", false, "overwrite the output file if it exists")
	return c
}

func runExport(cmd *cobra.Command, path string, o *exportOptions) error {
	if o.out == "" {
		return fmt.Errorf("export: expected an output file (-o WEIGHTS.npz), found none")
	}
	if err := checkOutput(o.out, o.force); err != nil {
		return err
	}
	ck, err := checkpoints.Load(path)
	if err != nil {
		return err
	}
	ex, err := ck.Export(o.last, path, version)
	if err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	err = safefile.Write(o.out, o.force, func(w io.Writer) error { return data.WriteNPZ(w, zip.Store, ex.Arrays...) })
	if err != nil {
		return err
	}
	c := ex.Config
	fmt.Fprintf(cmd.OutOrStdout(), "wrote %s: %d weight tensors (%s, epoch %d), %d masks, config\n", o.out, len(c.Weights), c.Which, c.Epoch, len(c.Masks))
	return nil
}
