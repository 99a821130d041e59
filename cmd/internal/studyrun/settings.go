package studyrun

import (
	"crypto/sha256"
	"encoding/binary"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"github.com/BurntSushi/toml"

	"tidemark/data/chain"
	"tidemark/data/ising"
	"tidemark/indicator"
	"tidemark/indicator/scaling"
	"tidemark/indicator/study"
	"tidemark/train"
)

// Defaults of the optional keys.
const (
	defaultScanBootstrap        = 100
	defaultExtrapolateBootstrap = 1000
)

// check fills in defaults and refuses values no stage can use, naming the
// key; each stage's own check runs on the library settings built below.
func (st *Study) check() *keyErr {
	s := &st.System
	switch s.Kind {
	case KindIsing, KindChain, KindImport:
	default:
		return bad("system", "kind", `expected "ising", "chain" or "import", found %q`, s.Kind)
	}
	if len(s.Sizes) == 0 {
		return bad("system", "sizes", "expected a list of system sizes like [8, 12, 16], found none")
	}
	seen := map[int]bool{}
	for _, l := range s.Sizes {
		if l < 2 || seen[l] {
			return bad("system", "sizes", "expected distinct sizes of at least 2, found %v", s.Sizes)
		}
		seen[l] = true
	}
	if s.Kind == KindImport {
		if len(s.Datasets) != len(s.Sizes) {
			return bad("system", "datasets", "expected one dataset per size (%d), found %d", len(s.Sizes), len(s.Datasets))
		}
		for _, d := range s.Datasets {
			path := d
			if !filepath.IsAbs(path) {
				path = filepath.Join(filepath.Dir(st.path), d)
			}
			if _, err := os.Stat(path); err != nil {
				return bad("system", "datasets", "expected dataset files (paths relative to the study file), found %w", err)
			}
		}
	} else {
		if len(s.Datasets) > 0 {
			return bad("system", "datasets", "expected no datasets for kind %q (only kind \"import\" reads files)", s.Kind)
		}
		for _, l := range s.Sizes {
			var err error
			if s.Kind == KindIsing {
				_, err = st.isingRequest(l).Config()
			} else {
				_, err = st.chainRequest(l).Prepare()
			}
			if err != nil {
				key, _, _ := strings.Cut(err.Error(), ":")
				k := studyKey(key)
				msg := strings.TrimPrefix(err.Error(), key+": ")
				if k == "sizes" || k == "samples" {
					msg = fmt.Sprintf("at size %d: %s", l, msg)
				}
				return &keyErr{key: toml.Key{"system", k}, err: fmt.Errorf("key system.%s: %s", k, msg)}
			}
		}
	}
	m := &st.Model
	if m.Ensemble == 0 {
		m.Ensemble = 1
	}
	if m.Ensemble < 1 {
		return bad("model", "ensemble", "expected at least 1 model per size, found %d", m.Ensemble)
	}
	if m.Threads == 0 {
		m.Threads = 1
	}
	if m.Threads < 1 {
		return bad("model", "threads", "expected at least 1 thread, found %d", m.Threads)
	}
	for _, h := range m.Hidden {
		if h < 1 {
			return bad("model", "hidden", "expected widths of at least 1 unit, found %v", m.Hidden)
		}
	}
	if _, err := st.trainSettings(0); err != nil {
		return keyErrOf("model", err)
	}
	sc := &st.Scan
	if sc.Bootstrap == nil {
		b := defaultScanBootstrap
		sc.Bootstrap = &b
	}
	if sc.Threads == 0 {
		sc.Threads = 1
	}
	if sc.Window == 0 {
		sc.Window = 1
	}
	if e := sc.check(); e != nil {
		return e
	}
	if cfg, err := st.scanConfig(0); err != nil {
		return bad("scan", "threads", "%v", err)
	} else if err := cfg.CheckSettings(); err != nil {
		return keyErrOf("scan", err)
	}
	e := &st.Extrapolate
	if e.Bootstrap == nil {
		b := defaultExtrapolateBootstrap
		e.Bootstrap = &b
	}
	if e.Enabled == nil {
		// By default the study extrapolates when it has the sizes the fit
		// needs: 3 with ν given, 4 when ν is fitted (5 with ω).
		on := len(s.Sizes) >= max(3, scaling.MinSizes(st.fitOptions(0)))
		e.Enabled = &on
	}
	if *e.Enabled {
		opt := st.fitOptions(0)
		if err := opt.Check(); err != nil {
			return keyErrOf("extrapolate", err)
		}
		if need := max(3, scaling.MinSizes(opt)); len(s.Sizes) < need {
			return bad("extrapolate", "enabled", "the extrapolation needs at least %d sizes with these settings, found %d (set nu, or enabled = false)", need, len(s.Sizes))
		}
	}
	return nil
}

// keyErrOf turns a library error that begins with an option's name
// ("epochs: …") into an error naming the study file's key.
func keyErrOf(section string, err error) *keyErr {
	key, _, _ := strings.Cut(err.Error(), ":")
	k := studyKey(key)
	return &keyErr{key: toml.Key{section, k}, err: fmt.Errorf("key %s.%s:%s", section, k, strings.TrimPrefix(err.Error(), key+":"))}
}

// studyKey turns the option name a library error begins with into the
// study file's key.
func studyKey(option string) string {
	switch option {
	case "size", "size-y", "sites":
		return "sizes"
	case "exact-samples":
		return "exact_samples"
	case "val-frac":
		return "val_frac"
	}
	return option
}

// deriveSeed returns the seed of one unit: the first 8 bytes of the SHA-256
// of the study seed and the unit's name, so that it depends on what the
// unit computes and never on how units are grouped or ordered.
func deriveSeed(seed uint64, name string) uint64 {
	h := sha256.Sum256(fmt.Appendf(nil, "tidemark study seed %d unit %s", seed, name))
	return binary.LittleEndian.Uint64(h[:8])
}

func (st *Study) isingRequest(l int) ising.Request {
	s := st.System
	jx, jy := 1.0, 1.0
	if s.Jx != nil {
		jx = *s.Jx
	}
	if s.Jy != nil {
		jy = *s.Jy
	}
	return ising.Request{Lx: l, Grid: s.Grid, Samples: s.Samples,
		Fixed:      ising.Couplings{T: s.Temperature, Jx: jx, Jy: jy, H: s.Field},
		Enumerated: s.ExactSamples, Seed: deriveSeed(s.Seed, fmt.Sprintf("simulate/L%d", l)), Threads: 1}
}

func (st *Study) chainRequest(l int) chain.Request {
	s := st.System
	solver, err := chain.ParseSolver(s.Solver)
	if err != nil {
		solver = chain.Solver(-1) // Prepare refuses it below with its own message
	}
	return chain.Request{Sites: l, Hamiltonian: s.Hamiltonian, Grid: s.Grid, Basis: s.Basis, Sector: s.Sector,
		Samples: s.Samples, Solver: solver, Seed: deriveSeed(s.Seed, fmt.Sprintf("simulate/L%d", l)), Threads: 1}
}

// trainSettings returns the settings of one ensemble member trained with seed.
func (st *Study) trainSettings(seed uint64) (train.Settings, error) {
	m := st.Model
	ts := train.DefaultSettings()
	ts.Arch.Precision = "float32" // train's default, as is the augmentation (trainUnit)
	if len(m.Hidden) > 0 {
		ts.Arch.Hidden = m.Hidden
	}
	if m.Arch != "" {
		ts.Arch.Kind = train.ArchKind(m.Arch)
	}
	if m.Epochs != 0 {
		ts.Epochs = m.Epochs
	}
	if m.Batch != 0 {
		ts.Batch = m.Batch
	}
	if m.LR != 0 {
		ts.LR = m.LR
		ts.MinLR = min(ts.MinLR, ts.LR)
	}
	if m.Patience != 0 {
		ts.Patience = m.Patience
	}
	if m.ValFrac != 0 {
		ts.ValFrac = m.ValFrac
	}
	spec := m.Augment
	if spec == "auto" {
		spec = "" // the dataset's own symmetries, chosen by trainUnit
	}
	aug, err := train.ParseAugment(spec)
	if err != nil {
		return ts, err
	}
	ts.Augment = aug
	ts.Seed, ts.Threads = seed, m.Threads
	return ts, ts.Validate()
}

// scanConfig returns the scan settings of one size, seeded with seed.
func (st *Study) scanConfig(seed uint64) (indicator.Config, error) {
	inds, err := study.ParseIndicators(strings.Join(st.Scan.Indicators, ","))
	if err != nil {
		return indicator.Config{}, err
	}
	if st.Scan.Threads < 1 {
		return indicator.Config{}, fmt.Errorf("expected at least 1 thread, found %d", st.Scan.Threads)
	}
	return indicator.Config{Indicators: inds, Refine: 1, ModelSamples: study.ScanModelSamples,
		Bootstrap: *st.Scan.Bootstrap, Window: st.Scan.Window, Threads: st.Scan.Threads, Seed: seed}, nil
}

func (st *Study) fitOptions(seed uint64) scaling.FitOptions {
	e := st.Extrapolate
	return scaling.FitOptions{Nu: e.Nu, Omega: e.Omega, Bootstrap: *e.Bootstrap, Seed: seed}
}
