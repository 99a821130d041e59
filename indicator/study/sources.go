package study

import (
	"context"
	"errors"
	"fmt"
	"strconv"
	"strings"

	"tidemark/checkpoints"
	"tidemark/data"
	"tidemark/data/density"
	"tidemark/data/ising"
	"tidemark/indicator"
	"tidemark/train"
)

// SourceKind returns the kind of density source a scan asked for with
// exact (--exact), histogram (--histogram) and models model files: exactly
// one of them, except that exact beside models scores the same data with
// both (withExact) so the exact curves are drawn beside the model's.
func SourceKind(exact, histogram bool, models int) (kind string, withExact bool, err error) {
	withExact = exact && models > 0
	var kinds []string
	for k, given := range map[string]bool{SourceExact: exact && !withExact, SourceHistogram: histogram, SourceModel: models > 0} {
		if given {
			kinds = append(kinds, k)
		}
	}
	if len(kinds) != 1 {
		return "", false, errors.New("expected exactly one density source: --exact, --histogram or --model FILE.ckpt (--exact may join --model, to draw both)")
	}
	return kinds[0], withExact, nil
}

// Kinds of density source a scan uses.
const (
	SourceExact     = "exact"     // the exact reference recorded in the dataset
	SourceHistogram = "histogram" // the empirical frequencies of the snapshots
	SourceModel     = "model"     // trained models
)

// Sources opens the density sources of a scan of the dataset ds read from
// dataPath: its exact reference, the histogram of its snapshots, or the
// best weights of each checkpoint in models, each checked against ds
// (sites, alphabet, lattice, parameter names). A model file that is member
// 1 of an ensemble (train --ensemble) stands for the whole ensemble: its
// other members are read from their checkpoints.MemberPath files.
func Sources(kind string, ds *data.Dataset, dataPath string, models []string) ([]density.Source, error) {
	switch kind {
	case SourceExact:
		src, err := density.ReferenceFor(ds.Meta)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", dataPath, err)
		}
		return []density.Source{src}, nil
	case SourceHistogram:
		h, err := density.NewHistogram(ds)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", dataPath, err)
		}
		return []density.Source{h}, nil
	case SourceModel:
		sources, _, err := ModelSources(ds, models)
		return sources, err
	}
	return nil, fmt.Errorf("expected a density source %s, %s or %s, found %q", SourceExact, SourceHistogram, SourceModel, kind)
}

// ModelSources opens the best weights of each checkpoint in models (an
// ensemble's member 1 brings all its members) as the sources of a scan of
// ds, and returns the rows of ds that none of them trained on
// (train.UnseenRows; nil when ds is not the data they were trained on).
func ModelSources(ds *data.Dataset, models []string) ([]density.Source, []bool, error) {
	var sources []density.Source
	var unseen []bool
	moot := false // some model never saw ds: every row is unseen by it
	fp, err := checkpoints.FingerprintBlocks(context.Background(), ds)
	if err != nil {
		return nil, nil, err
	}
	for _, name := range models {
		cks, paths, err := checkpoints.LoadEnsemble(name)
		if err != nil {
			return nil, nil, err
		}
		for i, ck := range cks {
			p := paths[i]
			if err := ck.CheckDataset(ds); err != nil {
				return nil, nil, fmt.Errorf("%s does not fit the dataset: %w", p, err)
			}
			m, err := ck.Model()
			if err != nil {
				return nil, nil, fmt.Errorf("%s: %w", p, err)
			}
			sources = append(sources, m)
			if ck.Header.Dataset.Fingerprint != fp {
				moot = true
				continue
			}
			u, err := train.UnseenRowsOfTrainingData(ds, ck)
			if err != nil {
				return nil, nil, fmt.Errorf("%s: %w", p, err)
			}
			switch {
			case unseen == nil:
				unseen = u
			default:
				for r := range unseen {
					unseen[r] = unseen[r] && u[r]
				}
			}
		}
	}
	if moot {
		unseen = nil
	}
	return sources, unseen, nil
}

// ExactNote returns, for a model scan of an Ising dataset with an exact
// reference, a note that says how to compare with it: a misfit of the
// model shows only in that comparison, not in the bootstrap errors. It
// returns "" otherwise.
func ExactNote(kind string, ds *data.Dataset, dataPath string) string {
	if sm, err := ising.ParseSourceMeta(ds.Meta); kind == SourceModel && err == nil && sm.HasReference() {
		return fmt.Sprintf("this dataset has an exact reference: `tidemark scan --data %s --exact` scores the same snapshots with the exact density; a misfit of the model (a spurious peak in the ordered phase, say) shows only in that comparison, not in the bootstrap errors", dataPath)
	}
	return ""
}

// SeveralMaximaNote returns, for a 1-D scan by a single model (sources is
// the number of models), a note naming every indicator with more than one
// maximum above the noise: a lower maximum can be the one model's own
// error, which its bootstrap errors do not include. It returns ""
// otherwise (an ensemble's spread, or an exact density, has no such
// blind spot).
func SeveralMaximaNote(kind string, sources int, res *indicator.Result) string {
	if kind != SourceModel || sources != 1 || len(res.Names) != 1 {
		return ""
	}
	var parts []string
	for _, c := range res.Curves {
		var at []string
		for _, p := range c.Peaks {
			if p.Tested {
				at = append(at, data.FormatPoint(res.Names, p.At))
			}
		}
		if len(at) > 1 {
			parts = append(parts, fmt.Sprintf("%s (%s)", c.Name, strings.Join(at, ", ")))
		}
	}
	if len(parts) == 0 {
		return ""
	}
	return fmt.Sprintf("one model found more than one maximum above the noise for %s: a lower maximum can be this model's own error rather than the data's, which its error bars do not include (on a 32×32 Ising dataset one of two models had a second pbm and fisher maximum in the ordered phase, and the ensemble of both had none; bench/RESULTS.md); train --ensemble 2 and scan again, or compare with --exact where it exists, before reading it as a second transition", strings.Join(parts, ", "))
}

// ParseIndicators parses a comma-separated list of indicator names; ""
// and "all" give every indicator.
func ParseIndicators(s string) ([]string, error) {
	if s == "" || s == "all" {
		return indicator.AllIndicators, nil
	}
	var out []string
	for _, n := range strings.Split(s, ",") {
		n = strings.TrimSpace(n)
		ok := false
		for _, a := range indicator.AllIndicators {
			ok = ok || a == n
		}
		if !ok {
			return nil, fmt.Errorf("expected all or some of %s, found %q", strings.Join(indicator.AllIndicators, ","), n)
		}
		out = append(out, n)
	}
	return out, nil
}

// ParseSLRegions parses the end regions of supervised learning, two
// parameter ranges "lo:hi,lo:hi"; "" gives nil (the default regions).
func ParseSLRegions(s string) (*indicator.SLRegions, error) {
	if s == "" {
		return nil, nil
	}
	parts := strings.Split(s, ",")
	if len(parts) != 2 {
		return nil, fmt.Errorf(`expected two ranges "lo:hi,lo:hi", found %q`, s)
	}
	var r indicator.SLRegions
	for i, p := range parts {
		ab := strings.Split(strings.TrimSpace(p), ":")
		if len(ab) != 2 {
			return nil, fmt.Errorf(`expected a range "lo:hi", found %q`, p)
		}
		var v [2]float64
		for j, x := range ab {
			f, err := strconv.ParseFloat(strings.TrimSpace(x), 64)
			if err != nil {
				return nil, fmt.Errorf("expected a number, found %q", x)
			}
			v[j] = f
		}
		if v[0] > v[1] {
			return nil, fmt.Errorf("range %q has lo > hi", p)
		}
		if i == 0 {
			r.A = v
		} else {
			r.B = v
		}
	}
	return &r, nil
}
