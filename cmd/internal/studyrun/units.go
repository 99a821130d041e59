package studyrun

import (
	"context"
	"fmt"
	"os"
	"path/filepath"

	"tidemark/data"
	"tidemark/data/ising"
	"tidemark/indicator/report"
	"tidemark/indicator/report/inputs"
	"tidemark/indicator/study"
	"tidemark/train"
)

// work is what a unit needs and makes: the settings and input files its
// fingerprint covers, its outputs (relative to the output folder) and the
// function that makes them.
type work struct {
	settings any
	inputs   []string
	outputs  []string
	run      func(ctx context.Context) error
}

// Software is recorded in the checkpoints the study trains.
var Software = "tidemark"

// work describes unit u of the plan.
func (p *Plan) work(u Unit) (*work, error) {
	st := p.Study
	abs := func(rel string) string { return filepath.Join(p.Out, rel) }
	switch u.Stage {
	case StageSimulate:
		if st.System.Kind == KindChain {
			req := st.chainRequest(u.Size)
			out := dataPath(u.Size)
			return &work{settings: req, outputs: []string{out}, run: func(ctx context.Context) error {
				plan, err := req.Prepare()
				if err != nil {
					return err
				}
				res, err := plan.Run(ctx, nil)
				if err != nil {
					return err
				}
				return writeDataset(res.Dataset, abs(out))
			}}, nil
		}
		req := st.isingRequest(u.Size)
		out := pointPath(u.Size, u.Point)
		return &work{settings: []any{req, u.Point}, outputs: []string{out}, run: func(ctx context.Context) error {
			return simulatePoint(ctx, req, u.Point, abs(out))
		}}, nil
	case StageGather:
		req := st.isingRequest(u.Size)
		var ins []string
		for k := 0; k < p.Points; k++ {
			ins = append(ins, abs(pointPath(u.Size, k)))
		}
		out := dataPath(u.Size)
		return &work{settings: req, inputs: ins, outputs: []string{out}, run: func(ctx context.Context) error {
			return gather(req, ins, abs(out))
		}}, nil
	case StageTrain:
		// The ensemble's seed comes from the size alone; each member's
		// own seeds from it and the member index (train.MemberSettings).
		seed := deriveSeed(st.System.Seed, fmt.Sprintf("train/L%d", u.Size))
		ts, err := st.trainSettings(seed)
		if err != nil {
			return nil, err
		}
		ts = memberSettings(ts, st.Model.Ensemble, u.Member)
		in, out := p.datasetOf(u.Size), modelPath(u.Size, u.Member)
		auto := st.Model.Augment == "" || st.Model.Augment == "auto"
		return &work{settings: []any{ts, u.Member, auto}, inputs: []string{in}, outputs: []string{out}, run: func(ctx context.Context) error {
			return trainUnit(ctx, in, abs(out), ts, auto)
		}}, nil
	case StageMatrix:
		in := p.datasetOf(u.Size)
		ins := []string{in}
		for m := 1; m <= st.Model.Ensemble; m++ {
			ins = append(ins, abs(modelPath(u.Size, m)))
		}
		out := matrixPath(u.Size, u.Block)
		return &work{settings: []any{u.Lo, u.Hi}, inputs: ins, outputs: []string{out}, run: func(ctx context.Context) error {
			return computeBlock(ctx, u, in, ins[1], abs(out), st.Scan.Threads)
		}}, nil
	case StageScan:
		seed := deriveSeed(st.System.Seed, u.Name)
		cfg, err := st.scanConfig(seed)
		if err != nil {
			return nil, err
		}
		in := p.datasetOf(u.Size)
		ins := []string{in}
		var rels []string
		for m := 1; m <= st.Model.Ensemble; m++ {
			ins = append(ins, abs(modelPath(u.Size, m)))
			rels = append(rels, modelPath(u.Size, m))
		}
		var blocks []string
		for _, mu := range p.Units[StageMatrix] {
			if mu.Size == u.Size {
				blocks = append(blocks, abs(matrixPath(u.Size, mu.Block)))
			}
		}
		ins = append(ins, blocks...)
		dataRel := p.datasetName(u.Size)
		out := scanDir(u.Size)
		return &work{settings: []any{st.Scan, seed}, inputs: ins, outputs: []string{out}, run: func(ctx context.Context) error {
			ds, err := data.Read(in)
			if err != nil {
				return err
			}
			// Member 1's file stands for the whole ensemble; the
			// matrix of the data comes from the blocks.
			sources, _, unseen, err := blockSources(ds, ins[1], blocks)
			if err != nil {
				return err
			}
			cfg := cfg
			cfg.Unseen = unseen
			res, _, err := study.Scan(ctx, sources, ds, cfg)
			if err != nil {
				return err
			}
			if res.Phases != nil {
				res.Phases.References = study.ExactReferences(ds, res.Layout)
			}
			if err := os.MkdirAll(filepath.Dir(abs(out)), 0o755); err != nil {
				return err
			}
			_, err = report.Write(abs(out), true, res, report.Info{Source: study.SourceModel, Data: dataRel, Models: rels,
				Refine: cfg.Refine, Seed: cfg.Seed, Page: inputs.Page(in, ins[1:1+st.Model.Ensemble])})
			return err
		}}, nil
	case StageFinish:
		var ins []string
		for _, l := range st.System.Sizes {
			ins = append(ins, abs(scanDir(l)), p.datasetOf(l))
			for m := 1; m <= st.Model.Ensemble; m++ {
				ins = append(ins, abs(modelPath(l, m)))
			}
		}
		outs := []string{summaryFile, reportFile}
		if *st.Extrapolate.Enabled {
			outs = append(outs, extrapolationDir)
		}
		return &work{settings: []any{st.Extrapolate, st.System.Sizes}, inputs: ins, outputs: outs, run: p.finish}, nil
	}
	return nil, fmt.Errorf("unknown stage %q", u.Stage)
}

// simulatePoint draws grid point k of req's grid alone, from the stream it
// has in the whole grid, into a one-point dataset at path.
func simulatePoint(ctx context.Context, req ising.Request, k int, path string) error {
	cfg, err := req.Config()
	if err != nil {
		return err
	}
	cfg.Points, cfg.FirstPoint = cfg.Points[k:k+1], uint64(k)
	res, err := ising.Simulate(ctx, cfg)
	if err != nil {
		return err
	}
	ds, err := res.Dataset(cfg, req.Grid)
	if err != nil {
		return err
	}
	return writeDataset(ds, path)
}

// gather joins the one-point datasets of req's grid, in grid order, into
// the dataset the whole grid would have given in one simulation.
func gather(req ising.Request, points []string, path string) error {
	cfg, err := req.Config()
	if err != nil {
		return err
	}
	res := &ising.Result{}
	for k, pp := range points {
		ds, err := data.Read(pp)
		if err != nil {
			return err
		}
		sm, err := ising.ParseSourceMeta(ds.Meta)
		if err != nil {
			return fmt.Errorf("%s: %w", pp, err)
		}
		if len(sm.Points) != 1 || ds.M != cfg.Samples || ds.N != cfg.Lattice.N() {
			return fmt.Errorf("%s: expected point %d alone with %d snapshots of %d sites, found %d points, %d snapshots of %d sites",
				pp, k, cfg.Samples, cfg.Lattice.N(), len(sm.Points), ds.M, ds.N)
		}
		res.States = append(res.States, ds.States...)
		res.Params = append(res.Params, ds.Params...)
		res.Points = append(res.Points, sm.Points[0])
	}
	ds, err := res.Dataset(cfg, req.Grid)
	if err != nil {
		return err
	}
	if err := ds.Validate(path); err != nil {
		return fmt.Errorf("internal check of the gathered dataset: %w", err)
	}
	return writeDataset(ds, path)
}

func writeDataset(ds *data.Dataset, path string) error {
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return err
	}
	return ds.Write(path, true)
}

// trainUnit trains the model ts describes (one ensemble member) on the
// dataset at dataPath and saves its checkpoint at out.
func trainUnit(ctx context.Context, dataPath, out string, ts train.Settings, autoAugment bool) error {
	ds, err := data.Read(dataPath)
	if err != nil {
		return err
	}
	if sm, err := ising.ParseSourceMeta(ds.Meta); autoAugment && err == nil {
		// As train --augment auto, the command's default.
		ts.Augment = sm.Symmetries()
	}
	ck, err := train.Run(ctx, ds, train.Options{Settings: ts, DataPath: dataPath, Software: Software})
	if err != nil {
		return err
	}
	if err := os.MkdirAll(filepath.Dir(out), 0o755); err != nil {
		return err
	}
	return ck.Save(out, true)
}

// memberSettings returns the settings of member m (from 1) of an ensemble
// of size models trained with base: the one place that says what a study's
// member is. It is what train --ensemble size --member m trains (its own
// seeds from base.Seed and m alone, on all the training snapshots: the
// default kind of ensemble, which measured closer to exact than bagging);
// a single model is base itself.
func memberSettings(base train.Settings, size, m int) train.Settings {
	if size < 2 {
		return base
	}
	s := train.MemberSettings(base, size, m)
	s.Member.NoResample = true
	return s
}
