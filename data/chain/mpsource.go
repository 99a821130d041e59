package chain

import (
	"context"
	"errors"
	"fmt"
	"hash/fnv"
	"math"
	"math/rand/v2"
	"sort"
	"strings"
	"sync"

	"gonum.org/v1/gonum/stat"

	"tidemark/data"
	"tidemark/data/chain/mps"
)

// MaxMPSSites is the largest chain the MPS solver accepts.
const MaxMPSSites = 1024

// MPSOptions are the DMRG settings of an MPS source; zero fields take the
// defaults of mps.DefaultOptions.
type MPSOptions struct {
	// MaxBond caps the bond dimension of the DMRG state (the ∏X-sector
	// projection may double it, see MPSSource).
	MaxBond int
	// Cutoff is the largest discarded weight per two-site split.
	Cutoff float64
	// Tol is the relative energy change per sweep that ends the sweeps.
	Tol float64
	// MaxSweeps bounds the sweeps.
	MaxSweeps int
	// Pin is the strength ε of a pinning field −ε(Z_0 + Z_{N−1}) on the two
	// end sites, added to H for DMRG only (0: none). It selects one state
	// deterministically inside a (nearly) degenerate ground space, such as
	// the edge modes of an open chain; with a ∏X sector the projection then
	// symmetrises that state again (Z is odd under ∏X, so the field's
	// first-order effect on a non-degenerate state is projected out).
	Pin float64
}

func (o MPSOptions) mps() mps.Options {
	return mps.Options{MaxBond: o.MaxBond, Cutoff: o.Cutoff, Tol: o.Tol, MaxSweeps: o.MaxSweeps}
}

// Filled returns o with the defaults filled in.
func (o MPSOptions) Filled() MPSOptions {
	f := o.mps()
	d := mps.DefaultOptions
	if f.MaxBond <= 0 {
		f.MaxBond = d.MaxBond
	}
	if f.Cutoff <= 0 {
		f.Cutoff = d.Cutoff
	}
	if f.Tol <= 0 {
		f.Tol = d.Tol
	}
	if f.MaxSweeps <= 0 {
		f.MaxSweeps = d.MaxSweeps
	}
	return MPSOptions{MaxBond: f.MaxBond, Cutoff: f.Cutoff, Tol: f.Tol, MaxSweeps: f.MaxSweeps, Pin: o.Pin}
}

// MPSSource is a spin chain's snapshot distribution p(x|λ) with the ground
// state held as a matrix-product state found by two-site DMRG, for chains
// beyond exact diagonalisation. It implements the same methods as Source
// (Sites, Alphabet, ParamDim, LogProb, Sample), with exact outcome
// probabilities of the MPS. It is safe for concurrent use; ground states are
// cached per λ.
//
// The ∏X sector is chosen as in Source. When H commutes with ∏X and the
// sector is even or odd, the DMRG state ψ (which, in an ordered phase, is
// typically one of the two symmetry-broken states) is replaced by its
// projection (1 ± ∏X)ψ, normalised and compressed, refined by a few DMRG
// sweeps (bond cap doubled) and projected again: this fixes the state
// deterministically inside a degenerate doublet, so that neighbouring grid
// points and a later rebuild hold the same state. The projection may double
// the bond dimension. A DMRG state with less than MinSectorWeight of its
// weight in the requested sector is an error: that sector's lowest state is
// then not the ground state.
type MPSSource struct {
	cfg    Config
	opt    MPSOptions
	seed   uint64
	ham    *Hamiltonian
	sector Sector
	commut bool

	mu    sync.Mutex
	cache map[string]*mpsEntry
	grid  [][]float64 // the grid of SimulateMPS or of the source record
}

// MinSectorWeight is the least weight of the DMRG state in the requested ∏X
// sector.
const MinSectorWeight = 1e-3

// MPSState is the ground state of the chain at one λ as an MPS.
type MPSState struct {
	// Lambda is the parameter point.
	Lambda []float64
	// Energy is ⟨H⟩ of the final (projected) state.
	Energy float64
	// MaxDiscarded is the largest discarded weight of DMRG's last sweep and
	// of the sector projection's compression.
	MaxDiscarded float64
	// Bond is the largest bond dimension of the final state.
	Bond int
	// Sweeps is the number of DMRG sweeps.
	Sweeps int
	// SectorWeight is the weight of the DMRG state in the sector (1 without
	// a sector).
	SectorWeight float64
	// Converged reports that the sweeps met the energy tolerance before
	// MaxSweeps; an unconverged state is kept and flagged.
	Converged bool
	// State is the final state, right-canonical and normalised.
	State *mps.MPS
	// raw is the DMRG state before the projection, the warm start of the
	// next grid point.
	raw *mps.MPS
}

type mpsEntry struct {
	once  sync.Once
	state *MPSState
	err   error
}

// NewMPS checks cfg (Sites from 2 to MaxMPSSites) and returns its MPS
// source; seed fixes the random initial states of DMRG.
func NewMPS(cfg Config, opt MPSOptions, seed uint64) (*MPSSource, error) {
	if cfg.Sites < 2 || cfg.Sites > MaxMPSSites {
		return nil, fmt.Errorf("chain: sites: expected 2 to %d for the MPS solver, found %d", MaxMPSSites, cfg.Sites)
	}
	if opt.MaxBond < 0 || opt.Cutoff < 0 || opt.Pin < 0 || opt.Tol < 0 || opt.MaxSweeps < 0 || math.IsNaN(opt.Cutoff) || math.IsNaN(opt.Tol) || math.IsNaN(opt.Pin) || math.IsInf(opt.Pin, 0) {
		return nil, fmt.Errorf("chain: MPS options: expected non-negative numbers, found %+v", opt)
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
	used := map[string]bool{}
	for _, t := range h.Terms {
		if len(t.Word) > cfg.Sites {
			return nil, &ParseError{Text: h.Text, Column: t.Column, Expected: fmt.Sprintf("a Pauli word of at most %d letters (the number of sites)", cfg.Sites), Found: fmt.Sprintf("%q with %d", t.Word, len(t.Word))}
		}
		for _, p := range t.Params {
			if !seen[p] {
				return nil, fmt.Errorf("hamiltonian %q, column %d: parameter %q is not a grid axis (axes: %s)", h.Text, t.Column, p, strings.Join(cfg.Params, ", "))
			}
			used[p] = true
		}
	}
	for _, p := range cfg.Params {
		if !used[p] {
			return nil, fmt.Errorf("hamiltonian %q: grid axis %q does not appear in the Hamiltonian", h.Text, p)
		}
	}
	_, commut := wordSymmetries(h)
	s := &MPSSource{cfg: cfg, opt: opt.Filled(), seed: seed, ham: h, commut: commut, cache: map[string]*mpsEntry{}}
	s.cfg.Params = append([]string(nil), cfg.Params...)
	switch cfg.Sector {
	case SectorAuto:
		s.sector = SectorNone
		if commut {
			s.sector = SectorEven
		}
	case SectorEven, SectorOdd:
		if !commut {
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

// wordSymmetries reports whether every word whose coefficient does not
// cancel identically has an even number of Y (H real) and an even number of
// Z and Y letters (H commutes with ∏X). Equal words are merged first, like
// compile does for placed strings.
func wordSymmetries(h *Hamiltonian) (real, commut bool) {
	type acc struct{ coef, abs float64 }
	sums := map[string]map[string]*acc{}
	for _, t := range h.Terms {
		w := strings.Trim(t.Word, "I")
		ps := append([]string(nil), t.Params...)
		sort.Strings(ps)
		k := strings.Join(ps, "*")
		if sums[w] == nil {
			sums[w] = map[string]*acc{}
		}
		a := sums[w][k]
		if a == nil {
			a = &acc{}
			sums[w][k] = a
		}
		a.coef += t.Factor
		a.abs += math.Abs(t.Factor)
	}
	real, commut = true, true
	for w, m := range sums {
		zero := true
		for _, a := range m {
			if math.Abs(a.coef) > 1e-12*a.abs {
				zero = false
			}
		}
		if zero {
			continue
		}
		ny, nzy := strings.Count(w, "Y"), strings.Count(w, "Y")+strings.Count(w, "Z")
		if ny%2 == 1 {
			real = false
		}
		if nzy%2 == 1 {
			commut = false
		}
	}
	return real, commut
}

// Config returns the configuration with the sector resolved.
func (s *MPSSource) Config() Config {
	c := s.cfg
	c.Params = append([]string(nil), c.Params...)
	c.Sector = s.sector
	return c
}

// Options returns the DMRG settings with the defaults filled in.
func (s *MPSSource) Options() MPSOptions { return s.opt }

// Seed returns the seed of DMRG's random initial states.
func (s *MPSSource) Seed() uint64 { return s.seed }

// Sites returns N.
func (s *MPSSource) Sites() int { return s.cfg.Sites }

// Alphabet returns 2 for a fixed basis and 6 for the random basis.
func (s *MPSSource) Alphabet() int {
	if s.cfg.Basis == BasisRandom {
		return 6
	}
	return 2
}

// ParamDim returns the number of parameters.
func (s *MPSSource) ParamDim() int { return len(s.cfg.Params) }

// Enumerable reports whether all q^N snapshots may be listed (q^N ≤ 2^20),
// as for Source.
func (s *MPSSource) Enumerable() bool {
	return math.Pow(float64(s.Alphabet()), float64(s.cfg.Sites)) <= maxEnumerable
}

// terms places H at λ on the chain.
func (s *MPSSource) terms(lambda []float64) []mps.Term {
	idx := map[string]int{}
	for i, p := range s.cfg.Params {
		idx[p] = i
	}
	n := s.cfg.Sites
	var out []mps.Term
	for _, t := range s.ham.Terms {
		c := t.Factor
		for _, p := range t.Params {
			c *= lambda[idx[p]]
		}
		starts := n
		if s.cfg.Open {
			starts = n - len(t.Word) + 1
		}
		for st := 0; st < starts; st++ {
			sites := make([]int, len(t.Word))
			for k := range sites {
				sites[k] = (st + k) % n
			}
			out = append(out, mps.Term{Coef: c, Sites: sites, Letters: t.Word})
		}
	}
	return out
}

// MPO returns the matrix-product operator of H at λ.
func (s *MPSSource) MPO(lambda []float64) (*mps.MPO, error) {
	if err := s.cfg.checkLambda(lambda); err != nil {
		return nil, err
	}
	return mps.BuildMPO(s.cfg.Sites, s.terms(lambda))
}

// lambdaStream returns a random stream fixed by the seed and λ alone.
func (s *MPSSource) lambdaStream(lambda []float64) *rand.Rand {
	f := fnv.New64a()
	for _, v := range lambda {
		b := math.Float64bits(v)
		for k := 0; k < 8; k++ {
			f.Write([]byte{byte(b >> (8 * k))})
		}
	}
	return rand.New(rand.NewPCG(s.seed, f.Sum64()))
}

// GroundState returns the ground state at λ, computed once per λ. With a
// grid (SetGrid; SimulateMPS and MPSSourceFromMeta set it) it follows
// SimulateMPS's path: a grid point is solved after the points before it in
// its run, each warm-started from the previous one, so a rebuilt source
// holds the very states the snapshots were drawn from; any other λ is
// warm-started from the nearest grid point's state, which keeps it on the
// same branch inside a (near) degeneracy. Without a grid DMRG starts from a
// random state fixed by the seed and λ.
func (s *MPSSource) GroundState(lambda []float64) (*MPSState, error) {
	if err := s.cfg.checkLambda(lambda); err != nil {
		return nil, err
	}
	s.mu.Lock()
	grid := s.grid
	s.mu.Unlock()
	if len(grid) == 0 {
		return s.Solve(context.Background(), lambda, nil)
	}
	best, dist := 0, math.Inf(1)
	for k, p := range grid {
		d := 0.0
		for i := range p {
			d += (p[i] - lambda[i]) * (p[i] - lambda[i])
		}
		if d < dist {
			best, dist = k, d
		}
	}
	near, err := s.gridPoint(grid, best)
	if err != nil {
		return nil, err
	}
	if dist == 0 {
		return near, nil
	}
	return s.Solve(context.Background(), lambda, near)
}

// gridPoint solves grid point k along its run, as SimulateMPS does.
func (s *MPSSource) gridPoint(grid [][]float64, k int) (*MPSState, error) {
	for _, r := range MPSRunBounds(len(grid)) {
		if k < r[0] || k >= r[1] {
			continue
		}
		var prev *MPSState
		for i := r[0]; i <= k; i++ {
			st, err := s.Solve(context.Background(), grid[i], prev)
			if err != nil {
				return nil, fmt.Errorf("grid point %d: %w", i, err)
			}
			prev = st
		}
		return prev, nil
	}
	return nil, fmt.Errorf("chain: grid point %d outside a grid of %d", k, len(grid))
}

// SetGrid records the grid whose runs GroundState follows (see
// GroundState); SimulateMPS and MPSSourceFromMeta call it.
func (s *MPSSource) SetGrid(points [][]float64) error {
	g := make([][]float64, len(points))
	for k, p := range points {
		if err := s.cfg.checkLambda(p); err != nil {
			return fmt.Errorf("grid point %d: %w", k, err)
		}
		g[k] = append([]float64(nil), p...)
	}
	s.mu.Lock()
	s.grid = g
	s.mu.Unlock()
	return nil
}

// Solve returns the ground state at λ, running DMRG from warm (a state
// returned by an earlier Solve, typically at a neighbouring grid point) or,
// when warm is nil, from a random state fixed by the seed and λ. The result
// is cached per λ: a λ solved before is returned as it was.
func (s *MPSSource) Solve(ctx context.Context, lambda []float64, warm *MPSState) (*MPSState, error) {
	if err := s.cfg.checkLambda(lambda); err != nil {
		return nil, err
	}
	key := fmt.Sprint(lambda)
	s.mu.Lock()
	e := s.cache[key]
	if e == nil {
		e = &mpsEntry{}
		s.cache[key] = e
	}
	s.mu.Unlock()
	e.once.Do(func() { e.state, e.err = s.solve(ctx, lambda, warm) })
	if e.err != nil && ctx.Err() != nil {
		// Do not cache a cancelled solve.
		s.mu.Lock()
		delete(s.cache, key)
		s.mu.Unlock()
	}
	return e.state, e.err
}

func (s *MPSSource) solve(ctx context.Context, lambda []float64, warm *MPSState) (*MPSState, error) {
	h, err := s.MPO(lambda)
	if err != nil {
		return nil, err
	}
	hp := h
	if s.opt.Pin != 0 {
		n := s.cfg.Sites
		ts := append(s.terms(lambda), mps.Term{Coef: -s.opt.Pin, Sites: []int{0}, Letters: "Z"}, mps.Term{Coef: -s.opt.Pin, Sites: []int{n - 1}, Letters: "Z"})
		if hp, err = mps.BuildMPO(n, ts); err != nil {
			return nil, err
		}
	}
	var init *mps.MPS
	if warm != nil {
		init = warm.raw
	}
	raw, res, err := mps.GroundState(ctx, hp, init, s.opt.mps(), s.lambdaStream(lambda))
	if err != nil && !errors.Is(err, mps.ErrNotConverged) {
		return nil, fmt.Errorf("chain: MPS ground state at %v: %w", lambda, err)
	}
	st := &MPSState{Lambda: append([]float64(nil), lambda...), Sweeps: res.Sweeps, MaxDiscarded: res.MaxDiscarded, SectorWeight: 1, raw: raw, State: raw, Converged: res.Converged}
	if s.sector == SectorEven || s.sector == SectorOdd {
		sign := 1.0
		if s.sector == SectorOdd {
			sign = -1
		}
		proj, w, disc := raw.FlipSector(sign, 2*s.opt.MaxBond, s.opt.Cutoff)
		if w < MinSectorWeight {
			return nil, fmt.Errorf("chain: MPS ground state at %v has weight %.2g in sector %s (below %.0e): the sector's lowest state is not the ground state; use sector none or the other sector", lambda, w, s.sector, MinSectorWeight)
		}
		st.State, st.SectorWeight = proj, w
		st.MaxDiscarded = max(st.MaxDiscarded, disc)
		if w < 1-1e-9 {
			// The projection of a symmetry-broken state is the sector's
			// ground state only up to the admixture that the broken state
			// carried (of the order of the doublet's splitting); a few
			// sweeps from the projection, with twice the bond cap, remove
			// it, and projecting again removes any drift out of the sector.
			o := s.opt.mps()
			o.MaxBond = 2 * s.opt.MaxBond
			o.MinSweeps = 1
			ref, r2, err := mps.GroundState(ctx, hp, proj, o, nil)
			if err != nil && !errors.Is(err, mps.ErrNotConverged) {
				return nil, fmt.Errorf("chain: MPS ground state at %v, refined in sector %s: %w", lambda, s.sector, err)
			}
			proj2, _, disc2 := ref.FlipSector(sign, 2*s.opt.MaxBond, s.opt.Cutoff)
			st.State = proj2
			st.Sweeps += r2.Sweeps
			st.Converged = st.Converged && r2.Converged
			st.MaxDiscarded = max(st.MaxDiscarded, r2.MaxDiscarded, disc2)
		}
	}
	st.Energy = mps.Expect(st.State, h)
	st.Bond = st.State.MaxBond()
	return st, nil
}

// rowBases fills bases and outs from one stored snapshot row.
func (s *MPSSource) rowBases(row []uint8, bases, outs []int) {
	if s.cfg.Basis == BasisRandom {
		for j, v := range row {
			bases[j] = int(v) / 2
			outs[j] = 1 - int(v)%2
		}
		return
	}
	b := fixedIndex(s.cfg.Basis)
	for j, v := range row {
		bases[j] = b
		outs[j] = 1 - int(v)
	}
}

// LogProb writes log p(x_m|λ) in nats for each snapshot row of xs into dst:
// the exact Born probability of the MPS (times (1/3)^N for the random
// basis).
func (s *MPSSource) LogProb(dst []float64, xs []uint8, lambda []float64) error {
	n := s.cfg.Sites
	if err := checkRows(xs, len(dst), n, s.Alphabet()); err != nil {
		return err
	}
	st, err := s.GroundState(lambda)
	if err != nil {
		return err
	}
	mm := mps.NewMeasurer(st.State)
	bases, outs := make([]int, n), make([]int, n)
	extra := 0.0
	if s.cfg.Basis == BasisRandom {
		extra = float64(n) * math.Log(1.0/3)
	}
	for m := range dst {
		s.rowBases(xs[m*n:(m+1)*n], bases, outs)
		dst[m] = extra + mm.LogProb(bases, outs)
	}
	return nil
}

// Sample writes n snapshots drawn from p(·|λ) into dst by perfect sampling
// of the MPS: independent snapshots, each drawn site by site from its
// conditional probabilities.
func (s *MPSSource) Sample(dst []uint8, n int, lambda []float64, rng *rand.Rand) error {
	if err := checkSampleRoom(dst, n, s.cfg.Sites); err != nil {
		return err
	}
	st, err := s.GroundState(lambda)
	if err != nil {
		return err
	}
	s.sampleState(st, dst, n, rng)
	return nil
}

func (s *MPSSource) sampleState(st *MPSState, dst []uint8, n int, rng *rand.Rand) {
	ns := s.cfg.Sites
	mm := mps.NewMeasurer(st.State)
	bases, outs := make([]int, ns), make([]int, ns)
	fixed := fixedIndex(s.cfg.Basis)
	for m := 0; m < n; m++ {
		for j := range bases {
			if s.cfg.Basis == BasisRandom {
				bases[j] = rng.IntN(3)
			} else {
				bases[j] = fixed
			}
		}
		mm.Sample(bases, outs, rng)
		row := dst[m*ns : (m+1)*ns]
		for j := range row {
			if s.cfg.Basis == BasisRandom {
				row[j] = uint8(2*bases[j] + 1 - outs[j])
			} else {
				row[j] = uint8(1 - outs[j])
			}
		}
	}
}

// EntropyEstimate returns the Shannon entropy per site of p(·|λ) (nats),
// estimated as the mean of −log p(x)/N over n independent snapshots x drawn
// from p, with its standard error: the MPS gives log p of each draw
// exactly, so the only error is the sampling noise.
func (s *MPSSource) EntropyEstimate(lambda []float64, n int, rng *rand.Rand) (mean, stderr float64, err error) {
	if n < 2 {
		return 0, 0, fmt.Errorf("chain: EntropyEstimate: expected at least 2 samples, found %d", n)
	}
	st, err := s.GroundState(lambda)
	if err != nil {
		return 0, 0, err
	}
	ns := s.cfg.Sites
	mm := mps.NewMeasurer(st.State)
	bases, outs := make([]int, ns), make([]int, ns)
	fixed := fixedIndex(s.cfg.Basis)
	extra := 0.0
	if s.cfg.Basis == BasisRandom {
		extra = float64(ns) * math.Log(1.0/3)
	}
	x := make([]float64, n)
	for m := range x {
		for j := range bases {
			if s.cfg.Basis == BasisRandom {
				bases[j] = rng.IntN(3)
			} else {
				bases[j] = fixed
			}
		}
		x[m] = -(extra + mm.Sample(bases, outs, rng)) / float64(ns)
	}
	mean, sd := stat.MeanStdDev(x, nil)
	return mean, sd / math.Sqrt(float64(n)), nil
}

// MPSPoint records the ground state found at one grid point of an MPS run.
type MPSPoint struct {
	// Params is the grid point.
	Params []float64 `json:"params"`
	// E0 is ⟨H⟩ of the final state.
	E0 float64 `json:"e0"`
	// MaxDiscarded is the largest discarded weight (see MPSState).
	MaxDiscarded float64 `json:"max_discarded_weight"`
	// Bond is the largest bond dimension of the final state.
	Bond int `json:"bond"`
	// Sweeps is the number of DMRG sweeps.
	Sweeps int `json:"sweeps"`
	// SectorWeight is the DMRG state's weight in the ∏X sector.
	SectorWeight float64 `json:"sector_weight"`
	// Converged reports that the sweeps met the energy tolerance.
	Converged bool `json:"converged"`
}

// MPSResult holds the snapshots drawn over a grid by SimulateMPS.
type MPSResult struct {
	// States holds len(Points)·samples snapshots, point by point, row-major.
	States []uint8
	// Params holds the parameters of each snapshot, row-major.
	Params []float64
	// Points records the ground state at each grid point, in grid order.
	Points []MPSPoint
}

// SimulateMPS draws samples snapshots at every grid point from s. The grid
// is split into MPSRuns contiguous runs (fewer for a short grid), which run
// in parallel on up to threads goroutines; inside a run each point's DMRG
// starts from the previous point's state (a warm start), and the first
// point of a run from a random state fixed by the seed and its λ. Point k
// draws its snapshots from the stream rand.NewPCG(seed, k). Neither the
// states nor the snapshots depend on threads. progress, if not nil, is
// called with 1 after each finished grid point; report, if not nil, with the
// point's index and state (both from several goroutines).
func SimulateMPS(ctx context.Context, s *MPSSource, points [][]float64, samples int, seed uint64, threads int, progress func(n int), report func(k int, st *MPSState)) (*MPSResult, error) {
	if samples < 1 {
		return nil, fmt.Errorf("chain: samples: expected at least 1, found %d", samples)
	}
	n, d := s.Sites(), s.ParamDim()
	res := &MPSResult{
		States: make([]uint8, len(points)*samples*n),
		Params: make([]float64, len(points)*samples*d),
		Points: make([]MPSPoint, len(points)),
	}
	for k, p := range points {
		if err := s.cfg.checkLambda(p); err != nil {
			return nil, fmt.Errorf("grid point %d: %w", k, err)
		}
		for m := 0; m < samples; m++ {
			copy(res.Params[(k*samples+m)*d:], p)
		}
	}
	if err := s.SetGrid(points); err != nil {
		return nil, err
	}
	runs := MPSRunBounds(len(points))
	err := data.ForEachPoint(ctx, len(runs), threads, func(r int) error {
		var prev *MPSState
		for k := runs[r][0]; k < runs[r][1]; k++ {
			st, err := s.Solve(ctx, points[k], prev)
			if err != nil {
				return fmt.Errorf("grid point %d: %w", k, err)
			}
			prev = st
			res.Points[k] = MPSPoint{Params: append([]float64(nil), points[k]...), E0: st.Energy,
				MaxDiscarded: st.MaxDiscarded, Bond: st.Bond, Sweeps: st.Sweeps, SectorWeight: st.SectorWeight, Converged: st.Converged}
			rng := rand.New(rand.NewPCG(seed, uint64(k)))
			s.sampleState(st, res.States[k*samples*n:(k+1)*samples*n], samples, rng)
			if report != nil {
				report(k, st)
			}
			if progress != nil {
				progress(1)
			}
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	return res, nil
}

// MPSRuns is the number of contiguous runs SimulateMPS splits a grid into.
const MPSRuns = 4

// MPSRunBounds returns the runs SimulateMPS cuts n grid points into: at most
// MPSRuns contiguous half-open index ranges [start, end) of near-equal
// length.
func MPSRunBounds(n int) [][2]int {
	r := max(1, min(MPSRuns, n))
	out := make([][2]int, r)
	for i := 0; i < r; i++ {
		out[i] = [2]int{i * n / r, (i + 1) * n / r}
	}
	return out
}
