package train

import (
	"cmp"
	"context"
	"errors"
	"fmt"
	"math/rand/v2"
	"sync"

	"tidemark/checkpoints"
	"tidemark/data"
)

// Member places a run in an ensemble of Size models trained on bootstrap
// resamples of the same training snapshots with different seeds (bagging:
// L. Breiman, "Bagging predictors", Machine Learning 24, 123 (1996)). The
// spread of the members' indicator curves estimates the error a single
// model adds to the bootstrap error over snapshots, which the bootstrap
// cannot see.
type Member struct {
	// Size is the number of members of the ensemble; Index this one's,
	// 1 to Size.
	Size, Index int
	// BaseSeed is the ensemble's seed: it draws the validation split, the
	// same for every member, so that no member trains on a copy of a
	// validation snapshot.
	BaseSeed uint64
	// BagSeed draws the member's bootstrap resample of the training
	// snapshots, per grid point and with replacement.
	BagSeed uint64
	// NoResample trains the member on all the training snapshots: the
	// members then differ by their seeds only.
	NoResample bool
}

// Salts that separate a member's two derived seeds.
const (
	memberSeedSalt = 0x7464_6d6b_6d65_6d62
	memberBagSalt  = 0x7464_6d6b_6261_6767
)

// deriveSeed mixes seed, k and salt with the SplitMix64 finaliser (G. L.
// Steele, D. Lea and C. H. Flood, OOPSLA 2014), so that neighbouring k give
// unrelated streams.
func deriveSeed(seed uint64, k int, salt uint64) uint64 {
	z := seed ^ salt ^ (uint64(k) * 0x9e37_79b9_7f4a_7c15)
	z = (z ^ (z >> 30)) * 0xbf58_476d_1ce4_e5b9
	z = (z ^ (z >> 27)) * 0x94d0_49bb_1331_11eb
	return z ^ (z >> 31)
}

// MemberSettings returns the settings of member k (1 to size) of an
// ensemble trained with base: base with its own seed (weights, shuffles,
// augmentation) and bag seed, both derived from base.Seed and k alone —
// never from size or from how many members train at once — so member k
// is the same model whether it is trained alone (train --member k) or with
// the others, for the same base settings and Threads.
func MemberSettings(base Settings, size, k int) Settings {
	s := base
	s.Seed = deriveSeed(base.Seed, k, memberSeedSalt)
	s.Member = &Member{Size: size, Index: k, BaseSeed: base.Seed, BagSeed: deriveSeed(base.Seed, k, memberBagSalt)}
	return s
}

func (m *Member) check() error {
	if m == nil {
		return nil
	}
	if m.Size < 1 || m.Index < 1 || m.Index > m.Size {
		return fmt.Errorf("member: expected a member 1 to %d of the ensemble, found %d", m.Size, m.Index)
	}
	return nil
}

// splitSeed is the seed of the validation split: an ensemble's base seed,
// shared by all its members, or the run's own seed.
func (s Settings) splitSeed() uint64 {
	if s.Member != nil {
		return s.Member.BaseSeed
	}
	return s.Seed
}

// bag returns the training snapshots of grid point k: train itself for a
// single model, a resample of len(train) of them drawn with replacement
// for an ensemble member. train holds only snapshots left after the
// validation split, so no validation snapshot is trained on.
func (m *Member) bag(k int, train []int) []int {
	if m == nil || m.NoResample || len(train) == 0 {
		return train
	}
	rng := rand.New(rand.NewPCG(m.BagSeed, uint64(k)))
	out := make([]int, len(train))
	for i := range out {
		out[i] = train[rng.IntN(len(train))]
	}
	return out
}

func (m *Member) record() *checkpoints.EnsembleMember {
	if m == nil {
		return nil
	}
	return &checkpoints.EnsembleMember{Size: m.Size, Member: m.Index, BaseSeed: m.BaseSeed, BagSeed: m.BagSeed, NoResample: m.NoResample}
}

func memberOf(e *checkpoints.EnsembleMember) *Member {
	if e == nil {
		return nil
	}
	return &Member{Size: e.Size, Index: e.Member, BaseSeed: e.BaseSeed, BagSeed: e.BagSeed, NoResample: e.NoResample}
}

// Ensemble configures RunEnsemble.
type Ensemble struct {
	// Size is the number of members, at least 2.
	Size int
	// Members lists the members to train (1 to Size); nil means all.
	Members []int
	// NoResample trains every member on all the training snapshots, so
	// that they differ by seed only (no bagging).
	NoResample bool
	// Parallel is the number of members trained at once (at least 1).
	// It changes no member's result.
	Parallel int
	// Each, if set, adjusts the options of member k before it starts
	// (its callbacks, say); it may be called from several goroutines.
	Each func(k int, o *Options)
}

// DefaultEnsemble is the number of members train makes by default (see
// bench/RESULTS.md, "Error bars that include the model", for why it is
// still one).
const DefaultEnsemble = 1

// CheckEnsemble reports bad values of train's --ensemble size and
// --member (0: all members); resuming says whether --resume was given.
func CheckEnsemble(size, member int, resuming bool) error {
	switch {
	case size < 1:
		return fmt.Errorf("--ensemble: expected a number of members ≥ 1, found %d", size)
	case member != 0 && (size < 2 || member < 1 || member > size):
		return fmt.Errorf("--member: expected a member 1 to --ensemble (%d, at least 2), found %d", size, member)
	case resuming && (size > 1 || member > 0):
		return errors.New("--ensemble: cannot be given with --resume; resume each member's own file (FILE.e2.ckpt for member 2)")
	}
	return nil
}

// SplitThreads shares threads among the members of an ensemble of size
// members: it returns how many members train at once and the threads of
// each (Settings.Threads).
func SplitThreads(threads, members int) (parallel, each int) {
	parallel = max(1, min(members, threads))
	return parallel, max(1, threads/parallel)
}

// RunEnsemble trains the members e names of an ensemble whose base
// settings are opt.Settings (see MemberSettings), e.Parallel at a time,
// and returns their checkpoints in the order of e.Members. When one fails
// or ctx ends the others stop too; the checkpoints of the members that got
// that far are returned with the error: the first member's own failure,
// or else an error wrapping ErrInterrupted after a cancellation, like Run.
func RunEnsemble(ctx context.Context, ds *data.Dataset, opt Options, e Ensemble) ([]*checkpoints.Checkpoint, error) {
	if opt.Resume != nil {
		return nil, errors.New("ensemble: resume a member's own checkpoint instead")
	}
	if e.Size < 2 {
		return nil, fmt.Errorf("ensemble: expected at least 2 members, found %d", e.Size)
	}
	members := e.Members
	if members == nil {
		for k := 1; k <= e.Size; k++ {
			members = append(members, k)
		}
	}
	for _, k := range members {
		if k < 1 || k > e.Size {
			return nil, fmt.Errorf("member: expected a member 1 to %d of the ensemble, found %d", e.Size, k)
		}
	}
	if err := opt.Settings.Validate(); err != nil {
		return nil, err
	}
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	cks := make([]*checkpoints.Checkpoint, len(members))
	errs := make([]error, len(members))
	sem := make(chan struct{}, max(1, e.Parallel))
	var wg sync.WaitGroup
	for i, k := range members {
		o := opt
		o.Settings = MemberSettings(opt.Settings, e.Size, k)
		o.Settings.Member.NoResample = e.NoResample
		if e.Each != nil {
			e.Each(k, &o)
		}
		// Members start in their order: the slot is taken before the
		// goroutine starts.
		sem <- struct{}{}
		wg.Add(1)
		go func() {
			defer wg.Done()
			defer func() { <-sem }()
			if ctx.Err() != nil {
				errs[i] = fmt.Errorf("member %d: %w", k, ErrInterrupted)
				return
			}
			cks[i], errs[i] = Run(ctx, ds, o)
			if errs[i] != nil {
				errs[i] = fmt.Errorf("member %d: %w", k, errs[i])
				cancel()
			}
		}()
	}
	wg.Wait()
	// A member's own failure (the first, in member order) is the error;
	// the interruptions it caused in the others are not. Without one, the
	// first interruption is.
	var stopped error
	for _, err := range errs {
		switch {
		case err == nil:
		case errors.Is(err, ErrInterrupted):
			stopped = cmp.Or(stopped, err)
		default:
			return cks, err
		}
	}
	return cks, stopped
}
