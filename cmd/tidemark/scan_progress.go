package main

import (
	"context"

	"tidemark/cmd/internal/progress"
	"tidemark/data"
	"tidemark/data/density"
	"tidemark/indicator"
	"tidemark/indicator/study"
)

// stageBars returns a progress callback of the shape indicator.Config.Progress
// takes that draws one bar per stage (none when quiet), finishing the
// previous bar when the next stage starts, and a function that finishes the
// last one.
func stageBars(quiet bool) (start func(stage string, total int) func(int), done func()) {
	var bar *progress.Bar
	done = func() {
		bar.Done()
		bar = nil
	}
	start = func(stage string, total int) func(int) {
		done()
		bar = progress.New(total, stage, quiet)
		return bar.Func()
	}
	return start, done
}

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
