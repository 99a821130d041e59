package study

import (
	"context"

	"tidemark/data"
	"tidemark/indicator"
)

// Scan runs indicator.Run until it finishes or ctx is done. A scan writes
// nothing, so stopping it loses nothing: stopped reports that ctx ended it
// first (its goroutines then finish in the background).
func Scan(ctx context.Context, sources []indicator.Source, ds *data.Dataset, cfg indicator.Config) (res *indicator.Result, stopped bool, err error) {
	type outcome struct {
		res *indicator.Result
		err error
	}
	ch := make(chan outcome, 1)
	go func() {
		r, e := indicator.Run(sources, ds, cfg)
		ch <- outcome{r, e}
	}()
	select {
	case oc := <-ch:
		return oc.res, false, oc.err
	case <-ctx.Done():
		return nil, true, nil
	}
}
