package scorestat

import (
	"errors"
	"fmt"
	"io"
	"slices"
	"sync"
	"sync/atomic"

	"tidemark/data"
	"tidemark/data/density"
)

// StreamBlock is the number of snapshots ScoreStream reads from the file
// at once by default: 4 jobs of scoreChunk snapshots, 16 MB of states at
// 1024 sites. At most streamBuffers blocks are held at a time.
const StreamBlock = 4 * scoreChunk

// streamBuffers is the number of blocks in memory at once: one being read
// while the others are scored.
const streamBuffers = 3

// block is one block of snapshots read from a stream.
type block struct {
	xs      []uint8
	first   int          // index of its first snapshot in the file
	pending atomic.Int32 // jobs not yet done; the buffer is free at 0
}

// streamJob is the snapshots lo..hi−1 of a block, an index range into it.
type streamJob struct {
	b      *block
	lo, hi int
}

// ScoreStream is Score with the snapshots read from st in blocks of
// blockRows (StreamBlock when blockRows ≤ 0), the next block being read
// and inflated while the previous ones are scored, so that memory holds a
// few blocks instead of the whole file. Each snapshot is scored at at, or
// at its own λ from st.Head when at is nil. The results equal Score's on
// the whole dataset bit for bit, for any threads and blockRows (every
// snapshot's score depends on its own row only); the error, if any, is the
// stream's first (a damaged file, as data.Read reports it) or else that of
// the lowest-numbered failing snapshot.
func ScoreStream(src density.Source, st *data.Stream, at []float64, blockRows, threads int, progress func(int)) (logp, params []float64, err error) {
	head := st.Head
	d, n := src.ParamDim(), head.N
	if blockRows <= 0 {
		blockRows = StreamBlock
	}
	var g *data.Grid
	if at == nil {
		g = data.NewGrid(head)
		if len(g.PointOf) != head.M {
			return nil, nil, errors.New("scoring each snapshot at its own λ needs a labelled dataset")
		}
	}
	logp = make([]float64, head.M)
	params = make([]float64, head.M*d)

	free := make(chan []uint8, streamBuffers)
	for range streamBuffers {
		free <- nil // allocated on first use
	}
	jobs := make(chan streamJob, 2*blockRows/scoreChunk+2)
	var failed atomic.Bool
	var readErr error
	go func() {
		defer close(jobs)
		for row := 0; !failed.Load(); {
			buf := <-free
			if buf == nil {
				buf = make([]uint8, blockRows*n)
			}
			k, err := st.Next(buf)
			if errors.Is(err, io.EOF) {
				return
			}
			if err != nil {
				readErr = err
				failed.Store(true)
				return
			}
			b := &block{xs: buf[:k*n], first: row}
			// Jobs end at multiples of scoreChunk in the file, as Score's do.
			var cuts []int
			for lo := 0; lo < k; {
				hi := min(k, (row+lo)/scoreChunk*scoreChunk+scoreChunk-row)
				cuts = append(cuts, lo, hi)
				lo = hi
			}
			b.pending.Store(int32(len(cuts) / 2))
			for i := 0; i < len(cuts); i += 2 {
				jobs <- streamJob{b, cuts[i], cuts[i+1]}
			}
			row += k
		}
	}()

	var (
		mu       sync.Mutex
		errRow   = -1
		modelErr error
	)
	var wg sync.WaitGroup
	for range data.Threads(threads) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			var lp []float64
			var xs []uint8
			var rows []int
			for jb := range jobs {
				if !failed.Load() {
					lp, xs, rows = grow(lp, jb.hi-jb.lo), xs[:0], rows[:0]
					row, err := scoreJob(src, jb, n, d, at, g, logp, params, lp, &xs, &rows)
					if err != nil {
						mu.Lock()
						if errRow < 0 || row < errRow {
							errRow, modelErr = row, err
						}
						mu.Unlock()
						failed.Store(true)
					} else if progress != nil {
						progress(jb.hi - jb.lo)
					}
				}
				if jb.b.pending.Add(-1) == 0 {
					free <- jb.b.xs[:cap(jb.b.xs)]
				}
			}
		}()
	}
	wg.Wait()
	switch {
	case readErr != nil:
		return nil, nil, readErr
	case modelErr != nil:
		return nil, nil, modelErr
	}
	return logp, params, nil
}

// scoreJob scores the snapshots of one job into logp and params: all of
// them at at, or, when at is nil, each group of those at one grid point of
// g at that point (gathered into *xs; *rows holds the job's snapshots). lp has room
// for the job. On an error it returns the file index of the first snapshot
// it could not score.
func scoreJob(src density.Source, jb streamJob, n, d int, at []float64, g *data.Grid, logp, params, lp []float64, xs *[]uint8, rows *[]int) (int, error) {
	first := jb.b.first + jb.lo
	if at != nil {
		if err := src.LogProb(lp, jb.b.xs[jb.lo*n:jb.hi*n], at); err != nil {
			return first, fmt.Errorf("at %v: %w", at, err)
		}
		copy(logp[first:], lp)
		for r := first; r < first+len(lp); r++ {
			copy(params[r*d:(r+1)*d], at)
		}
		return 0, nil
	}
	// The snapshots of each point together, in file order within a point.
	*rows = (*rows)[:0]
	for r := first; r < jb.b.first+jb.hi; r++ {
		*rows = append(*rows, r)
	}
	all := *rows
	slices.SortStableFunc(all, func(a, b int) int { return g.PointOf[a] - g.PointOf[b] })
	for lo := 0; lo < len(all); {
		k := g.PointOf[all[lo]]
		hi := lo + 1
		for hi < len(all) && g.PointOf[all[hi]] == k {
			hi++
		}
		*xs = (*xs)[:0]
		for _, r := range all[lo:hi] {
			j := r - jb.b.first
			*xs = append(*xs, jb.b.xs[j*n:(j+1)*n]...)
		}
		lam := g.Points[k]
		if err := src.LogProb(lp[:hi-lo], *xs, lam); err != nil {
			return all[lo], fmt.Errorf("at %v: %w", lam, err)
		}
		for x, r := range all[lo:hi] {
			logp[r] = lp[x]
			copy(params[r*d:(r+1)*d], lam)
		}
		lo = hi
	}
	return 0, nil
}

func grow(b []float64, n int) []float64 {
	if cap(b) < n {
		return make([]float64, n)
	}
	return b[:n]
}
