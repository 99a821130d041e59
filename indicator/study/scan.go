package study

import (
	"context"

	"tidemark/data"
	"tidemark/data/density"
	"tidemark/indicator"
)

// Scan runs indicator.Run until it finishes or ctx is done. A scan writes
// nothing, so stopping it loses nothing: stopped reports that ctx ended it
// first (its workers stop with it).
func Scan(ctx context.Context, sources []density.Source, ds *data.Dataset, cfg indicator.Config) (res *indicator.Result, stopped bool, err error) {
	res, err = indicator.Run(ctx, sources, ds, cfg)
	if ctx.Err() != nil {
		return nil, true, nil
	}
	return res, false, err
}
