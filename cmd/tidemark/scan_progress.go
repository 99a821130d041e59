package main

import (
	"context"

	"tidemark/cmd/internal/progress"
	"tidemark/data"
	"tidemark/data/density"
	"tidemark/indicator"
	"tidemark/indicator/study"
)

// stageBars draws one progress bar per stage (progress.Stages).
var stageBars = progress.Stages

// scanWithProgress runs study.Scan with one progress bar per stage (none
// when quiet; cfg.Progress is replaced) until it finishes or ctx is done. A
// scan writes nothing until it is complete, so stopping it loses nothing:
// stopped reports that ctx ended it first.
func scanWithProgress(ctx context.Context, sources []density.Source, ds *data.Dataset, cfg indicator.Config, quiet bool) (res *indicator.Result, stopped bool, err error) {
	var done func()
	cfg.Progress, done = stageBars(quiet)
	defer done()
	return study.Scan(ctx, sources, ds, cfg)
}
