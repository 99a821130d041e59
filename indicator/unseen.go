package indicator

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// minUnseen is the fewest unseen snapshots per grid point for which a scan
// compares the curves on them with the curves on all snapshots.
const minUnseen = 10

// Unseen is a peak's position on the curve evaluated on the snapshots the
// model did not train on (its validation split and held-out points; see
// Config.Unseen), beside the peak on all snapshots.
type Unseen struct {
	// At is the position on the unseen snapshots' curve along the peak's
	// axis (the local maximum nearest the peak, within two positions), Err
	// its bootstrap error over those snapshots.
	At, Err float64
	// Shift is At minus the peak's own position; Noise the part of it that
	// sampling alone explains (one standard deviation of the difference
	// between a subset's estimate and the whole set's, √(Err² − σ²) with σ
	// the peak's bootstrap error on all snapshots; σ includes the
	// highest-peak spread, so Noise errs small and Added large).
	Shift, Noise float64
	// Added is the model term the shift adds to the peak's error, in
	// quadrature: √(Shift² − Noise²), or 0.
	Added float64
}

// unseenWeights returns the weights of the unseen snapshots of every point
// of ev (uniform over them; b ≥ 0: bootstrap replicate b of them), or nil
// when some point has fewer than minUnseen of them or ev's rows are not
// the data's rows.
func unseenWeights(ev *EvalSet, unseen []bool, seed uint64, b int) [][]float64 {
	w := make([][]float64, len(ev.Idx))
	for k, ix := range ev.Idx {
		var slots []int
		for i, m := range ix {
			if m >= len(unseen) {
				return nil
			}
			if unseen[m] {
				slots = append(slots, i)
			}
		}
		n := len(slots)
		if n < minUnseen {
			return nil
		}
		w[k] = make([]float64, len(ix))
		if b < 0 {
			for _, i := range slots {
				w[k][i] = 1 / float64(n)
			}
			continue
		}
		rng := rand.New(rand.NewPCG(seed^(0x9e3779b97f4a7c15*uint64(b+1)), 1))
		for j := 0; j < n; j++ {
			w[k][slots[rng.IntN(n)]] += 1 / float64(n)
		}
	}
	return w
}

// checkUnseen compares every peak of c with the curve val evaluated on the
// unseen snapshots (reps its bootstrap replicates over them): a model that
// has learnt its training snapshots rather than their distribution scores
// them differently from snapshots it never saw, and the curves move. The
// part of the shift beyond sampling noise joins the peak's error. It
// returns the unseen curve's highest peak on each line where it lies more
// than 2.5 grid steps from every peak of c (beyond the reach of the
// comparison), for a note.
func checkUnseen(c *Curve, val []float64, reps [][]float64) []Peak {
	for p := range c.Peaks {
		pk := &c.Peaks[p]
		ln := c.Lines[pk.Line]
		x := make([]float64, len(ln.Idx))
		i0 := 0
		for j, q := range ln.Idx {
			x[j] = c.Pos[q][ln.Axis]
			if q == pk.Index {
				i0 = j
			}
		}
		line := func(v []float64) []float64 {
			out := make([]float64, len(ln.Idx))
			for j, q := range ln.Idx {
				out[j] = v[q]
			}
			return out
		}
		at, _ := nearestMax(x, line(val), i0, 2)
		xs := make([]float64, 0, len(reps))
		for _, r := range reps {
			a, _ := nearestMax(x, line(r), i0, 2)
			xs = append(xs, a)
		}
		u := Unseen{At: at, Err: stdDev(xs), Shift: at - pk.At[ln.Axis]}
		u.Noise = math.Sqrt(math.Max(u.Err*u.Err-pk.bootErr*pk.bootErr, 0))
		u.Added = math.Sqrt(math.Max(u.Shift*u.Shift-u.Noise*u.Noise, 0))
		pk.Err[ln.Axis] = math.Hypot(pk.Err[ln.Axis], u.Added)
		pk.Unseen = &u
	}
	uc := Curve{Pos: c.Pos, Val: val, Lines: c.Lines, Err: make([]float64, len(val))}
	col := make([]float64, len(reps))
	for t := range val {
		for b, r := range reps {
			col[b] = r[t]
		}
		uc.Err[t] = stdDev(col)
	}
	findPeaks(&uc, reps, nil, len(reps) > 1, nil)
	// Only the unseen curve's highest peak on each line counts: with a
	// tenth of the snapshots, lower bumps come and go with the noise.
	var far []Peak
	for li, ln := range c.Lines {
		top := -1
		for i, up := range uc.Peaks {
			if up.Line == li && (top < 0 || up.Height > uc.Peaks[top].Height) {
				top = i
			}
		}
		if top < 0 {
			continue
		}
		up := uc.Peaks[top]
		step := math.Inf(1)
		for j := 1; j < len(ln.Idx); j++ {
			step = math.Min(step, math.Abs(c.Pos[ln.Idx[j]][ln.Axis]-c.Pos[ln.Idx[j-1]][ln.Axis]))
		}
		near := false
		for _, pk := range c.Peaks {
			if pk.Line == li && math.Abs(pk.At[ln.Axis]-up.At[ln.Axis]) <= 2.5*step {
				near = true
			}
		}
		if !near {
			far = append(far, up)
		}
	}
	return far
}

// unseenNotes says where the curves on the unseen snapshots disagree with
// the curves on all of them.
func unseenNotes(curves []*Curve, far map[string][]Peak, names []string) []string {
	var out []string
	for _, c := range curves {
		var moved []string
		for _, pk := range c.Peaks {
			if u := pk.Unseen; u != nil && math.Abs(u.Shift) > 2*u.Noise && material(pk.Err[c.Lines[pk.Line].Axis], u.Added) {
				moved = append(moved, fmt.Sprintf("%.4g → %.4g", pk.At[c.Lines[pk.Line].Axis], u.At))
			}
		}
		for _, up := range far[c.Name] {
			moved = append(moved, fmt.Sprintf("its highest peak there at %s, far from every peak on all snapshots", formatAt(names, up.At)))
		}
		if n := len(moved); n > 4 {
			// A 2-D map has a line per grid row: name a few.
			moved = append(moved[:3], fmt.Sprintf("and %d more", n-3))
		}
		if len(moved) > 0 {
			out = append(out, fmt.Sprintf("%s moves on the snapshots the model did not train on (%s): part of the curve reflects the training snapshots themselves rather than their distribution; the shifts join the peak errors, and a peak seen on only one of the two sets is not to be trusted", c.Name, joinComma(moved)))
		}
	}
	return out
}

// material reports that an added error changes a peak's error (err, the
// added part included) by more than a few per cent: only then does its
// shift get a note, so that a shift of 0.0004 on a peak known to ±0.19 is
// not announced as a move.
func material(err, added float64) bool {
	before := math.Sqrt(math.Max(err*err-added*added, 0))
	return added > 0 && added > 0.25*before
}

func formatAt(names []string, at []float64) string {
	s := ""
	for a, v := range at {
		if a > 0 {
			s += ", "
		}
		s += fmt.Sprintf("%s=%.4g", names[a], v)
	}
	return s
}

func joinComma(s []string) string {
	out := ""
	for i, x := range s {
		if i > 0 {
			out += "; "
		}
		out += x
	}
	return out
}
