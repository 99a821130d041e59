package train

import (
	"fmt"

	"tidemark/checkpoints"
	"tidemark/data"
)

// UnseenRows reports, for every snapshot of ds, whether the model saved in
// ck was not trained on it: the snapshots of its validation split and of
// its held-out grid points, which the run draws again here from the seed,
// validation fraction and --holdout text its checkpoint records. An
// ensemble's members share one split, so the rows are the same for all of
// them. It returns nil when ds is not the dataset ck was trained on (its
// fingerprint differs): then no snapshot of ds was trained on.
func UnseenRows(ds *data.Dataset, ck *checkpoints.Checkpoint) ([]bool, error) {
	if checkpoints.Fingerprint(ds) != ck.Header.Dataset.Fingerprint {
		return nil, nil
	}
	return UnseenRowsOfTrainingData(ds, ck)
}

// UnseenRowsOfTrainingData is UnseenRows for a dataset the caller has
// already found to be ck's training data (same fingerprint), so that
// checking the members of an ensemble hashes the data once.
func UnseenRowsOfTrainingData(ds *data.Dataset, ck *checkpoints.Checkpoint) ([]bool, error) {
	st := SavedSettings(ck)
	g := data.NewGrid(ds)
	held, err := ParseHoldout(ck.Header.HoldoutSpec, g)
	if err != nil {
		return nil, fmt.Errorf("unseen rows: the checkpoint's held-out points: %w", err)
	}
	val, _ := splitRows(g, held, st)
	unseen := make([]bool, ds.M)
	for _, k := range held {
		for _, m := range g.Index[k] {
			unseen[m] = true
		}
	}
	for _, rows := range val {
		for _, m := range rows {
			unseen[m] = true
		}
	}
	return unseen, nil
}
