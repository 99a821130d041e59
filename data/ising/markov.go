package ising

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// MarkovChain is one Markov chain of spin configurations on a periodic lattice at
// fixed Couplings. At h = 0 a sweep is a run of Wolff single-cluster updates
// (U. Wolff, Phys. Rev. Lett. 62, 361 (1989)) that together flip at least N
// spins; otherwise it is one checkerboard Metropolis sweep (N. Metropolis et
// al., J. Chem. Phys. 21, 1087 (1953)). Both handle couplings of either sign
// (a bond is "satisfied" when J s_i s_j > 0 and joins the cluster with
// probability 1 − exp(−2|J|/T)); frustrated antiferromagnets (odd sides)
// are sampled correctly, if slowly. A MarkovChain is not safe for concurrent use.
type MarkovChain struct {
	lat Lattice
	c   Couplings
	s   []uint8
	rng *rand.PCG

	thr [18]uint64 // Metropolis: accept when a 32-bit uniform < thr[s*9+nx*3+ny]

	wolff    bool
	clusters int    // Wolff clusters per sweep; 0 until BurnIn fixes it
	px, py   uint64 // cluster-bond thresholds for a 32-bit uniform
	satX     uint8  // 1 when a satisfied x bond joins equal spins (Jx > 0), 0 when unequal
	satY     uint8
	nb       []int32 // right, left, down, up neighbours of each site
	mark     []uint32
	gen      uint32
	stack    []int32
	rbuf     uint64
	haveRand bool
}

// NewMarkovChain returns a chain at c on l whose random stream is
// PCG(seed, stream). It starts from independent random spins for Wolff
// updates, and aligned with the field (all +1 when h ≥ 0) for Metropolis.
func NewMarkovChain(l Lattice, c Couplings, seed, stream uint64) (*MarkovChain, error) {
	if err := l.Validate(); err != nil {
		return nil, err
	}
	if err := c.Validate(); err != nil {
		return nil, err
	}
	n := l.N()
	ch := &MarkovChain{lat: l, c: c, s: make([]uint8, n), rng: rand.NewPCG(seed, stream), wolff: c.H == 0}
	// Metropolis acceptance table: flipping σ = 2s−1 with nx, ny up
	// neighbours changes the energy by 2σ(Jx(2nx−2) + Jy(2ny−2) + h).
	for s := 0; s < 2; s++ {
		for nx := 0; nx < 3; nx++ {
			for ny := 0; ny < 3; ny++ {
				sigma := float64(2*s - 1)
				dE := 2 * sigma * (c.Jx*float64(2*nx-2) + c.Jy*float64(2*ny-2) + c.H)
				ch.thr[s*9+nx*3+ny] = threshold(math.Exp(-dE / c.T))
			}
		}
	}
	ch.px = threshold(-math.Expm1(-2 * math.Abs(c.Jx) / c.T))
	ch.py = threshold(-math.Expm1(-2 * math.Abs(c.Jy) / c.T))
	if c.Jx == 0 {
		ch.px = 0
	}
	if c.Jy == 0 {
		ch.py = 0
	}
	if c.Jx < 0 {
		ch.satX = 1
	}
	if c.Jy < 0 {
		ch.satY = 1
	}
	if ch.wolff {
		ch.nb = make([]int32, 4*n)
		for y := 0; y < l.Ly; y++ {
			for x := 0; x < l.Lx; x++ {
				i := y*l.Lx + x
				ch.nb[4*i] = int32(y*l.Lx + (x+1)%l.Lx)
				ch.nb[4*i+1] = int32(y*l.Lx + (x+l.Lx-1)%l.Lx)
				ch.nb[4*i+2] = int32(((y+1)%l.Ly)*l.Lx + x)
				ch.nb[4*i+3] = int32(((y+l.Ly-1)%l.Ly)*l.Lx + x)
			}
		}
		ch.mark = make([]uint32, n)
		for i := range ch.s {
			ch.s[i] = uint8(ch.rng.Uint64() >> 63)
		}
	} else if c.H >= 0 {
		for i := range ch.s {
			ch.s[i] = 1
		}
	}
	return ch, nil
}

// threshold converts a probability to a bound for a 32-bit uniform integer;
// 1<<32 (or more) means "always".
func threshold(p float64) uint64 {
	if p >= 1 {
		return 1 << 32
	}
	if !(p > 0) {
		return 0
	}
	return uint64(p * (1 << 32))
}

// uniform32 returns a uniform 32-bit integer, using each 64-bit draw twice.
func (ch *MarkovChain) uniform32() uint64 {
	if ch.haveRand {
		ch.haveRand = false
		return ch.rbuf >> 32
	}
	ch.rbuf = ch.rng.Uint64()
	ch.haveRand = true
	return ch.rbuf & 0xffffffff
}

// UseMetropolis switches the chain to checkerboard Metropolis sweeps even at
// h = 0 (for checks and benchmarks; Wolff clusters decorrelate far faster
// near T_c). Call it before BurnIn.
func (ch *MarkovChain) UseMetropolis() { ch.wolff = false }

// Wolff reports whether the chain uses cluster updates (h = 0).
func (ch *MarkovChain) Wolff() bool { return ch.wolff }

// State returns the current configuration (a view; 0 ↔ s=−1, 1 ↔ s=+1).
func (ch *MarkovChain) State() []uint8 { return ch.s }

// Energy returns the total energy H of the current configuration.
func (ch *MarkovChain) Energy() float64 { return ch.lat.Energy(ch.s, ch.c) }

// AbsM returns |Σ s_i| / N, the absolute magnetisation per site.
func (ch *MarkovChain) AbsM() float64 {
	up := 0
	for _, v := range ch.s {
		up += int(v)
	}
	return math.Abs(float64(2*up-len(ch.s))) / float64(len(ch.s))
}

// M returns Σ s_i / N, the magnetisation per site.
func (ch *MarkovChain) M() float64 {
	up := 0
	for _, v := range ch.s {
		up += int(v)
	}
	return float64(2*up-len(ch.s)) / float64(len(ch.s))
}

// Sweep advances the chain by one sweep: N Metropolis updates, or a fixed
// number of Wolff clusters that flip about N spins on average. The number
// of clusters is fixed by BurnIn (or SetClustersPerSweep); before that a
// sweep grows clusters until N spins have flipped, which is fine for
// thermalising but biased for measuring, since stopping after a large
// cluster favours ordered states.
func (ch *MarkovChain) Sweep() {
	if !ch.wolff {
		ch.MetropolisSweep()
		return
	}
	if ch.clusters > 0 {
		for i := 0; i < ch.clusters; i++ {
			ch.WolffCluster()
		}
		return
	}
	flipped := 0
	for flipped < len(ch.s) {
		flipped += ch.WolffCluster()
	}
}

// SetClustersPerSweep fixes the number of Wolff clusters in a sweep.
func (ch *MarkovChain) SetClustersPerSweep(k int) { ch.clusters = max(k, 1) }

// ClustersPerSweep returns the number of Wolff clusters in a sweep (0 when
// not yet fixed).
func (ch *MarkovChain) ClustersPerSweep() int { return ch.clusters }

// MetropolisSweep visits every site once, first the sites with x+y even and
// then those with x+y odd, and flips each with the Metropolis probability.
func (ch *MarkovChain) MetropolisSweep() {
	lx, ly := ch.lat.Lx, ch.lat.Ly
	s := ch.s
	thr := &ch.thr
	for par := 0; par < 2; par++ {
		for y := 0; y < ly; y++ {
			yu, yd := y-1, y+1
			if yu < 0 {
				yu = ly - 1
			}
			if yd == ly {
				yd = 0
			}
			row := s[y*lx : y*lx+lx]
			up := s[yu*lx : yu*lx+lx]
			dn := s[yd*lx : yd*lx+lx]
			for x := (y + par) & 1; x < lx; x += 2 {
				xl, xr := x-1, x+1
				if xl < 0 {
					xl = lx - 1
				}
				if xr == lx {
					xr = 0
				}
				si := row[x]
				t := thr[int(si)*9+int(row[xl]+row[xr])*3+int(up[x]+dn[x])]
				if t >= 1<<32 || ch.uniform32() < t {
					row[x] = si ^ 1
				}
			}
		}
	}
}

// WolffCluster grows one cluster from a uniformly chosen seed site, flips
// it and returns its size. It must only be used at h = 0.
func (ch *MarkovChain) WolffCluster() int {
	n := len(ch.s)
	seed := int32((ch.rng.Uint64() >> 32) * uint64(n) >> 32)
	ch.gen++
	if ch.gen == 0 {
		clear(ch.mark)
		ch.gen = 1
	}
	gen := ch.gen
	s, mark, nb := ch.s, ch.mark, ch.nb
	s[seed] ^= 1
	mark[seed] = gen
	stack := append(ch.stack[:0], seed)
	size := 1
	for len(stack) > 0 {
		i := int(stack[len(stack)-1])
		stack = stack[:len(stack)-1]
		old := s[i] ^ 1
		nbs := nb[4*i : 4*i+4 : 4*i+4]
		for d, j := range nbs {
			p, sat := ch.px, ch.satX
			if d >= 2 {
				p, sat = ch.py, ch.satY
			}
			if mark[j] == gen || s[j]^old != sat || p == 0 {
				continue
			}
			if p < 1<<32 && ch.uniform32() >= p {
				continue
			}
			s[j] ^= 1
			mark[j] = gen
			stack = append(stack, j)
			size++
		}
	}
	ch.stack = stack
	return size
}

// String describes the chain's update method.
func (ch *MarkovChain) String() string {
	m := "metropolis"
	if ch.wolff {
		m = "wolff"
	}
	return fmt.Sprintf("%s chain on %d×%d at %+v", m, ch.lat.Ly, ch.lat.Lx, ch.c)
}
