package mps

import (
	"math"
	"math/rand/v2"
)

// measureRow holds ⟨o|, the bra of outcome o of basis b (0 = X, 1 = Y,
// 2 = Z; outcome 0 is eigenvalue +1), on the physical indices (↑, ↓). It is
// the same table as package chain's.
var measureRow = [3][2][2]complex128{
	{{1 / math.Sqrt2, 1 / math.Sqrt2}, {1 / math.Sqrt2, -1 / math.Sqrt2}},
	{{1 / math.Sqrt2, -1i / math.Sqrt2}, {1 / math.Sqrt2, 1i / math.Sqrt2}},
	{{1, 0}, {0, 1}},
}

// Measurer computes outcome probabilities of product measurements of a
// right-canonical, normalised state (as GroundState and Compress return
// it): the probability of the outcomes on sites 0…j is the squared norm of
// the left vector after contracting them, because the sites to the right
// are an isometry (A. J. Ferris and G. Vidal, Phys. Rev. B 85, 165146
// (2012)). A Measurer is not safe for concurrent use; make one per
// goroutine.
type Measurer struct {
	m              *MPS
	vr, vi, br, bi []float64 // left vector (real, imaginary) and products per physical index
	wr, wi         [2][]float64
}

// NewMeasurer returns a Measurer of m, which must be right-canonical and
// normalised; m is not copied and must not change. With an ancilla (a
// complex state) bases and outcomes are given for the chain's sites only.
func NewMeasurer(m *MPS) *Measurer {
	d := m.MaxBond()
	mm := &Measurer{m: m, vr: make([]float64, d), vi: make([]float64, d), br: make([]float64, 2*d), bi: make([]float64, 2*d)}
	for o := 0; o < 2; o++ {
		mm.wr[o] = make([]float64, d)
		mm.wi[o] = make([]float64, d)
	}
	return mm
}

// run measures every site j in bases[j]; with rng non-nil it draws the
// outcomes into outs, otherwise it reads them. It returns log p of the
// outcomes (nats).
func (mm *Measurer) run(bases, outs []int, rng *rand.Rand) float64 {
	m := mm.m
	vr, vi := mm.vr[:1], mm.vi[:1]
	vr[0], vi[0] = 1, 0
	first := 0
	if m.Ancilla {
		// ψ = Ψ(0,·) + i·Ψ(1,·): contract the ancilla with (1, i).
		d := m.Dims[1]
		vr, vi = mm.vr[:d], mm.vi[:d]
		copy(vr, m.A[0][:d])
		copy(vi, m.A[0][d:2*d])
		first = 1
	}
	logp := 0.0
	for j := first; j < m.N; j++ {
		dl, dr := m.Dims[j], m.Dims[j+1]
		a := m.A[j]
		b := bases[j-first]
		// b[s][r] = Σ_l v[l]·A[l,s,r], real and imaginary parts.
		br, bi := mm.br[:2*dr], mm.bi[:2*dr]
		for i := range br {
			br[i], bi[i] = 0, 0
		}
		for l := 0; l < dl; l++ {
			xr, xi := vr[l], vi[l]
			row := a[l*2*dr : (l+1)*2*dr]
			if xi == 0 {
				for i, c := range row {
					br[i] += xr * c
				}
			} else {
				for i, c := range row {
					br[i] += xr * c
					bi[i] += xi * c
				}
			}
		}
		var p [2]float64
		for o := 0; o < 2; o++ {
			u := measureRow[b][o]
			wr, wi := mm.wr[o][:dr], mm.wi[o][:dr]
			ur0, ui0, ur1, ui1 := real(u[0]), imag(u[0]), real(u[1]), imag(u[1])
			s := 0.0
			for r := 0; r < dr; r++ {
				// w = u0·b[0][r] + u1·b[1][r]
				a0r, a0i, a1r, a1i := br[r], bi[r], br[dr+r], bi[dr+r]
				x := ur0*a0r - ui0*a0i + ur1*a1r - ui1*a1i
				y := ur0*a0i + ui0*a0r + ur1*a1i + ui1*a1r
				wr[r], wi[r] = x, y
				s += x*x + y*y
			}
			p[o] = s
		}
		tot := p[0] + p[1]
		var o int
		if rng != nil {
			if rng.Float64()*tot >= p[0] {
				o = 1
			}
			outs[j-first] = o
		} else {
			o = outs[j-first]
		}
		if p[o] <= 0 || tot <= 0 {
			return math.Inf(-1)
		}
		logp += math.Log(p[o] / tot)
		// The new left vector, normalised to keep the numbers in range.
		sc := 1 / math.Sqrt(p[o])
		vr, vi = mm.vr[:dr], mm.vi[:dr]
		for r := 0; r < dr; r++ {
			vr[r] = mm.wr[o][r] * sc
			vi[r] = mm.wi[o][r] * sc
		}
	}
	return logp
}

// LogProb returns log p (nats) of outcomes outs[j] (0 for eigenvalue +1, 1
// for −1) of the Pauli measurements bases[j] (0 = X, 1 = Y, 2 = Z) on every
// site j.
func (mm *Measurer) LogProb(bases, outs []int) float64 { return mm.run(bases, outs, nil) }

// Sample draws outcomes of the measurements bases[j] into outs by perfect
// sampling, site by site from the conditional probabilities, and returns
// their log-probability.
func (mm *Measurer) Sample(bases, outs []int, rng *rand.Rand) float64 {
	return mm.run(bases, outs, rng)
}
