package train

import (
	"fmt"
	"reflect"
	"slices"

	"tidemark/checkpoints"
)

// SavedSettings returns the settings the run saved in ck was started with:
// its training record and the architecture of its model.
func SavedSettings(ck *checkpoints.Checkpoint) Settings {
	t, m := ck.Header.Training, ck.Header.Model
	kind, window := ArchDense, 0
	if m.Conv != nil {
		kind, window = ArchConv, m.Conv.Window
	}
	directWindow := -1 // every earlier site
	if m.DirectWindow > 0 {
		directWindow = m.DirectWindow
	}
	return Settings{
		Arch: Arch{
			Kind: kind, Window: window,
			Hidden: slices.Clone(m.Hidden), CondHidden: slices.Clone(m.CondHidden), Fourier: m.Fourier,
			Activation: m.Activation, CondActivation: m.CondActivation, Direct: m.Direct, DirectWindow: directWindow, Order: Order(t.OrderName),
			Symmetric: m.Symmetric, FiLM: m.FiLM, Precision: m.Precision,
		},
		Epochs: t.Epochs, Batch: t.Batch, LR: t.LR, MinLR: t.MinLR, Seed: t.Seed, ValFrac: t.ValFrac,
		Patience: t.Patience, Schedule: Schedule(t.Schedule), PlateauPatience: t.PlateauPatience, PlateauFactor: t.PlateauFactor,
		WeightDecay: t.WeightDecay, Clip: t.Clip, Beta1: t.Beta1, Beta2: t.Beta2, Eps: t.Eps, Threads: t.Threads,
		Augment: symmetriesOf(t.Augment), Average: t.AverageEpochs,
		Member: memberOf(ck.Header.Ensemble),
	}
}

// setting reads one setting, named as train's command-line flag, in a
// normal form: "" precision is float64, "" conditioning activation is the
// hidden layers' and no augmentation is an empty list.
var setting = map[string]func(s Settings) any{
	"arch": func(s Settings) any {
		if s.Arch.Kind == "" {
			return ArchDense
		}
		return s.Arch.Kind
	},
	"window": func(s Settings) any {
		switch {
		case s.Arch.Kind != ArchConv:
			return 0
		case s.Arch.Window == 0:
			return DefaultConvWindow
		}
		return s.Arch.Window
	},
	"hidden":      func(s Settings) any { return s.Arch.Hidden },
	"cond-hidden": func(s Settings) any { return s.Arch.CondHidden },
	"fourier":     func(s Settings) any { return s.Arch.Fourier },
	"activation":  func(s Settings) any { return s.Arch.Activation },
	"cond-activation": func(s Settings) any {
		if s.Arch.CondActivation == "" {
			return s.Arch.Activation
		}
		return s.Arch.CondActivation
	},
	"direct": func(s Settings) any { return s.Arch.Direct },
	"direct-window": func(s Settings) any {
		if !s.Arch.Direct || s.Arch.Kind == ArchConv || s.Arch.DirectWindow < 0 {
			return 0
		}
		return s.Arch.DirectWindow
	},
	"order":     func(s Settings) any { return s.Arch.Order },
	"symmetric": func(s Settings) any { return s.Arch.Symmetric },
	"film":      func(s Settings) any { return s.Arch.FiLM },
	"precision": func(s Settings) any {
		if s.Arch.Precision == "" {
			return "float64"
		}
		return s.Arch.Precision
	},
	"augment":      func(s Settings) any { return append([]string{}, symmetryNames(s.Augment)...) },
	"batch":        func(s Settings) any { return s.Batch },
	"lr":           func(s Settings) any { return s.LR },
	"min-lr":       func(s Settings) any { return s.MinLR },
	"seed":         func(s Settings) any { return s.Seed },
	"val-frac":     func(s Settings) any { return s.ValFrac },
	"schedule":     func(s Settings) any { return s.Schedule },
	"weight-decay": func(s Settings) any { return s.WeightDecay },
	"clip":         func(s Settings) any { return s.Clip },
	"average":      func(s Settings) any { return s.Average },
}

// FixedOnResume lists the settings, named as train's flags, that a resumed
// run keeps from its checkpoint.
var FixedOnResume = []string{"arch", "window", "hidden", "cond-hidden", "fourier", "activation", "cond-activation", "direct", "direct-window", "order", "symmetric", "film", "precision", "augment", "batch", "lr", "min-lr", "seed", "val-frac", "schedule", "weight-decay", "clip", "average"}

// Differences returns those of the named settings (spelled as train's
// flags, from FixedOnResume) whose values differ between a and b.
func Differences(a, b Settings, names []string) []string {
	var diff []string
	for _, n := range names {
		get, ok := setting[n]
		if !ok || !reflect.DeepEqual(get(a), get(b)) {
			diff = append(diff, n)
		}
	}
	return diff
}

// CheckResume refuses a resumed run whose settings named in changed (as
// train's flags, from FixedOnResume, and "holdout") differ from those saved
// in ck: given holds the settings and holdout the holdout spec as the
// command line states them. The error names the first flag that differs.
func CheckResume(ck *checkpoints.Checkpoint, given Settings, holdout string, changed []string) error {
	if given.Arch.DirectWindow == 0 { // the trainer's choice, made for the saved run's lattice
		given.Arch.DirectWindow = DirectWindowFor(0, ck.Header.Lattice)
		if given.Arch.DirectWindow == 0 {
			given.Arch.DirectWindow = -1
		}
	}
	diff := Differences(given, SavedSettings(ck), slices.DeleteFunc(slices.Clone(changed), func(n string) bool { return n == "holdout" }))
	if slices.Contains(changed, "holdout") && holdout != ck.Header.HoldoutSpec {
		diff = append(diff, "holdout")
	}
	if len(diff) > 0 {
		return fmt.Errorf("--%s: cannot be changed when resuming; the run keeps the settings saved", diff[0])
	}
	return nil
}

// ResumeRequest is what train's command line says about a resumed run.
type ResumeRequest struct {
	// Path is the checkpoint of --resume.
	Path string
	// Given returns the settings as the flags state them.
	Given func() (Settings, error)
	// Holdout is the --holdout text.
	Holdout string
	// Changed reports whether a flag (named without dashes) was given.
	Changed func(flag string) bool
	// Epochs, Patience and Threads are the values of their flags, used
	// when given.
	Epochs, Patience, Threads int
}

// LoadResume loads the checkpoint of a resumed run and returns what the
// run may change. Settings given again with their saved values are
// accepted, so a command line can be repeated with --resume added; any
// other fixed setting given is refused with a one-line error.
func LoadResume(q ResumeRequest) (*checkpoints.Checkpoint, *Resume, error) {
	ck, err := checkpoints.Load(q.Path)
	if err != nil {
		return nil, nil, fmt.Errorf("--resume: %w", err)
	}
	res := &Resume{From: ck}
	if q.Changed("epochs") {
		res.Epochs = q.Epochs
	}
	if q.Changed("patience") {
		res.Patience = q.Patience
	}
	if q.Changed("threads") {
		res.Threads = q.Threads
	}
	given, err := q.Given()
	if err != nil {
		return nil, nil, err
	}
	var changed []string
	for _, name := range append(FixedOnResume, "holdout") {
		if q.Changed(name) {
			changed = append(changed, name)
		}
	}
	if err := CheckResume(ck, given, q.Holdout, changed); err != nil {
		return nil, nil, fmt.Errorf("%w in %s (only --epochs, --patience and --threads may change; the others may only be repeated with their saved values)", err, q.Path)
	}
	return ck, res, nil
}
