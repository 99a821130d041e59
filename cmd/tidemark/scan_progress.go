package main

import (
	"context"

	"tidemark/cmd/internal/progress"
	"tidemark/data"
	"tidemark/data/density"
	"tidemark/indicator"
)

// scanWithProgress runs indicator.Run with one progress bar per stage (none when
// quiet; cfg.Progress is replaced) until it finishes or ctx is done. A scan
// writes nothing until it is complete, so stopping it loses nothing:
// stopped reports that ctx ended it first.
func scanWithProgress(ctx context.Context, sources []density.Source, ds *data.Dataset, cfg indicator.Config, quiet bool) (res *indicator.Result, stopped bool, err error) {
	var bars []*progress.Bar
	doneBars := func() {
		for _, b := range bars {
			b.Done()
		}
	}
	cfg.Progress = func(stage string, total int) func(int) {
		doneBars()
		b := progress.New(total, stage, quiet)
		bars = append(bars[:0], b)
		return b.Func()
	}
	type outcome struct {
		res *indicator.Result
		err error
	}
	ch := make(chan outcome, 1)
	go func() {
		r, e := indicator.Run(ctx, sources, ds, cfg)
		ch <- outcome{r, e}
	}()
	select {
	case oc := <-ch:
		doneBars()
		return oc.res, false, oc.err
	case <-ctx.Done():
		doneBars()
		return nil, true, nil
	}
}
