package data

import (
	"context"
	"math"
	"sync"
)

// ForEachPoint calls fn(k) for every grid point k = 0..n−1 on up to threads
// goroutines (≤ 0: every CPU, Threads). Which goroutine runs a point must not matter:
// generators seed point k from (seed, k). It stops handing out points once
// ctx is done and then returns ctx's error; otherwise it returns the error
// of the lowest-numbered point that failed, or nil.
func ForEachPoint(ctx context.Context, n, threads int, fn func(k int) error) error {
	return ForEachWith(ctx, n, threads, func() struct{} { return struct{}{} }, func(k int, _ struct{}) error { return fn(k) })
}

// ForEachWith is the one parallel loop of the project: ForEachPoint with
// per-worker scratch. Each goroutine calls scratch once and hands the value
// to every fn(k, s) it runs, so buffers are made once per worker, not once
// per item. Like ForEachPoint it runs every item unless ctx is done and
// returns the error of the lowest-numbered item that failed, so the error
// does not depend on threads either.
func ForEachWith[S any](ctx context.Context, n, threads int, scratch func() S, fn func(k int, s S) error) error {
	jobs := make(chan int)
	errs := make([]error, n)
	var wg sync.WaitGroup
	for w := 0; w < min(Threads(threads), max(n, 1)); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			s := scratch()
			for k := range jobs {
				if err := ctx.Err(); err != nil {
					errs[k] = err
					continue
				}
				errs[k] = fn(k, s)
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

// PointTolerance is the relative difference within which two parameter
// values are the same: |a − b| ≤ PointTolerance·max(1, |a|, |b|). Every
// comparison of parameter points that are not bit-for-bit copies of each
// other (a checkpoint's held-out points against a dataset's grid, a peak's
// line against the grid's values) uses it through SameValue and SamePoint.
const PointTolerance = 1e-9

// SameValue reports whether a and b are the same parameter value within
// PointTolerance.
func SameValue(a, b float64) bool {
	return math.Abs(a-b) <= PointTolerance*math.Max(1, math.Max(math.Abs(a), math.Abs(b)))
}

// SamePoint reports whether a and b have the same length and every
// coordinate is the same value within PointTolerance.
func SamePoint(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if !SameValue(a[i], b[i]) {
			return false
		}
	}
	return true
}

// TypedTolerance is the relative difference within which a value typed by
// a user names a grid value: |a − b| ≤ TypedTolerance·max(|a|, |b|), so
// that a value copied as printed with six significant digits ("T=2.09091")
// finds the grid value 2.0909090909…. It is wider than PointTolerance on
// purpose, and only for text a person typed.
const TypedTolerance = 1e-5

// NamesValue reports whether the typed value a names the grid value b
// within TypedTolerance.
func NamesValue(a, b float64) bool {
	return math.Abs(a-b) <= TypedTolerance*math.Max(math.Abs(a), math.Abs(b))+1e-300
}
