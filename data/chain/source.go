package chain

import (
	"errors"
	"fmt"
	"math"
	"math/bits"
	"math/rand/v2"
	"sort"
	"sync"
)

// Basis is the measurement basis of the snapshots.
type Basis int

// The bases: one Pauli operator on every site, or an independent uniformly
// random Pauli basis per site and shot.
const (
	BasisZ Basis = iota
	BasisX
	BasisY
	BasisRandom
)

// String returns the basis name as used on the command line.
func (b Basis) String() string {
	switch b {
	case BasisZ:
		return "z"
	case BasisX:
		return "x"
	case BasisY:
		return "y"
	}
	return "random"
}

// ParseBasis reads "z", "x", "y" or "random".
func ParseBasis(s string) (Basis, error) {
	switch s {
	case "z":
		return BasisZ, nil
	case "x":
		return BasisX, nil
	case "y":
		return BasisY, nil
	case "random":
		return BasisRandom, nil
	}
	return 0, fmt.Errorf("basis: expected z, x, y or random, found %q", s)
}

// Config describes a spin chain and how it is measured.
type Config struct {
	// Sites is N, from 2 to MaxSites.
	Sites int
	// Hamiltonian is the text of H (see Parse).
	Hamiltonian string
	// Params names the parameters in the order of λ; it must be exactly the
	// set of parameters in the Hamiltonian.
	Params []string
	// Open drops the terms that wrap around the chain's end.
	Open bool
	// Basis is the measurement basis.
	Basis Basis
	// Sector is the ∏X sector the ground state is taken in.
	Sector Sector
}

// State is the ground state of the chain at one λ.
type State struct {
	// Lambda is the parameter point.
	Lambda []float64
	// E0 is the lowest energy in the chosen sector.
	E0 float64
	// Gap is E1 − E0, the distance to the next level in the same sector
	// (counting multiplicity: 0 for a degenerate ground state).
	Gap float64
	// Residual is ‖Hψ − E0ψ‖ of the returned state.
	Residual float64
	// Real holds the amplitudes when H is real (otherwise nil).
	Real []float64
	// Complex holds the amplitudes when H is complex (otherwise nil).
	Complex []complex128

	probOnce [3]sync.Once
	probs    [3][]float64 // Born probabilities per fixed basis, by stored index
	cdfs     [3][]float64
}

// Amplitudes returns the state as complex amplitudes (a copy for real
// states, the stored slice otherwise).
func (s *State) Amplitudes() []complex128 {
	if s.Complex != nil {
		return s.Complex
	}
	out := make([]complex128, len(s.Real))
	for i, v := range s.Real {
		out[i] = complex(v, 0)
	}
	return out
}

// Source is a spin chain's exact snapshot distribution p(x|λ): it
// implements density.Source, density.Sampler and density.Enumerable.
// Ground states are computed on first use at each λ and cached; a Source is
// safe for concurrent use. The cache is never emptied: each distinct λ keeps
// its state and, per basis used, a probability vector and its cumulative sum
// (about 3·2^N·8 bytes, 0.5 MB per array at N = 16), so callers that query
// many off-grid λ of a large chain should use a fresh Source now and then.
type Source struct {
	cfg    Config
	ham    *Hamiltonian
	op     *operator
	sector Sector // resolved (never SectorAuto)

	mu      sync.Mutex
	cache   map[string]*cacheEntry
	scoring map[string]*cacheEntry // states of scoringState, without the gap
}

type cacheEntry struct {
	once  sync.Once
	state *State
	err   error

	mu       sync.Mutex
	finished *State // state once its solve has succeeded (for scoringState)
}

// ErrNoFlipSymmetry reports a request for a ∏X sector of a Hamiltonian that
// does not commute with ∏X.
var ErrNoFlipSymmetry = errors.New("the Hamiltonian does not commute with the global flip ∏X")

// New checks cfg and returns its source. The sector SectorAuto resolves to
// SectorEven when H commutes with ∏X (checked after merging equal Pauli
// strings: no string with an odd number of Z and Y letters keeps a nonzero
// coefficient) and to SectorNone otherwise; asking for even or odd with an H
// that does not commute with ∏X is an error.
func New(cfg Config) (*Source, error) {
	if cfg.Sites < 2 || cfg.Sites > MaxSites {
		return nil, fmt.Errorf("chain: sites: expected 2 to %d, found %d", MaxSites, cfg.Sites)
	}
	h, err := Parse(cfg.Hamiltonian)
	if err != nil {
		return nil, err
	}
	seen := map[string]bool{}
	for _, p := range cfg.Params {
		if seen[p] {
			return nil, fmt.Errorf("chain: parameter %q given twice", p)
		}
		seen[p] = true
	}
	op, err := h.compile(cfg.Sites, cfg.Open, cfg.Params)
	if err != nil {
		return nil, err
	}
	s := &Source{cfg: cfg, ham: h, op: op, cache: map[string]*cacheEntry{}}
	s.cfg.Params = append([]string(nil), cfg.Params...)
	switch cfg.Sector {
	case SectorAuto:
		s.sector = SectorNone
		if op.commut {
			s.sector = SectorEven
		}
	case SectorEven, SectorOdd:
		if !op.commut {
			return nil, fmt.Errorf("chain: sector %s: %q: %w (a word has an odd number of Z and Y letters); use sector none", cfg.Sector, cfg.Hamiltonian, ErrNoFlipSymmetry)
		}
		s.sector = cfg.Sector
	case SectorNone:
		s.sector = SectorNone
	default:
		return nil, fmt.Errorf("chain: unknown sector %d", cfg.Sector)
	}
	if cfg.Basis < BasisZ || cfg.Basis > BasisRandom {
		return nil, fmt.Errorf("chain: unknown basis %d", cfg.Basis)
	}
	return s, nil
}

// Config returns the configuration with the sector resolved.
func (s *Source) Config() Config {
	c := s.cfg
	c.Params = append([]string(nil), c.Params...)
	c.Sector = s.sector
	return c
}

// IsReal reports whether H is real, so that ground states use real arithmetic.
func (s *Source) IsReal() bool { return s.op.real }

// CommutesWithFlip reports whether H commutes with ∏X.
func (s *Source) CommutesWithFlip() bool { return s.op.commut }

// Sites returns N.
func (s *Source) Sites() int { return s.cfg.Sites }

// Alphabet returns 2 for a fixed basis and 6 for the random basis.
func (s *Source) Alphabet() int {
	if s.cfg.Basis == BasisRandom {
		return 6
	}
	return 2
}

// ParamDim returns the number of parameters.
func (s *Source) ParamDim() int { return len(s.cfg.Params) }

// maxEnumerable bounds q^N for Enumerable.
const maxEnumerable = 1 << 20

// Enumerable reports whether all q^N snapshots may be listed (q^N ≤ 2^20).
func (s *Source) Enumerable() bool {
	return math.Pow(float64(s.Alphabet()), float64(s.cfg.Sites)) <= maxEnumerable
}

// checkRows checks that xs holds rows snapshots of n sites with values
// below q, for LogProb.
func checkRows(xs []uint8, rows, n, q int) error {
	if len(xs) != rows*n {
		return fmt.Errorf("chain: LogProb: expected %d values (%d rows of %d sites), found %d", rows*n, rows, n, len(xs))
	}
	for i, v := range xs {
		if int(v) >= q {
			return fmt.Errorf("chain: LogProb: row %d site %d: expected a value below %d, found %d", i/n, i%n, q, v)
		}
	}
	return nil
}

// checkSampleRoom checks that dst holds n snapshots of ns sites.
func checkSampleRoom(dst []uint8, n, ns int) error {
	if len(dst) != n*ns {
		return fmt.Errorf("chain: Sample: expected room for %d values (%d snapshots of %d sites), found %d", n*ns, n, ns, len(dst))
	}
	return nil
}

// checkLambda checks that lambda gives a finite value for each of the
// chain's parameters.
func (c Config) checkLambda(lambda []float64) error {
	if len(lambda) != len(c.Params) {
		return fmt.Errorf("chain: expected %d parameters %v, found %d", len(c.Params), c.Params, len(lambda))
	}
	for i, v := range lambda {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("chain: parameter %s: expected a finite number, found %v", c.Params[i], v)
		}
	}
	return nil
}

// GroundState returns the ground state at λ in the chosen sector, with E0
// and the gap to the next level of the same sector, computed once per λ.
func (s *Source) GroundState(lambda []float64) (*State, error) {
	if err := s.cfg.checkLambda(lambda); err != nil {
		return nil, err
	}
	key := fmt.Sprint(lambda)
	s.mu.Lock()
	e := s.cache[key]
	if e == nil {
		e = &cacheEntry{}
		s.cache[key] = e
	}
	s.mu.Unlock()
	e.once.Do(func() {
		e.state, e.err = s.solve(lambda)
		if e.err == nil {
			e.mu.Lock()
			e.finished = e.state
			e.mu.Unlock()
		}
	})
	return e.state, e.err
}

func (s *Source) solve(lambda []float64) (*State, error) {
	st := &State{Lambda: append([]float64(nil), lambda...)}
	var err error
	if s.op.real {
		st.E0, st.Gap, st.Residual, st.Real, err = solveTyped[float64](s.op, lambda, s.sector)
	} else {
		st.E0, st.Gap, st.Residual, st.Complex, err = solveTyped[complex128](s.op, lambda, s.sector)
	}
	if err != nil {
		return nil, fmt.Errorf("chain: ground state at %v: %w", lambda, err)
	}
	return st, nil
}

func solveTyped[T scalar](op *operator, lambda []float64, sector Sector) (e0, gap, resid float64, psi []T, err error) {
	h := buildMatrix[T](op, lambda)
	dim := 1 << op.n
	proj := projector[T](op.n, sector)
	g, err := lowest(h, proj, nil, startVector[T](dim, 1), defaultLanczos)
	if err != nil {
		return 0, 0, 0, nil, err
	}
	ex, err := lowest(h, proj, [][]T{g.vector}, startVector[T](dim, 2), defaultLanczos)
	if err != nil {
		return 0, 0, 0, nil, fmt.Errorf("first excited state: %w", err)
	}
	phaseFix(g.vector)
	return g.value, ex.value - g.value, g.residual, g.vector, nil
}

// rotate applies the measurement rotation of basis b (0 = X: H; 1 = Y: H·S†;
// 2 = Z: identity) to the site whose amplitudes pair as (v[i], v[i+half]).
func rot(b int, a0, a1 complex128) (complex128, complex128) {
	const r = 1 / math.Sqrt2
	switch b {
	case 0:
		return complex(r, 0) * (a0 + a1), complex(r, 0) * (a0 - a1)
	case 1:
		return complex(r, 0) * (a0 - 1i*a1), complex(r, 0) * (a0 + 1i*a1)
	}
	return a0, a1
}

// fixedIndex maps a fixed basis to the rotation index of rot.
func fixedIndex(b Basis) int {
	switch b {
	case BasisX:
		return 0
	case BasisY:
		return 1
	}
	return 2
}

// probabilities returns the Born probabilities of the stored snapshots in a
// fixed basis, indexed by Σ_j x_j 2^j with x_j the stored site value, and
// their cumulative sums.
func (st *State) probabilities(n int, b Basis, sector Sector) ([]float64, []float64) {
	k := fixedIndex(b)
	st.probOnce[k].Do(func() {
		dim := 1 << n
		p := make([]float64, dim)
		if b == BasisZ && st.Real != nil {
			for i, v := range st.Real {
				p[i] = v * v
			}
		} else {
			v := append([]complex128(nil), st.Amplitudes()...)
			if b != BasisZ {
				for site := 0; site < n; site++ {
					bit := 1 << site
					for i := range v {
						if i&bit == 0 {
							v[i], v[i|bit] = rot(k, v[i], v[i|bit])
						}
					}
				}
			}
			for i, a := range v {
				p[i] = real(a)*real(a) + imag(a)*imag(a)
			}
		}
		if b == BasisX && sector != SectorNone {
			// In a ∏X sector the X outcomes have fixed parity exactly: an
			// odd number of X = −1 outcomes is impossible in the even sector.
			want := 0
			if sector == SectorOdd {
				want = 1
			}
			for i := range p {
				if bits.OnesCount(uint(i))&1 != want {
					p[i] = 0
				}
			}
		}
		// Internal bit 0 is eigenvalue +1, stored as 1: stored index = complement.
		full := dim - 1
		q := make([]float64, dim)
		tot := 0.0
		for i, v := range p {
			q[full^i] = v
			tot += v
		}
		cdf := make([]float64, dim)
		acc := 0.0
		for i := range q {
			q[i] /= tot
			acc += q[i]
			cdf[i] = acc
		}
		st.probs[k], st.cdfs[k] = q, cdf
	})
	return st.probs[k], st.cdfs[k]
}

// Probabilities returns the exact Born probabilities at λ of all 2^N stored
// snapshots x of a fixed basis, indexed by Σ_j x_j 2^j. It fails for the
// random basis. The slice is shared: do not modify it. In the x basis within
// a ∏X sector the outcomes of the wrong parity get probability exactly 0
// (log p = −Inf) rather than rounding noise.
func (s *Source) Probabilities(lambda []float64) ([]float64, error) {
	if s.cfg.Basis == BasisRandom {
		return nil, fmt.Errorf("chain: Probabilities needs a fixed basis (z, x or y), found random")
	}
	st, err := s.GroundState(lambda)
	if err != nil {
		return nil, err
	}
	p, _ := st.probabilities(s.cfg.Sites, s.cfg.Basis, s.sector)
	return p, nil
}

// LogProb writes log p(x_m|λ) in nats for each snapshot row of xs into dst.
// For the random basis it includes the (1/3)^N probability of the bases. A λ
// whose ground state has not been asked for is solved from the nearest state
// already computed (see scoringState).
func (s *Source) LogProb(dst []float64, xs []uint8, lambda []float64) error {
	n := s.cfg.Sites
	if err := checkRows(xs, len(dst), n, s.Alphabet()); err != nil {
		return err
	}
	st, err := s.scoringState(lambda)
	if err != nil {
		return err
	}
	if s.cfg.Basis != BasisRandom {
		p, _ := st.probabilities(n, s.cfg.Basis, s.sector)
		for m := range dst {
			idx := 0
			for j, v := range xs[m*n : (m+1)*n] {
				idx |= int(v) << j
			}
			dst[m] = math.Log(p[idx])
		}
		return nil
	}
	// Snapshots sharing their first measured sites share that work
	// (collapseShared), the bulk of the O(2^N) cost per snapshot.
	collapseShared(st.Amplitudes(), xs, n, dst)
	for m := range dst {
		dst[m] += float64(n) * math.Log(1.0/3)
	}
	return nil
}

// measureRow holds the rows of the measurement rotations: outcome o of basis b
// (0 = X: H; 1 = Y: H·S†; 2 = Z: identity) has amplitude
// measureRow[b][o][0]·a0 + measureRow[b][o][1]·a1 for a site whose
// amplitudes pair as (a0, a1). They are the rows of rot.
var measureRow = [3][2][2]complex128{
	{{1 / math.Sqrt2, 1 / math.Sqrt2}, {1 / math.Sqrt2, -1 / math.Sqrt2}},
	{{1 / math.Sqrt2, -1i / math.Sqrt2}, {1 / math.Sqrt2, 1i / math.Sqrt2}},
	{{1, 0}, {0, 1}},
}

// collapse measures sites N−1 down to 0 of amp in the given per-site bases
// (0 = X, 1 = Y, 2 = Z), each time keeping only the half of the state that
// matches the outcome, and returns log p of the whole outcome string by the
// chain rule of conditional probabilities. With rng non-nil the outcomes are
// drawn from the conditional probabilities and written to outs; otherwise
// outs is read. buf needs len(amp) elements. Cost O(2^N) (about 3·2^N
// complex multiply-adds when sampling, 2·2^N otherwise).
func collapse(amp, buf []complex128, bases, outs []int, rng *rand.Rand) float64 {
	n := len(bases)
	cur := amp
	tot := 0.0
	for _, a := range amp {
		tot += real(a)*real(a) + imag(a)*imag(a)
	}
	logp := 0.0
	for site := n - 1; site >= 0; site-- {
		half := 1 << site
		b := bases[site]
		var o int
		if rng != nil {
			u := measureRow[b][0]
			p0 := 0.0
			for i := 0; i < half; i++ {
				a := u[0]*cur[i] + u[1]*cur[i+half]
				p0 += real(a)*real(a) + imag(a)*imag(a)
			}
			if rng.Float64()*tot >= p0 {
				o = 1
			}
			outs[site] = o
		} else {
			o = outs[site]
		}
		u := measureRow[b][o]
		// When cur is buf this is in place: element i is written only after
		// elements i and i+half were read, and later reads are at indices ≥ i.
		next := buf[:half]
		pc := 0.0
		for i := 0; i < half; i++ {
			a := u[0]*cur[i] + u[1]*cur[i+half]
			next[i] = a
			pc += real(a)*real(a) + imag(a)*imag(a)
		}
		if pc <= 0 || tot <= 0 {
			return math.Inf(-1)
		}
		logp += math.Log(pc / tot)
		tot = pc
		cur = next
	}
	return logp
}

// Sample writes n snapshots drawn from p(·|λ) into dst. Fixed bases use the
// exact probability vector (computed once per λ) and inverse-CDF sampling by
// binary search; the random basis draws bases per site and shot, then the
// outcomes site by site from their conditional probabilities.
func (s *Source) Sample(dst []uint8, n int, lambda []float64, rng *rand.Rand) error {
	ns := s.cfg.Sites
	if err := checkSampleRoom(dst, n, ns); err != nil {
		return err
	}
	st, err := s.GroundState(lambda)
	if err != nil {
		return err
	}
	if s.cfg.Basis != BasisRandom {
		_, cdf := st.probabilities(ns, s.cfg.Basis, s.sector)
		last := cdf[len(cdf)-1]
		for m := 0; m < n; m++ {
			u := rng.Float64() * last
			idx := sort.Search(len(cdf), func(i int) bool { return cdf[i] > u })
			if idx >= len(cdf) {
				idx = len(cdf) - 1
			}
			row := dst[m*ns : (m+1)*ns]
			for j := range row {
				row[j] = uint8(idx >> j & 1)
			}
		}
		return nil
	}
	amp := st.Amplitudes()
	buf := make([]complex128, len(amp))
	bases := make([]int, ns)
	outs := make([]int, ns)
	for m := 0; m < n; m++ {
		for j := range bases {
			bases[j] = rng.IntN(3)
		}
		collapse(amp, buf, bases, outs, rng)
		row := dst[m*ns : (m+1)*ns]
		for j := range row {
			row[j] = uint8(2*bases[j] + 1 - outs[j])
		}
	}
	return nil
}
