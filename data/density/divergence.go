package density

import (
	"context"
	"errors"
	"fmt"
	"math"

	"tidemark/data"
)

// MaxDivergenceStates bounds the number of states ExhaustiveDivergence sums
// over (2^25, a 5×5 Ising lattice); beyond it the sum takes too long to be
// useful.
const MaxDivergenceStates = 1 << 25

// enumBlock is the number of states scored per call.
const enumBlock = 4096

// Divergence compares a model q with an exact density p at one parameter
// point by summing over every state x.
type Divergence struct {
	// KL is the Kullback–Leibler divergence Σ p ln(p/q) in nats per
	// snapshot (divide by the number of sites for nats per site).
	KL float64
	// TV is the total-variation distance ½ Σ |p − q| (between 0 and 1).
	TV float64
	// Entropy is the exact entropy −Σ p ln p in nats per snapshot.
	Entropy float64
	// ExactMass and ModelMass are Σ p and Σ q, both 1 up to rounding; a
	// departure flags an unnormalised source.
	ExactMass, ModelMass float64
	// States is the number of states summed over.
	States int
}

// ErrNotEnumerable reports that a source cannot list its states.
var ErrNotEnumerable = errors.New("the exact source cannot enumerate its states")

// States returns q^N, or −1 when it exceeds MaxDivergenceStates.
func States(q, n int) int {
	s := 1
	for i := 0; i < n; i++ {
		s *= q
		if s > MaxDivergenceStates {
			return -1
		}
	}
	return s
}

// ExhaustiveDivergence sums over all q^N states of the exact reference p
// (ref) and the model q (mdl) at λ and returns their divergence. ref must
// implement Enumerable and report true. Blocks of states are
// spread over threads goroutines; partial sums are added in block order, so
// the result does not depend on threads. progress, if non-nil, receives the
// number of states done after each block.
func ExhaustiveDivergence(ref, mdl Source, lambda []float64, threads int, progress func(n int)) (Divergence, error) {
	if !IsEnumerable(ref) {
		return Divergence{}, ErrNotEnumerable
	}
	q, n := ref.Alphabet(), ref.Sites()
	if mdl.Sites() != n || mdl.Alphabet() != q || mdl.ParamDim() != ref.ParamDim() {
		return Divergence{}, fmt.Errorf("exact comparison: the model has %d sites, alphabet %d and %d parameters, the exact source %d, %d and %d",
			mdl.Sites(), mdl.Alphabet(), mdl.ParamDim(), n, q, ref.ParamDim())
	}
	total := States(q, n)
	if total < 0 {
		return Divergence{}, fmt.Errorf("%w: %d^%d states exceed the limit of %d", ErrNotEnumerable, q, n, MaxDivergenceStates)
	}
	threads = data.Threads(threads)
	nb := (total + enumBlock - 1) / enumBlock
	type part struct{ kl, tv, h, pm, qm float64 }
	parts := make([]part, nb)
	type scratch struct {
		xs     []uint8
		lp, lq []float64
	}
	newScratch := func() scratch {
		return scratch{make([]uint8, enumBlock*n), make([]float64, enumBlock), make([]float64, enumBlock)}
	}
	err := data.ForEachWith(context.Background(), nb, threads, newScratch, func(b int, sc scratch) error {
		xs, lp, lq := sc.xs, sc.lp, sc.lq
		lo := b * enumBlock
		r := min(enumBlock, total-lo)
		for i := 0; i < r; i++ {
			s := lo + i
			row := xs[i*n : (i+1)*n]
			for j := range row {
				row[j] = uint8(s % q)
				s /= q
			}
		}
		if err := ref.LogProb(lp[:r], xs[:r*n], lambda); err != nil {
			return fmt.Errorf("exact source: %w", err)
		}
		if err := mdl.LogProb(lq[:r], xs[:r*n], lambda); err != nil {
			return fmt.Errorf("model: %w", err)
		}
		var pt part
		for i := 0; i < r; i++ {
			p, qq := math.Exp(lp[i]), math.Exp(lq[i])
			pt.pm += p
			pt.qm += qq
			pt.tv += math.Abs(p - qq)
			if p > 0 {
				pt.kl += p * (lp[i] - lq[i])
				pt.h -= p * lp[i]
			}
		}
		parts[b] = pt
		if progress != nil {
			progress(r)
		}
		return nil
	})
	if err != nil {
		return Divergence{}, err
	}
	var d Divergence
	for _, pt := range parts {
		d.KL += pt.kl
		d.TV += pt.tv
		d.Entropy += pt.h
		d.ExactMass += pt.pm
		d.ModelMass += pt.qm
	}
	d.TV /= 2
	d.States = total
	return d, nil
}
