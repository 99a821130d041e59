package chain

import (
	"fmt"
	"math"
	"math/bits"
	"sort"
	"strconv"
	"strings"
	"unicode"
)

// Term is one parsed term coefficient*WORD of a Hamiltonian text.
type Term struct {
	// Factor is the product of the term's sign and its numeric factors.
	Factor float64
	// Params lists the parameter names multiplying the term, in the order
	// written (a name may repeat).
	Params []string
	// Word is the Pauli word: letters I, X, Y, Z on consecutive sites.
	Word string
	// Column is the 1-based column where the term starts.
	Column int
}

// Hamiltonian is a parsed Hamiltonian text: a sum of translation-invariant
// Pauli words.
type Hamiltonian struct {
	// Text is the text as given.
	Text string
	// Terms are the terms in the order written.
	Terms []Term
}

// ParseError is a syntax error in a Hamiltonian text at a 1-based column.
type ParseError struct {
	Text     string
	Column   int
	Expected string
	Found    string
}

func (e *ParseError) Error() string {
	return fmt.Sprintf("hamiltonian %q, column %d: expected %s, found %s", e.Text, e.Column, e.Expected, e.Found)
}

type tokKind int

const (
	tokEnd tokKind = iota
	tokNum
	tokIdent
	tokStar
	tokPlus
	tokMinus
)

type token struct {
	kind tokKind
	text string
	col  int // 1-based, in runes
	num  float64
}

func describeTok(t token) string {
	switch t.kind {
	case tokEnd:
		return "end of text"
	case tokIdent:
		if isWord(t.text) {
			return fmt.Sprintf("Pauli word %q", t.text)
		}
		return fmt.Sprintf("name %q", t.text)
	default:
		return fmt.Sprintf("%q", t.text)
	}
}

func isWord(s string) bool {
	if s == "" {
		return false
	}
	for _, r := range s {
		if r != 'I' && r != 'X' && r != 'Y' && r != 'Z' {
			return false
		}
	}
	return true
}

func tokenize(text string) ([]token, error) {
	rs := []rune(text)
	var toks []token
	i := 0
	for i < len(rs) {
		r := rs[i]
		col := i + 1
		switch {
		case unicode.IsSpace(r):
			i++
		case r == '*':
			toks = append(toks, token{kind: tokStar, text: "*", col: col})
			i++
		case r == '+':
			toks = append(toks, token{kind: tokPlus, text: "+", col: col})
			i++
		case r == '-':
			toks = append(toks, token{kind: tokMinus, text: "-", col: col})
			i++
		case r >= '0' && r <= '9' || r == '.':
			j := i
			for j < len(rs) && (rs[j] >= '0' && rs[j] <= '9' || rs[j] == '.') {
				j++
			}
			if j < len(rs) && (rs[j] == 'e' || rs[j] == 'E') {
				k := j + 1
				if k < len(rs) && (rs[k] == '+' || rs[k] == '-') {
					k++
				}
				if k < len(rs) && rs[k] >= '0' && rs[k] <= '9' {
					for k < len(rs) && rs[k] >= '0' && rs[k] <= '9' {
						k++
					}
					j = k
				}
			}
			s := string(rs[i:j])
			v, err := strconv.ParseFloat(s, 64)
			if err != nil || math.IsInf(v, 0) || math.IsNaN(v) {
				return nil, &ParseError{Text: text, Column: col, Expected: "a finite number", Found: fmt.Sprintf("%q", s)}
			}
			toks = append(toks, token{kind: tokNum, text: s, col: col, num: v})
			i = j
		case r == '_' || r < 128 && unicode.IsLetter(r):
			j := i
			for j < len(rs) && (rs[j] == '_' || rs[j] < 128 && (unicode.IsLetter(rs[j]) || unicode.IsDigit(rs[j]))) {
				j++
			}
			toks = append(toks, token{kind: tokIdent, text: string(rs[i:j]), col: col})
			i = j
		default:
			return nil, &ParseError{Text: text, Column: col, Expected: "a number, a parameter name, a Pauli word (I, X, Y, Z), '*', '+' or '-'", Found: fmt.Sprintf("%q", string(r))}
		}
	}
	toks = append(toks, token{kind: tokEnd, col: len(rs) + 1})
	return toks, nil
}

// Parse reads a Hamiltonian text: a sum of terms coefficient*WORD, where
// WORD is a string of I, X, Y, Z placed on consecutive sites starting at
// every site, and the coefficient is a number, a parameter name, or a product
// of them joined by '*'. A leading sign is allowed and a bare WORD has
// coefficient 1. Parameter names may not consist of the letters I, X, Y, Z
// only (those are Pauli words). Example: "-ZZ - h*X".
func Parse(text string) (*Hamiltonian, error) {
	toks, err := tokenize(text)
	if err != nil {
		return nil, err
	}
	fail := func(t token, expected string) (*Hamiltonian, error) {
		return nil, &ParseError{Text: text, Column: t.col, Expected: expected, Found: describeTok(t)}
	}
	h := &Hamiltonian{Text: text}
	p := 0
	if toks[0].kind == tokEnd {
		return fail(toks[0], "at least one term such as -ZZ or h*X")
	}
	first := true
	for {
		sign := 1.0
		t := toks[p]
		start := t.col
		switch t.kind {
		case tokPlus:
			p++
		case tokMinus:
			sign = -1
			p++
		default:
			if !first {
				return fail(t, "'+' or '-' between terms")
			}
		}
		first = false
		term := Term{Factor: sign, Column: start}
		for {
			f := toks[p]
			switch f.kind {
			case tokNum:
				term.Factor *= f.num
				if math.IsInf(term.Factor, 0) {
					return fail(f, "numbers whose product is finite")
				}
			case tokIdent:
				if isWord(f.text) {
					term.Word = f.text
				} else {
					term.Params = append(term.Params, f.text)
				}
			default:
				return fail(f, "a number, a parameter name or a Pauli word")
			}
			p++
			if term.Word != "" {
				break
			}
			if toks[p].kind != tokStar {
				return fail(toks[p], fmt.Sprintf("'*' and a Pauli word (I, X, Y, Z) after %q", f.text))
			}
			p++
		}
		h.Terms = append(h.Terms, term)
		switch toks[p].kind {
		case tokEnd:
			return h, nil
		case tokStar:
			return fail(toks[p], "'+', '-' or end of text after the Pauli word (the word comes last in a term)")
		case tokPlus, tokMinus:
		default:
			return fail(toks[p], "'+', '-' or end of text after the Pauli word")
		}
	}
}

// Params returns the distinct parameter names of h, sorted.
func (h *Hamiltonian) Params() []string {
	seen := map[string]bool{}
	var out []string
	for _, t := range h.Terms {
		for _, p := range t.Params {
			if !seen[p] {
				seen[p] = true
				out = append(out, p)
			}
		}
	}
	sort.Strings(out)
	return out
}

// MaxSites is the largest chain this package handles (2^16 amplitudes).
const MaxSites = 16

// pauliString is one Pauli operator on the chain: sites with X or Y are set
// in x, sites with Z or Y in z. Its action on a basis state is
// P|b⟩ = i^{popcount(x&z)} (−1)^{popcount(b&z)} |b⊕x⟩, since Y = iXZ.
type pauliString struct{ x, z uint32 }

func (p pauliString) nY() int { return bits.OnesCount32(p.x & p.z) }

// monomial is a product of parameters, by index into the parameter list,
// with multiplicity; key is its canonical form.
type polyTerm struct {
	params []int
	coef   float64
	abs    float64
}

// operator is a compiled Hamiltonian: each distinct Pauli string with its
// coefficient, a polynomial in the parameters.
type operator struct {
	n      int
	order  []pauliString
	coef   map[pauliString]map[string]*polyTerm
	real   bool // no string with an odd number of Y survives
	commut bool // commutes with ∏X: no string with an odd number of Z or Y survives
}

// Compile places h on a chain of n sites (periodic unless open) with the
// given parameter names (the order of λ) and merges equal Pauli strings.
func (h *Hamiltonian) compile(n int, open bool, names []string) (*operator, error) {
	if n < 2 || n > MaxSites {
		return nil, fmt.Errorf("chain: expected 2 to %d sites, found %d", MaxSites, n)
	}
	index := map[string]int{}
	for i, s := range names {
		index[s] = i
	}
	used := map[string]bool{}
	op := &operator{n: n, coef: map[pauliString]map[string]*polyTerm{}}
	for _, t := range h.Terms {
		if len(t.Word) > n {
			return nil, &ParseError{Text: h.Text, Column: t.Column, Expected: fmt.Sprintf("a Pauli word of at most %d letters (the number of sites)", n), Found: fmt.Sprintf("%q with %d", t.Word, len(t.Word))}
		}
		var idx []int
		for _, p := range t.Params {
			i, ok := index[p]
			if !ok {
				return nil, fmt.Errorf("hamiltonian %q, column %d: parameter %q is not a grid axis (axes: %s)", h.Text, t.Column, p, strings.Join(names, ", "))
			}
			used[p] = true
			idx = append(idx, i)
		}
		sort.Ints(idx)
		key := fmt.Sprint(idx)
		starts := n
		if open {
			starts = n - len(t.Word) + 1
		}
		for s := 0; s < starts; s++ {
			var ps pauliString
			for k, r := range t.Word {
				bit := uint32(1) << ((s + k) % n)
				switch r {
				case 'X':
					ps.x |= bit
				case 'Y':
					ps.x |= bit
					ps.z |= bit
				case 'Z':
					ps.z |= bit
				}
			}
			m := op.coef[ps]
			if m == nil {
				m = map[string]*polyTerm{}
				op.coef[ps] = m
				op.order = append(op.order, ps)
			}
			pt := m[key]
			if pt == nil {
				pt = &polyTerm{params: idx}
				m[key] = pt
			}
			pt.coef += t.Factor
			pt.abs += math.Abs(t.Factor)
		}
	}
	for _, s := range names {
		if !used[s] {
			return nil, fmt.Errorf("hamiltonian %q: grid axis %q does not appear in the Hamiltonian", h.Text, s)
		}
	}
	op.real, op.commut = true, true
	for _, ps := range op.order {
		if op.zero(ps) {
			continue
		}
		if ps.nY()%2 == 1 {
			op.real = false
		}
		if bits.OnesCount32(ps.z)%2 == 1 {
			op.commut = false
		}
	}
	return op, nil
}

// zero reports whether the coefficient of ps vanishes identically (all
// monomials cancel to rounding).
func (op *operator) zero(ps pauliString) bool {
	for _, pt := range op.coef[ps] {
		if math.Abs(pt.coef) > 1e-12*pt.abs {
			return false
		}
	}
	return true
}

// value returns the real coefficient of ps at λ.
func (op *operator) value(ps pauliString, lambda []float64) float64 {
	c := 0.0
	for _, pt := range op.coef[ps] {
		if math.Abs(pt.coef) <= 1e-12*pt.abs {
			continue
		}
		v := pt.coef
		for _, i := range pt.params {
			v *= lambda[i]
		}
		c += v
	}
	return c
}
