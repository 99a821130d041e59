// Package ensemble runs train --ensemble: it trains the members of an
// ensemble (train.RunEnsemble), shows one progress bar for them all, saves
// member k to checkpoints.MemberPath(OUT, k) after every epoch and prints
// one line per member.
package ensemble

import (
	"context"
	"errors"
	"fmt"
	"io"
	"sync"

	"tidemark/checkpoints"
	"tidemark/cmd/internal/progress"
	"tidemark/data"
	"tidemark/data/safefile"
	"tidemark/train"
)

// Flags are the settings of train --ensemble beside train.Options.
type Flags struct {
	// Size is --ensemble, Member --member (0: all members).
	Size, Member int
	// NoResample is --bag=false: members differ by seed only.
	NoResample bool
	// Out is -o: member 1's file, which names the others.
	Out          string
	Force, Quiet bool
}

// Train trains the members o names of an ensemble of o.Size with the base
// options opt and saves them. An interruption returns an error wrapping
// train.ErrInterrupted, after each member's last completed epoch is saved.
func Train(ctx context.Context, stdout io.Writer, ds *data.Dataset, opt train.Options, o Flags) error {
	e, n := train.Ensemble{Size: o.Size, NoResample: o.NoResample}, o.Size
	if o.Member > 0 {
		e.Members, n = []int{o.Member}, 1
	}
	// The threads are shared as if all members trained together, so that
	// --member k gives the member the ensemble run gives.
	par, each := train.SplitThreads(opt.Settings.Threads, o.Size)
	e.Parallel, opt.Settings.Threads = par, each
	for k := 1; k <= o.Size; k++ {
		if o.Member == 0 || o.Member == k {
			if err := safefile.CheckWritable(checkpoints.MemberPath(o.Out, k), o.Force); err != nil {
				return err
			}
		}
	}
	var mu sync.Mutex
	var bar *progress.Bar
	opt.Start = func(perEpoch, epochs int) {
		mu.Lock()
		defer mu.Unlock()
		if bar == nil {
			bar = progress.New(perEpoch*epochs*n, "train", o.Quiet)
			if !o.Quiet {
				how := "on bootstrap resamples"
				if o.NoResample {
					how = "differing by seed only"
				}
				fmt.Fprintf(stdout, "training an ensemble of %d members %s (%d at a time, %d threads each), %d snapshots per member and epoch, up to %d epochs\n", o.Size, how, par, each, perEpoch, epochs)
			}
		}
	}
	opt.Progress = func(n int) { mu.Lock(); bar.Add(n); mu.Unlock() }
	e.Each = func(k int, mo *train.Options) {
		path, written := checkpoints.MemberPath(o.Out, k), false
		mo.OnEpoch = func(_ checkpoints.EpochMetrics, ck *checkpoints.Checkpoint) error {
			err := ck.Save(path, written || o.Force)
			written = written || err == nil
			return err
		}
	}
	cks, err := train.RunEnsemble(ctx, ds, opt, e)
	bar.Done()
	if errors.Is(err, train.ErrInterrupted) {
		return fmt.Errorf("train: stopped; each member's last completed epoch is saved in its file (continue one with --resume FILE): %w", train.ErrInterrupted)
	} else if err != nil {
		return fmt.Errorf("train: %w", err)
	}
	for _, ck := range cks {
		h := ck.Header
		path := checkpoints.MemberPath(o.Out, h.Ensemble.Member)
		if err := ck.Save(path, true); err != nil {
			return err
		}
		if !o.Quiet {
			fmt.Fprintf(stdout, "member %d: ", h.Ensemble.Member)
			ck.WriteOutcome(stdout, path)
		}
	}
	return nil
}
