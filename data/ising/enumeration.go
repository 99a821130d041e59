package ising

import (
	"fmt"
	"math"
	"math/bits"
	"math/rand/v2"
	"sort"
	"sync"
)

// MaxEnumeratedSites is the largest number of sites Enumeration lists (2^24 states).
const MaxEnumeratedSites = 24

// Class is one set of states that share their bond sums and magnetisation,
// and hence their energy at every Couplings.
type Class struct {
	// Bx and By are Σ s_i s_{i+x̂} and Σ s_i s_{i+ŷ}; M is Σ s_i.
	Bx, By, M int
	// Count is the number of states in the class.
	Count int64
}

// Enumeration lists all 2^N states of a small periodic lattice once and then
// answers exact questions at any Couplings in one pass over the (few
// thousand) classes of states with equal bond sums and magnetisation.
// It is safe for concurrent use.
type Enumeration struct {
	lat     Lattice
	classes []Class

	mu    sync.Mutex
	cache map[Couplings]*weights

	listOnce sync.Once
	offsets  []int    // states of class k are members[offsets[k]:offsets[k+1]]
	members  []uint32 // state bit patterns, bit i = site i
}

// weights are the log Boltzmann weights of the classes at one Couplings.
type weights struct {
	logZ float64
	cdf  []float64 // cumulative class probabilities, last = 1
}

// NewEnumeration lists the 2^N states of l; N must be at most MaxEnumeratedSites.
func NewEnumeration(l Lattice) (*Enumeration, error) {
	if err := l.Validate(); err != nil {
		return nil, err
	}
	n := l.N()
	if n > MaxEnumeratedSites {
		return nil, fmt.Errorf("exact enumeration of a %d×%d lattice: expected at most %d sites, found %d", l.Ly, l.Lx, MaxEnumeratedSites, n)
	}
	e := &Enumeration{lat: l, cache: map[Couplings]*weights{}}
	counts := make([]int64, (n+1)*(n+1)*(n+1))
	for s := uint32(0); s < 1<<n; s++ {
		counts[e.classIndex(s)]++
	}
	for k, c := range counts {
		if c == 0 {
			continue
		}
		bx, by, m := e.classSums(k)
		e.classes = append(e.classes, Class{Bx: bx, By: by, M: m, Count: c})
	}
	return e, nil
}

// stateSums returns the bond sums and magnetisation of the bit pattern s.
func (e *Enumeration) stateSums(s uint32) (bx, by, m int) {
	lx, n := e.lat.Lx, e.lat.N()
	var right, down uint32
	full := uint32(1)<<n - 1
	if n == 32 {
		full = ^uint32(0)
	}
	// right: bit i holds the spin at the right neighbour of site i.
	var lastCol uint32
	for y := 0; y < e.lat.Ly; y++ {
		lastCol |= 1 << (y*lx + lx - 1)
	}
	right = ((s >> 1) &^ lastCol) | ((s << (lx - 1)) & lastCol)
	down = ((s >> lx) | (s << (n - lx))) & full
	bx = n - 2*bits.OnesCount32(s^right)
	by = n - 2*bits.OnesCount32(s^down)
	m = 2*bits.OnesCount32(s) - n
	return
}

func (e *Enumeration) classIndex(s uint32) int {
	n := e.lat.N()
	bx, by, m := e.stateSums(s)
	return ((bx+n)/2*(n+1)+(by+n)/2)*(n+1) + (m+n)/2
}

func (e *Enumeration) classSums(k int) (bx, by, m int) {
	n := e.lat.N()
	m = (k%(n+1))*2 - n
	k /= n + 1
	by = (k%(n+1))*2 - n
	k /= n + 1
	bx = k*2 - n
	return
}

// Lattice returns the enumerated lattice.
func (e *Enumeration) Lattice() Lattice { return e.lat }

// Classes returns the classes of states with equal bond sums and
// magnetisation, in increasing (Bx, By, M) order; their counts sum to 2^N.
func (e *Enumeration) Classes() []Class { return append([]Class(nil), e.classes...) }

func (e *Enumeration) weights(c Couplings) *weights {
	e.mu.Lock()
	w, ok := e.cache[c]
	e.mu.Unlock()
	if ok {
		return w
	}
	lw := make([]float64, len(e.classes))
	mx := math.Inf(-1)
	for i, cl := range e.classes {
		lw[i] = math.Log(float64(cl.Count)) - energyOf(cl.Bx, cl.By, cl.M, c)/c.T
		mx = math.Max(mx, lw[i])
	}
	w = &weights{cdf: make([]float64, len(lw))}
	sum := 0.0
	for i, v := range lw {
		sum += math.Exp(v - mx)
		w.cdf[i] = sum
	}
	for i := range w.cdf {
		w.cdf[i] /= sum
	}
	w.cdf[len(w.cdf)-1] = 1
	w.logZ = mx + math.Log(sum)
	e.mu.Lock()
	if len(e.cache) > 4096 { // bound the memory a long scan can pin
		e.cache = map[Couplings]*weights{}
	}
	e.cache[c] = w
	e.mu.Unlock()
	return w
}

// LogZ returns ln Z = ln Σ_x exp(−H(x)/T). The result is cached per Couplings.
// T must be positive.
func (e *Enumeration) LogZ(c Couplings) float64 { return e.weights(c).logZ }

// LogProb returns ln p(x) = −H(x)/T − ln Z in nats for the state x
// (len(x) = N, values 0/1).
func (e *Enumeration) LogProb(x []uint8, c Couplings) float64 {
	return -e.lat.Energy(x, c)/c.T - e.LogZ(c)
}

// Moments returns the exact mean and variance of the total energy H and the
// mean of |M| = |Σ s_i|, all per lattice (not per site): divide meanE and
// meanAbsM by N, and varE by N, for the per-site energy, magnetisation and
// heat capacity C/N = varE/(N T²).
func (e *Enumeration) Moments(c Couplings) (meanE, varE, meanAbsM float64) {
	p := e.ClassProbs(c)
	for i, cl := range e.classes {
		meanE += p[i] * energyOf(cl.Bx, cl.By, cl.M, c)
		meanAbsM += p[i] * math.Abs(float64(cl.M))
	}
	// A second pass keeps the variance free of cancellation.
	for i, cl := range e.classes {
		d := energyOf(cl.Bx, cl.By, cl.M, c) - meanE
		varE += p[i] * d * d
	}
	return meanE, varE, meanAbsM
}

func prevBefore(cdf []float64, i int) float64 {
	if i == 0 {
		return 0
	}
	return cdf[i-1]
}

// ClassProbs returns the exact probability of each class of Classes() at c.
func (e *Enumeration) ClassProbs(c Couplings) []float64 {
	w := e.weights(c)
	p := make([]float64, len(w.cdf))
	prev := 0.0
	for i, v := range w.cdf {
		p[i] = v - prev
		prev = v
	}
	return p
}

// Level is one energy level of the density of states.
type Level struct {
	// BondSum is Σ over all bonds of s_i s_j, so that E = −J·BondSum at
	// Jx = Jy = J and h = 0.
	BondSum int
	// Count is g(E), the number of states at that energy.
	Count int64
}

// DensityOfStates returns g(E) for Jx = Jy = J and h = 0: the number of
// states at each energy E = −J·BondSum, in increasing BondSum order.
func (e *Enumeration) DensityOfStates() []Level {
	g := map[int]int64{}
	for _, cl := range e.classes {
		g[cl.Bx+cl.By] += cl.Count
	}
	out := make([]Level, 0, len(g))
	for b, c := range g {
		out = append(out, Level{BondSum: b, Count: c})
	}
	sort.Slice(out, func(i, j int) bool { return out[i].BondSum < out[j].BondSum })
	return out
}

func (e *Enumeration) buildLists() {
	n := e.lat.N()
	index := make([]int32, (n+1)*(n+1)*(n+1))
	for i := range index {
		index[i] = -1
	}
	e.offsets = make([]int, len(e.classes)+1)
	for k, cl := range e.classes {
		index[((cl.Bx+n)/2*(n+1)+(cl.By+n)/2)*(n+1)+(cl.M+n)/2] = int32(k)
		e.offsets[k+1] = e.offsets[k] + int(cl.Count)
	}
	fill := append([]int(nil), e.offsets[:len(e.classes)]...)
	e.members = make([]uint32, 1<<n)
	for s := uint32(0); s < 1<<n; s++ {
		k := index[e.classIndex(s)]
		e.members[fill[k]] = s
		fill[k]++
	}
}

// Sample writes n exact independent samples from p(x) ∝ exp(−H(x)/T) into
// dst (n·N values, 0/1), drawing a class by its exact probability and then
// a state uniformly within it. The first call builds a list of all 2^N
// states (4 bytes each).
func (e *Enumeration) Sample(dst []uint8, n int, c Couplings, rng *rand.Rand) {
	e.listOnce.Do(e.buildLists)
	w := e.weights(c)
	nsites := e.lat.N()
	for j := 0; j < n; j++ {
		// The first class whose cumulative probability exceeds u; classes
		// of probability 0 are never chosen.
		u := rng.Float64()
		k := sort.Search(len(w.cdf), func(i int) bool { return w.cdf[i] > u })
		if k == len(w.cdf) {
			k = len(w.cdf) - 1
		}
		lo, hi := e.offsets[k], e.offsets[k+1]
		s := e.members[lo+rng.IntN(hi-lo)]
		row := dst[j*nsites : (j+1)*nsites]
		for i := range row {
			row[i] = uint8(s>>i) & 1
		}
	}
}

// StateOf writes the bit pattern s (bit i = site i) as a 0/1 state into dst.
// Together with a loop over s < 2^N it lists every state.
func StateOf(dst []uint8, s uint32) {
	for i := range dst {
		dst[i] = uint8(s>>i) & 1
	}
}
