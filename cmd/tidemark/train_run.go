package main

import (
	"errors"
	"fmt"
	"io"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"tidemark/checkpoints"
	"tidemark/cmd/internal/ensemble"
	"tidemark/cmd/internal/progress"
	"tidemark/data"
	"tidemark/data/density"
	"tidemark/data/ising"
	"tidemark/data/safefile"
	"tidemark/train"
)

// resumeFrom loads the checkpoint of --resume and returns what the
// resumed run may change (train.LoadResume).
func (o *trainOptions) resumeFrom(fl *pflag.FlagSet) (*checkpoints.Checkpoint, *train.Resume, error) {
	return train.LoadResume(train.ResumeRequest{Path: o.resume, Given: o.settings, Holdout: o.holdout, Changed: fl.Changed,
		Epochs: o.epochs, Patience: o.patience, Threads: threadsOrDefault(o.threads)})
}

func runTrain(cmd *cobra.Command, dataPath string, o *trainOptions) error {
	if o.stopAfter < 0 {
		return fmt.Errorf("--stop-after: expected a number of epochs ≥ 0, found %d", o.stopAfter)
	}
	if o.resume != "" && !cmd.Flags().Changed("ensemble") {
		o.ensemble = 1 // a resumed run is one model, whatever the default
	}
	if err := train.CheckEnsemble(o.ensemble, o.member, o.resume != ""); err != nil {
		return err
	}
	opt := train.Options{Software: version, StopAfter: o.stopAfter}
	var resumed *checkpoints.Checkpoint
	if o.resume != "" {
		ck, res, err := o.resumeFrom(cmd.Flags())
		if err != nil {
			return err
		}
		resumed, opt.Resume = ck, res
		if dataPath == "" {
			dataPath = ck.Header.Dataset.Path
		}
		if o.out == "" {
			o.out = o.resume
		}
	} else {
		st, err := o.settings()
		if err != nil {
			return err
		}
		opt.Settings = st
		opt.Holdout = o.holdout
	}
	if dataPath == "" {
		return errors.New("train: expected a dataset (DATA.npz), found none (only --resume can do without: it reads the dataset recorded in the checkpoint)")
	}
	opt.DataPath = dataPath
	if o.out == "" {
		return errors.New("train: expected an output checkpoint file (-o MODEL.ckpt), found none")
	}
	sameFile := o.resume != "" && safefile.SamePath(o.out, o.resume)
	if !sameFile && o.ensemble == 1 {
		if err := checkOutput(o.out, o.force); err != nil {
			return err
		}
	}
	ds, err := data.Read(dataPath)
	if err != nil && resumed != nil && resumed.Header.Dataset.Path == dataPath {
		return fmt.Errorf("%w (the dataset recorded in %s; give DATA to name another path to the same data)", err, o.resume)
	} else if err != nil {
		return err
	}
	if k := data.NewGrid(ds).K(); k < 2 {
		return fmt.Errorf("train: %s: expected at least 2 distinct grid points, found %d (the model learns how the snapshots change between points)", dataPath, k)
	}
	// --augment auto: the symmetries a simulated dataset's source record
	// states are applied; imported data get none.
	var autoAug []density.Symmetry
	if resumed == nil && o.augment == "auto" {
		if sm, err := ising.ParseSourceMeta(ds.Meta); err == nil {
			autoAug = sm.Symmetries()
			opt.Settings.Augment = autoAug
		}
	}
	stdout, stderr := cmd.OutOrStdout(), cmd.ErrOrStderr()
	ctx, stop := signalContext()
	defer stop()
	if o.ensemble > 1 {
		err := ensemble.Train(ctx, stdout, ds, opt, ensemble.Flags{Size: o.ensemble, Member: o.member, NoResample: !o.bag, Out: o.out, Force: o.force, Quiet: o.quiet})
		if errors.Is(err, train.ErrInterrupted) {
			return fmt.Errorf("%w: %w", err, errInterrupted)
		}
		return err
	}
	var bar *progress.Bar
	opt.Start = func(perEpoch, epochs int) {
		// Notes only once the settings and data have passed every check, so
		// a bad input gets its one-line error alone.
		if resumed == nil {
			for _, n := range ising.AugmentNotes(ds.Meta, opt.Settings.Augment) {
				fmt.Fprintf(stderr, "tidemark: train: note: %s\n", n)
			}
			if len(autoAug) > 0 {
				fmt.Fprintf(stderr, "tidemark: train: note: augmenting with %s, the symmetries this dataset's source record states (--augment auto)\n", density.JoinSymmetries(autoAug, ","))
			}
		}
		bar = progress.New(perEpoch*epochs, "train", o.quiet)
		if !o.quiet {
			what := "training"
			if resumed != nil {
				what = fmt.Sprintf("resuming after epoch %d:", resumed.Header.Optimizer.Epoch)
			}
			fmt.Fprintf(stdout, "%s %d snapshots per epoch, up to %d epochs\n", what, perEpoch, epochs)
		}
	}
	opt.Progress = func(n int) { bar.Add(n) }
	opt.Warn = func(msg string) { fmt.Fprintf(stderr, "tidemark: train: %s\n", msg) }
	written := false
	opt.SaveShare = 0.05 // checkpoints take at most 5% of the wall time
	opt.OnEpoch = func(m checkpoints.EpochMetrics, ck *checkpoints.Checkpoint) error {
		if !o.quiet {
			mark := ""
			if ck.Header.BestEpoch == m.Epoch {
				mark = "  *best"
			}
			line := fmt.Sprintf("epoch %4d  train %.5f  val %s bits/site  %8.0f samples/s  lr %.3g%s\n",
				m.Epoch, m.TrainBitsPerSite, checkpoints.WithError(m.ValBitsPerSite, m.ValStdErrBitsPerSite, 5), m.SamplesPerS, m.LR, mark)
			io.WriteString(stdout, line)
		}
		if ck.Best == nil { // no save due
			return nil
		} else if err := ck.Save(o.out, written || sameFile || o.force); err != nil {
			return err
		}
		written = true
		return nil
	}
	ck, err := train.Run(ctx, ds, opt)
	bar.Done()
	if errors.Is(err, train.ErrInterrupted) && ck != nil {
		if serr := ck.Save(o.out, written || sameFile || o.force); serr != nil {
			return fmt.Errorf("train: stopped, and saving the state failed: %v: %w", serr, errInterrupted)
		}
		return fmt.Errorf("train: stopped; saved the state after epoch %d to %s (continue with: tidemark train %s --resume %s): %w",
			ck.Header.Optimizer.Epoch, o.out, shellQuote(dataPath), shellQuote(o.out), errInterrupted)
	}
	if err != nil {
		if written {
			return fmt.Errorf("train: %w (the last saved epoch is in %s)", err, o.out)
		}
		return fmt.Errorf("train: %w", err)
	}
	if err := ck.Save(o.out, written || sameFile || o.force); err != nil {
		return err
	}
	if !o.quiet {
		ck.WriteOutcome(stdout, o.out)
	}
	return nil
}
