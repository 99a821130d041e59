package check

import (
	"fmt"
	"io"

	"tidemark/checkpoints"
	"tidemark/data"
	"tidemark/data/density"
)

// Result is a report of Compare: a *Report, a *KaufmanReport or a
// *SampledReport.
type Result interface {
	// WriteText prints the report as a table with its summary lines.
	WriteText(w io.Writer) error
}

// Compare compares the best weights of the checkpoint ck (read from
// ckPath) with the exact reference of the dataset ds (read from dataPath,
// and checked to fit ck): for a zero-field Ising lattice too large to
// enumerate by Kaufman, for another reference that cannot list its states
// by Sampled, otherwise by Enumerate on threads goroutines. progress, if
// set, is called with the stage and its number of steps. It refuses, saying
// why, a dataset with no exact reference.
func Compare(ck *checkpoints.Checkpoint, ckPath string, ds *data.Dataset, dataPath string, threads int, progress func(stage string, total int) func(int)) (Result, error) {
	sameData := checkpoints.Fingerprint(ds) == ck.Header.Dataset.Fingerprint
	src, err := density.ReferenceFor(ds.Meta)
	if err != nil {
		return nil, fmt.Errorf("%s has no exact reference to compare with: %w", dataPath, err)
	}
	if en, ok := src.(density.Enumerable); !ok || !en.Enumerable() {
		// Too many states to sum over: compare the model's cross-entropy
		// with the reference's exact entropy where it has one (the
		// zero-field Ising lattice, Kaufman), otherwise with the entropy
		// estimated from the reference's log p of the dataset's samples.
		m, merr := ck.Model()
		if merr != nil {
			return nil, fmt.Errorf("%s: %w", ckPath, merr)
		}
		if _, exact := src.(density.EntropySource); exact {
			rep, ok, kerr := Kaufman(m, ds, ck.Header.HeldOut)
			if kerr != nil {
				return nil, kerr
			}
			if ok {
				rep.Checkpoint, rep.Data, rep.SameData = ckPath, dataPath, sameData
				if rep.Response, kerr = MeasureResponse(m, src, ds); kerr != nil {
					return nil, kerr
				}
				return rep, nil
			}
		}
		rep, serr := Sampled(m, src, ds, ck.Header.HeldOut)
		if serr != nil {
			return nil, fmt.Errorf("%s: %w", dataPath, serr)
		}
		rep.Checkpoint, rep.Data, rep.SameData = ckPath, dataPath, sameData
		if rep.Response, serr = MeasureResponse(m, src, ds); serr != nil {
			return nil, fmt.Errorf("%s: %w", dataPath, serr)
		}
		return rep, nil
	}
	states := density.States(ds.Meta.Alphabet, ds.N)
	if states < 0 {
		return nil, fmt.Errorf("%s: %d^%d states exceed the limit of %d that check enumerates", dataPath, ds.Meta.Alphabet, ds.N, density.MaxDivergenceStates)
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
	if rep.Response, err = MeasureResponse(m, src, ds); err != nil {
		return nil, err
	}
	return rep, nil
}
