package checkpoints

import (
	"fmt"
	"path/filepath"
	"strings"
)

// EnsembleMember records a checkpoint's place in an ensemble of models
// trained on bootstrap resamples of one dataset's training snapshots
// (bagging: L. Breiman, Machine Learning 24, 123 (1996)).
type EnsembleMember struct {
	// Size is the number of members the ensemble was trained with.
	Size int `json:"size"`
	// Member is this member's index, 1 to Size.
	Member int `json:"member"`
	// BaseSeed is the --seed of the ensemble: it draws the validation
	// split, shared by every member, and the members' own seeds derive
	// from it and Member.
	BaseSeed uint64 `json:"base_seed"`
	// BagSeed seeds the bootstrap resample of this member's training
	// snapshots (drawn per grid point, with replacement).
	BagSeed uint64 `json:"bag_seed"`
	// NoResample means the member trained on all the training snapshots
	// (an ensemble that differs by seed only); BagSeed is then unused.
	NoResample bool `json:"no_resample,omitempty"`
}

// Check reports an ensemble record that cannot be right.
func (e *EnsembleMember) Check() error {
	if e == nil {
		return nil
	}
	if e.Size < 1 || e.Member < 1 || e.Member > e.Size {
		return fmt.Errorf("ensemble: expected member 1 to size, found member %d of %d", e.Member, e.Size)
	}
	return nil
}

// MemberPath names the file of member k (1-based) of an ensemble saved
// under out: member 1 is out itself, so that one name stands for the
// whole ensemble and every tool that reads one model reads member 1;
// member k ≥ 2 is out with ".e<k>" before its extension ("m.ckpt" →
// "m.e2.ckpt").
func MemberPath(out string, k int) string {
	if k <= 1 {
		return out
	}
	ext := filepath.Ext(out)
	return fmt.Sprintf("%s.e%d%s", strings.TrimSuffix(out, ext), k, ext)
}

// LoadEnsemble loads the model saved under path and, when it is member 1
// of an ensemble, the other members from their MemberPath files, each
// checked to be the member it should be of the same ensemble (same size,
// base seed and training data). It returns the checkpoints in member
// order and their file names.
func LoadEnsemble(path string) ([]*Checkpoint, []string, error) {
	first, err := Load(path)
	if err != nil {
		return nil, nil, err
	}
	cks, paths := []*Checkpoint{first}, []string{path}
	e := first.Header.Ensemble
	if e == nil || e.Member != 1 {
		return cks, paths, nil
	}
	for k := 2; k <= e.Size; k++ {
		p := MemberPath(path, k)
		ck, err := Load(p)
		if err != nil {
			return nil, nil, fmt.Errorf("%s is member 1 of an ensemble of %d, and member %d is missing or unreadable: %w", path, e.Size, k, err)
		}
		f := ck.Header.Ensemble
		if f == nil || f.Member != k || f.Size != e.Size || f.BaseSeed != e.BaseSeed || ck.Header.Dataset.Fingerprint != first.Header.Dataset.Fingerprint {
			return nil, nil, fmt.Errorf("%s: expected member %d of the ensemble of %s (size %d, base seed %d, the same data), found %s", p, k, path, e.Size, e.BaseSeed, describeMember(ck))
		}
		cks, paths = append(cks, ck), append(paths, p)
	}
	return cks, paths, nil
}

func describeMember(ck *Checkpoint) string {
	e := ck.Header.Ensemble
	if e == nil {
		return "a single model"
	}
	return fmt.Sprintf("member %d of %d (base seed %d, data %.12s…)", e.Member, e.Size, e.BaseSeed, ck.Header.Dataset.Fingerprint)
}
