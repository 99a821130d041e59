package data

import (
	"context"
	"sync"
)

// ForEachPoint calls fn(k) for every grid point k = 0..n−1 on up to threads
// goroutines (≤ 0: every CPU, Threads). Which goroutine runs a point must not matter:
// generators seed point k from (seed, k). It stops handing out points once
// ctx is done and then returns ctx's error; otherwise it returns the error
// of the lowest-numbered point that failed, or nil.
func ForEachPoint(ctx context.Context, n, threads int, fn func(k int) error) error {
	jobs := make(chan int)
	errs := make([]error, n)
	var wg sync.WaitGroup
	for w := 0; w < Threads(threads); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for k := range jobs {
				if err := ctx.Err(); err != nil {
					errs[k] = err
					continue
				}
				errs[k] = fn(k)
			}
		}()
	}
	for k := 0; k < n && ctx.Err() == nil; k++ {
		jobs <- k
	}
	close(jobs)
	wg.Wait()
	if err := ctx.Err(); err != nil {
		return err
	}
	for _, err := range errs {
		if err != nil {
			return err
		}
	}
	return nil
}
