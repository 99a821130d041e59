package check

import (
	"fmt"
	"io"

	"tidemark/checkpoints"
	"tidemark/data"
	"tidemark/data/exact"
	"tidemark/data/ising"
	"tidemark/indicator"
	"tidemark/train"
)

// Result is a report of Compare: a *Report or a *KaufmanReport.
type Result interface {
	// WriteText prints the report as a table with its summary lines.
	WriteText(w io.Writer) error
}

// Compare compares the best weights of the checkpoint ck (read from
// ckPath) with the exact reference of the dataset ds (read from dataPath,
// and checked to fit ck): for a zero-field Ising lattice too large to
// enumerate by Kaufman, otherwise by Enumerate on threads goroutines.
// progress, if set, is called with the stage and its number of steps. It
// refuses, saying why, a dataset with no exact reference that can list its
// states.
func Compare(ck *checkpoints.Checkpoint, ckPath string, ds *data.Dataset, dataPath string, threads int, progress func(stage string, total int) func(int)) (Result, error) {
	sameData := checkpoints.Fingerprint(ds) == ck.Header.Dataset.Fingerprint
	src, err := exact.FromMeta(ds.Meta)
	if _, large := src.(*ising.KaufmanSource); large {
		m, merr := ck.Model()
		if merr != nil {
			return nil, fmt.Errorf("%s: %w", ckPath, merr)
		}
		rep, ok, kerr := Kaufman(m, ds, ck.Header.HeldOut)
		if kerr != nil {
			return nil, kerr
		}
		if ok {
			rep.Checkpoint, rep.Data, rep.SameData = ckPath, dataPath, sameData
			return rep, nil
		}
	}
	if err != nil {
		return nil, fmt.Errorf("%s has no exact reference to compare with: %w", dataPath, err)
	}
	if en, ok := src.(indicator.Enumerable); !ok || !en.Enumerable() {
		return nil, fmt.Errorf("%s: the exact reference (%s) cannot list its states, so there is nothing to sum over", dataPath, ds.Meta.Generator())
	}
	states := train.States(ds.Meta.Alphabet, ds.N)
	if states < 0 {
		return nil, fmt.Errorf("%s: %d^%d states exceed the limit of %d that check enumerates", dataPath, ds.Meta.Alphabet, ds.N, train.MaxEnumeratedStates)
	}
	m, err := ck.Model()
	if err != nil {
		return nil, fmt.Errorf("%s: %w", ckPath, err)
	}
	var step func(int)
	if progress != nil {
		step = progress("check", Points(ds, ck.Header.HeldOut)*states)
	}
	rep, err := Enumerate(src, m, ds, ck.Header.HeldOut, threads, step)
	if err != nil {
		return nil, err
	}
	rep.Checkpoint, rep.Data, rep.Generator, rep.SameData = ckPath, dataPath, ds.Meta.Generator(), sameData
	return rep, nil
}
