package mps

import (
	"fmt"
	"sort"
	"strconv"
	"strings"
)

// Term is one Pauli string on the chain: Letters[k] (one of I, X, Y, Z) acts
// on site Sites[k]. The sites must be distinct; they need not be sorted, so a
// word that wraps around a periodic chain is given by its sites modulo N.
type Term struct {
	// Coef is the real coefficient of the string.
	Coef float64
	// Sites lists the sites the letters act on.
	Sites []int
	// Letters holds one of 'I', 'X', 'Y', 'Z' per site.
	Letters string
}

// op2 is a real 2×2 operator, row-major: [00 01 10 11].
type op2 [4]float64

var (
	opI = op2{1, 0, 0, 1}
	opX = op2{0, 1, 1, 0}
	// opYt is Ỹ = −i·Y = [[0, −1], [1, 0]], so that Y = i·Ỹ.
	opYt = op2{0, -1, 1, 0}
	opZ  = op2{1, 0, 0, -1}
)

func letterOp(r byte) op2 {
	switch r {
	case 'X':
		return opX
	case 'Y', 'E':
		return opYt
	case 'Z':
		return opZ
	}
	return opI
}

// MPO is a real matrix-product operator. W[j] maps the automaton state on
// bond j−1 (rows) to the state on bond j (columns); the chain's left end
// starts in state 0 and the right end must be in state 1.
type MPO struct {
	// N is the number of sites, including the ancilla.
	N int
	// Ancilla reports a complex operator embedded with an ancilla as site 0
	// (see BuildMPO).
	Ancilla bool
	w       []mpoTensor
}

// mpoTensor is one site of an MPO: for every (a, b) with nz[a·wr+b] the
// 2×2 operator ops[a·wr+b].
type mpoTensor struct {
	wl, wr int
	ops    []op2
	nz     []bool
}

func (t *mpoTensor) at(a, b int) *op2 { return &t.ops[a*t.wr+b] }

func (t *mpoTensor) add(a, b int, c float64, o op2) {
	i := a*t.wr + b
	for k := range o {
		t.ops[i][k] += c * o[k]
	}
	t.nz[i] = true
}

// MaxBond returns the largest bond dimension of the operator.
func (m *MPO) MaxBond() int {
	b := 0
	for _, t := range m.w {
		b = max(b, t.wr)
	}
	return b
}

type placed struct {
	site   int
	letter byte
}

// key names a pending automaton state: the letters still to be placed, with
// their absolute sites.
func key(rest []placed) string {
	var sb strings.Builder
	for _, p := range rest {
		sb.WriteString(strconv.Itoa(p.site))
		sb.WriteByte(p.letter)
	}
	return sb.String()
}

// BuildMPO returns the matrix-product operator of Σ terms on n sites by the
// finite-state-automaton construction (common practice; see Schollwöck, Ann.
// Phys. 326, 96 (2011), sec. 6.1): the coefficient is applied with a term's
// first letter, and the automaton states on a bond are the distinct lists of
// letters still to be placed, so terms that share their remaining letters
// share a state. Identity letters are dropped; a term of identities only
// adds a constant.
//
// A term with an odd number of Y letters is imaginary. When there is one,
// the operator H = H_r + i·H_i is embedded as the real symmetric operator
// H_r⊗1 + H_i⊗ε on the chain and an ancilla site placed first (ε = [[0,−1],
// [1,0]] acts on the ancilla, whose index 0 holds Re ψ and 1 holds Im ψ):
// it acts on (Re ψ, Im ψ) as H acts on ψ, every level appears twice (ψ and
// iψ), and a real ground state Ψ of it gives the complex ground state
// ψ = Ψ(0,·) + i·Ψ(1,·) up to a global phase. The MPO then has n+1 sites
// and Ancilla set; site j of the chain is MPO site j+1.
func BuildMPO(n int, terms []Term) (*MPO, error) {
	if n < 2 {
		return nil, fmt.Errorf("mps: expected at least 2 sites, found %d", n)
	}
	complexH := false
	for _, t := range terms {
		if t.Coef != 0 && strings.Count(t.Letters, "Y")%2 == 1 {
			complexH = true
		}
	}
	off := 0
	if complexH {
		off = 1
	}
	type inst struct {
		coef float64
		p    []placed
	}
	var all []inst
	constant := 0.0
	for ti, t := range terms {
		if len(t.Sites) != len(t.Letters) {
			return nil, fmt.Errorf("mps: term %d: expected one letter per site, found %d sites and %d letters", ti, len(t.Sites), len(t.Letters))
		}
		nY := 0
		seen := map[int]bool{}
		var ps []placed
		for k, s := range t.Sites {
			if s < 0 || s >= n {
				return nil, fmt.Errorf("mps: term %d: site %d outside 0..%d", ti, s, n-1)
			}
			if seen[s] {
				return nil, fmt.Errorf("mps: term %d: site %d appears twice", ti, s)
			}
			seen[s] = true
			l := t.Letters[k]
			switch l {
			case 'I':
				continue
			case 'Y':
				nY++
			case 'X', 'Z':
			default:
				return nil, fmt.Errorf("mps: term %d: expected a letter I, X, Y or Z, found %q", ti, l)
			}
			ps = append(ps, placed{s + off, l})
		}
		// With Y = i·Ỹ the term is c·i^nY·∏(letters, Ỹ for Y): real for
		// even nY; for odd nY it is i·(c·i^(nY−1))·∏, a part of H_i.
		c := t.Coef
		if (nY/2)%2 == 1 {
			c = -c
		}
		if nY%2 == 1 {
			ps = append(ps, placed{0, 'E'})
		}
		if c == 0 {
			continue
		}
		if len(ps) == 0 {
			constant += c
			continue
		}
		sort.Slice(ps, func(i, j int) bool { return ps[i].site < ps[j].site })
		all = append(all, inst{c, ps})
	}
	n += off
	// States on bond j (between sites j and j+1): 0 = nothing placed,
	// 1 = done, then the pending keys in order of first appearance.
	states := make([]map[string]int, n-1)
	for j := range states {
		states[j] = map[string]int{}
	}
	for _, in := range all {
		for k := 0; k < len(in.p)-1; k++ {
			// After placing letters 0..k, the rest is pending on bonds
			// p[k].site .. p[k+1].site−1.
			rest := in.p[k+1:]
			kk := key(rest)
			for b := in.p[k].site; b < in.p[k+1].site; b++ {
				if _, ok := states[b][kk]; !ok {
					states[b][kk] = 2 + len(states[b])
				}
			}
		}
	}
	dim := func(b int) int {
		if b < 0 || b >= n-1 {
			return 1
		}
		return 2 + len(states[b])
	}
	m := &MPO{N: n, Ancilla: complexH, w: make([]mpoTensor, n)}
	for j := 0; j < n; j++ {
		wl, wr := dim(j-1), dim(j)
		m.w[j] = mpoTensor{wl: wl, wr: wr, ops: make([]op2, wl*wr), nz: make([]bool, wl*wr)}
	}
	// row/col maps the logical states 0 (start) and 1 (done) onto the
	// boundary tensors, whose outer dimension is 1.
	row := func(j, s int) int {
		if j == 0 {
			return 0
		}
		return s
	}
	col := func(j, s int) int {
		if j == n-1 {
			return 0
		}
		return s
	}
	for j := 0; j < n; j++ {
		t := &m.w[j]
		if j > 0 {
			t.add(1, col(j, 1), 1, opI) // done stays done
		}
		if j < n-1 {
			t.add(row(j, 0), 0, 1, opI) // nothing placed yet
		}
	}
	if constant != 0 {
		m.w[0].add(0, col(0, 1), constant, opI)
	}
	for _, in := range all {
		prev := -1 // state before the current letter; −1 = start
		for k, p := range in.p {
			j := p.site
			// Carry the pending state through the sites between letters.
			if k > 0 {
				kk := key(in.p[k:])
				for b := in.p[k-1].site + 1; b < j; b++ {
					s := states[b-1][kk]
					if !m.w[b].nz[s*m.w[b].wr+states[b][kk]] {
						m.w[b].add(s, states[b][kk], 1, opI)
					}
				}
				prev = states[j-1][kk]
			}
			from := 0
			c := 1.0
			if k == 0 {
				from, c = row(j, 0), in.coef
			} else {
				from = prev
			}
			to := col(j, 1)
			if k < len(in.p)-1 {
				to = states[j][key(in.p[k+1:])]
			}
			if k > 0 && m.w[j].nz[from*m.w[j].wr+to] {
				// A shared pending state: its transitions are already in.
				continue
			}
			m.w[j].add(from, to, c, letterOp(p.letter))
		}
	}
	return m, nil
}
