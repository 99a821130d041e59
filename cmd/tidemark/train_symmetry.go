package main

import (
	"fmt"
	"slices"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/data/ising"
)

// augmentNotes compares the declared --augment symmetries with those of a
// simulated Ising dataset (ising.SourceMeta.Symmetries): a declared
// symmetry the system lacks biases the model, and an undeclared one leaves
// a better fit unused. Other sources get no notes: tidemark cannot judge.
func augmentNotes(meta data.Meta, declared []density.Symmetry) []string {
	sm, err := ising.ParseSourceMeta(meta)
	if err != nil {
		return nil
	}
	has := sm.Symmetries()
	var notes []string
	for _, d := range declared {
		if !slices.Contains(has, d) {
			notes = append(notes, fmt.Sprintf("--augment %s: this dataset's Ising model (from its source record) does not have that symmetry at every grid point, so the model will learn a distribution that is not the data's; its symmetries are %s", d, density.JoinSymmetries(has, ",")))
		}
	}
	var missing []density.Symmetry
	for _, h := range has {
		if !slices.Contains(declared, h) {
			missing = append(missing, h)
		}
	}
	if len(declared) == 0 && len(missing) > 0 {
		notes = append(notes, fmt.Sprintf("this dataset's Ising model is symmetric under %s at every grid point; --augment %s usually fits it better (see README, Caution)", density.JoinSymmetries(missing, ", "), density.JoinSymmetries(missing, ",")))
	}
	return notes
}
