package phases

import (
	"container/heap"
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/stat"
)

// Options controls the segmentation.
type Options struct {
	// Depth is the least depth, in natural-log units of the strength, of a
	// basin below the lowest pass to a neighbouring basin for the two to
	// stay separate phases (≤ 0 means ln 2: the lowest pass between two
	// phases stands at least twice as high as the higher of their two
	// minima).
	Depth float64
	// Noise is the number of standard errors of the depth (from the
	// replicas) it must also exceed (≤ 0 means 3).
	Noise float64
	// MinSize is the least number of grid points of a phase; smaller regions
	// join the neighbour they have the lowest pass to (≤ 0 means
	// max(3, K/40)).
	MinSize int
}

// Segmentation is the division of the grid into phases.
type Segmentation struct {
	// Count is the number of phases.
	Count int
	// Labels holds the phase of every grid point, 0..Count−1, numbered in
	// the order of their first grid point.
	Labels []int
	// Passes lists, for every pair of adjacent phases, the height (log
	// strength) of the lowest pass between them and the depth of the
	// shallower phase below it.
	Passes []Pass
}

// Pass is the lowest point of the ridge between two adjacent phases.
type Pass struct {
	// A < B are the two phases.
	A, B int
	// Height is the log strength of the pass, Depth the height above the
	// higher of the two phases' minima.
	Height, Depth float64
}

// Segment divides the grid into phases separated by the ridges of the
// strength map (values at the K points; reps are bootstrap or ensemble
// replicas of it, which set the noise of a basin's depth, and may be nil).
//
// The landscape is the log strength (LogLandscape). Every local minimum
// seeds a basin, and basins grow in order of height (a seeded watershed:
// F. Meyer, "Topographic distance and watershed lines", Signal Processing
// 38, 113 (1994)). Adjacent basins are then merged, the shallowest first,
// while the shallower one's depth below their lowest pass is under
// max(Depth, Noise·σ), σ the replicas' standard error of that depth, or
// while a basin has fewer than MinSize points (merging by "dynamics":
// M. Grimaud, Proc. SPIE 1769, 292 (1992)). The result does not depend on
// a global threshold of the strength, only on ratios within the map.
func Segment(g Grid, strength []float64, reps [][]float64, opt Options) (*Segmentation, error) {
	if err := g.Check(); err != nil {
		return nil, err
	}
	K := g.K()
	if len(strength) != K {
		return nil, fmt.Errorf("phases: %d strength values, expected %d (%d×%d grid)", len(strength), K, g.N0(), g.N1())
	}
	for b, r := range reps {
		if len(r) != K {
			return nil, fmt.Errorf("phases: replica %d has %d values, expected %d", b, len(r), K)
		}
	}
	if opt.Depth <= 0 {
		opt.Depth = math.Log(2)
	}
	if opt.Noise <= 0 {
		opt.Noise = 3
	}
	if opt.MinSize <= 0 {
		opt.MinSize = max(3, K/40)
	}
	v := LogLandscape(strength)
	var vr [][]float64
	for _, r := range reps {
		vr = append(vr, LogLandscape(r))
	}
	label := watershed(g, v)
	// Union-find over the basins.
	nb := 0
	for _, l := range label {
		nb = max(nb, l+1)
	}
	parent := make([]int, nb)
	for i := range parent {
		parent[i] = i
	}
	var find func(int) int
	find = func(i int) int {
		for parent[i] != i {
			parent[i] = parent[parent[i]]
			i = parent[i]
		}
		return i
	}
	for {
		regs := regions(g, label, find, v, vr)
		if len(regs.ids) <= 1 {
			break
		}
		// Candidates: small regions first, then the shallowest pair.
		best, bestSmall := -1, false
		bestKey := math.Inf(1)
		for pi, p := range regs.pairs {
			small := regs.size[p.a] < opt.MinSize || regs.size[p.b] < opt.MinSize
			thr := math.Max(opt.Depth, opt.Noise*p.sigma)
			var key float64
			switch {
			case small:
				key = p.height // the lowest pass of a small region
			case p.depth < thr && !bestSmall:
				key = p.depth - thr
			default:
				continue
			}
			if (small && !bestSmall) || key < bestKey {
				best, bestKey, bestSmall = pi, key, small
			}
		}
		if best < 0 {
			break
		}
		p := regs.pairs[best]
		parent[find(p.b)] = find(p.a)
	}
	// Relabel in the order of first grid point.
	seg := &Segmentation{Labels: make([]int, K)}
	id := map[int]int{}
	for k := range label {
		r := find(label[k])
		if _, ok := id[r]; !ok {
			id[r] = len(id)
		}
		seg.Labels[k] = id[r]
	}
	seg.Count = len(id)
	regs := regions(g, label, find, v, vr)
	for _, p := range regs.pairs {
		a, b := id[p.a], id[p.b]
		if a > b {
			a, b = b, a
		}
		seg.Passes = append(seg.Passes, Pass{A: a, B: b, Height: p.height, Depth: p.depth})
	}
	sort.Slice(seg.Passes, func(i, j int) bool {
		if seg.Passes[i].A != seg.Passes[j].A {
			return seg.Passes[i].A < seg.Passes[j].A
		}
		return seg.Passes[i].B < seg.Passes[j].B
	})
	return seg, nil
}

// neighbours calls f with the 4-neighbours of point k.
func neighbours(g Grid, k int, f func(int)) {
	n0, n1 := g.N0(), g.N1()
	i, j := k/n1, k%n1
	if i > 0 {
		f(k - n1)
	}
	if i+1 < n0 {
		f(k + n1)
	}
	if j > 0 {
		f(k - 1)
	}
	if j+1 < n1 {
		f(k + 1)
	}
}

// below orders points by height, ties by index, so that every point has a
// strict rank and plateaus cannot hold two minima side by side.
func below(v []float64, a, b int) bool {
	if v[a] != v[b] {
		return v[a] < v[b]
	}
	return a < b
}

type pq struct {
	v []float64
	k []int
}

func (q *pq) Len() int           { return len(q.k) }
func (q *pq) Less(i, j int) bool { return below(q.v, q.k[i], q.k[j]) }
func (q *pq) Swap(i, j int)      { q.k[i], q.k[j] = q.k[j], q.k[i] }
func (q *pq) Push(x any)         { q.k = append(q.k, x.(int)) }
func (q *pq) Pop() any {
	n := len(q.k)
	x := q.k[n-1]
	q.k = q.k[:n-1]
	return x
}

// watershed labels every point with the basin of a local minimum by
// growing all basins in order of height from their minima.
func watershed(g Grid, v []float64) []int {
	K := g.K()
	label := make([]int, K)
	for k := range label {
		label[k] = -1
	}
	q := &pq{v: v}
	nb := 0
	for k := 0; k < K; k++ {
		isMin := true
		neighbours(g, k, func(m int) { isMin = isMin && below(v, k, m) })
		if isMin {
			label[k] = nb
			nb++
			heap.Push(q, k)
		}
	}
	for q.Len() > 0 {
		k := heap.Pop(q).(int)
		neighbours(g, k, func(m int) {
			if label[m] < 0 {
				label[m] = label[k]
				heap.Push(q, m)
			}
		})
	}
	return label
}

type pairInfo struct {
	a, b          int
	height, depth float64
	sigma         float64
}

type regionSet struct {
	ids   []int
	size  map[int]int
	pairs []pairInfo
}

// regions summarises the current union of basins: sizes, minima and the
// lowest pass of every adjacent pair, with the replicas' spread of the
// pass's depth.
func regions(g Grid, label []int, find func(int) int, v []float64, vr [][]float64) regionSet {
	K := g.K()
	rs := regionSet{size: map[int]int{}}
	minAt := map[int]int{}
	for k := 0; k < K; k++ {
		r := find(label[k])
		if _, ok := rs.size[r]; !ok {
			rs.ids = append(rs.ids, r)
			minAt[r] = k
		}
		rs.size[r]++
		if below(v, k, minAt[r]) {
			minAt[r] = k
		}
	}
	type key struct{ a, b int }
	passAt := map[key][2]int{}
	passH := map[key]float64{}
	for k := 0; k < K; k++ {
		rk := find(label[k])
		neighbours(g, k, func(m int) {
			if m < k {
				return
			}
			rm := find(label[m])
			if rm == rk {
				return
			}
			kk := key{min(rk, rm), max(rk, rm)}
			h := math.Max(v[k], v[m])
			if old, ok := passH[kk]; !ok || h < old {
				passH[kk] = h
				passAt[kk] = [2]int{k, m}
			}
		})
	}
	keys := make([]key, 0, len(passH))
	for kk := range passH {
		keys = append(keys, kk)
	}
	sort.Slice(keys, func(i, j int) bool {
		if keys[i].a != keys[j].a {
			return keys[i].a < keys[j].a
		}
		return keys[i].b < keys[j].b
	})
	for _, kk := range keys {
		ma, mb := minAt[kk.a], minAt[kk.b]
		h := passH[kk]
		depth := h - math.Max(v[ma], v[mb])
		pa := passAt[kk]
		var ds []float64
		for _, r := range vr {
			ds = append(ds, math.Max(r[pa[0]], r[pa[1]])-math.Max(r[ma], r[mb]))
		}
		rs.pairs = append(rs.pairs, pairInfo{a: kk.a, b: kk.b, height: h, depth: depth, sigma: stdDev(ds)})
	}
	return rs
}

// stdDev returns the sample standard deviation (n−1), or 0 for fewer than
// two values.
func stdDev(v []float64) float64 {
	if len(v) < 2 {
		return 0
	}
	return stat.StdDev(v, nil)
}

// Quantile returns the q-quantile (0 ≤ q ≤ 1) of v by linear interpolation
// between order statistics, NaN for an empty v. v is not modified.
func Quantile(v []float64, q float64) float64 {
	if len(v) == 0 {
		return math.NaN()
	}
	s := append([]float64(nil), v...)
	sort.Float64s(s)
	x := q * float64(len(s)-1)
	i := int(math.Floor(x))
	if i >= len(s)-1 {
		return s[len(s)-1]
	}
	f := x - float64(i)
	return s[i]*(1-f) + s[i+1]*f
}
