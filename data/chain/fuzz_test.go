package chain

import (
	"errors"
	"math"
	"slices"
	"strconv"
	"strings"
	"testing"
	"unicode/utf8"
)

// fuzzFormat writes parsed terms back as Hamiltonian text: each term as its
// sign, |factor|, its parameters and its word, joined by '*'.
func fuzzFormat(terms []Term) string {
	var b strings.Builder
	for i, t := range terms {
		switch {
		case math.Signbit(t.Factor):
			b.WriteString(" - ")
		case i > 0:
			b.WriteString(" + ")
		}
		b.WriteString(strconv.FormatFloat(math.Abs(t.Factor), 'g', -1, 64))
		for _, p := range t.Params {
			b.WriteString("*" + p)
		}
		b.WriteString("*" + t.Word)
	}
	return b.String()
}

// FuzzParse feeds arbitrary text to the Hamiltonian parser. It must not
// panic; an error must be a one-line *ParseError at a column inside the
// text; a success must consist of terms with a Pauli word, a finite factor
// and valid parameter names, must print and parse back to the same terms,
// and must place on chains of 2 to 6 sites, open and periodic, whenever its
// words fit.
func FuzzParse(f *testing.F) {
	for _, s := range []string{
		"-ZZ - h*X",
		"-J*ZZ - h*X",
		"-Jx*XX - Jy*YY - Jz*ZZ",
		"0.5*XX + 0.5*YY + Delta*ZZ - h*Z",
		"+2*J*h*XIZ",
		"-1.5e-3*ZZ+h*h*X",
		"ZZ",
		"-XYZ - XYZ",
		"1e300*1e300*X",
		"0*1e309*X",
		"h*",
		"-ZZ -",
		"-ZZ h*X",
		"ZZ*h",
		"X*Y",
		"2..3*X",
		"é*X",
		"",
		"   ",
		"-ZZ - g1*X + _k*Y",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		h, err := Parse(s)
		if err != nil {
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("error %v (%T) is not a *ParseError", err, err)
			}
			if n := utf8.RuneCountInString(s); pe.Column < 1 || pe.Column > n+1 {
				t.Fatalf("error column %d outside the %d characters of the text", pe.Column, n)
			}
			if strings.Contains(pe.Expected, "\n") {
				t.Fatalf("error %q is not one line", err)
			}
			return
		}
		if len(h.Terms) == 0 {
			t.Fatalf("accepted %q with no terms", s)
		}
		longest := 0
		for _, term := range h.Terms {
			if !isWord(term.Word) {
				t.Fatalf("term at column %d has the word %q", term.Column, term.Word)
			}
			if math.IsNaN(term.Factor) || math.IsInf(term.Factor, 0) {
				t.Fatalf("term at column %d has the factor %v", term.Column, term.Factor)
			}
			for _, p := range term.Params {
				if p == "" || isWord(p) {
					t.Fatalf("term at column %d has the parameter name %q", term.Column, p)
				}
			}
			longest = max(longest, len(term.Word))
		}
		if ps := h.Params(); !slices.IsSorted(ps) || len(slices.Compact(slices.Clone(ps))) != len(ps) {
			t.Fatalf("Params %q are not sorted and distinct", ps)
		}

		text := fuzzFormat(h.Terms)
		back, err := Parse(text)
		if err != nil {
			t.Fatalf("the printed form %q of %q does not parse: %v", text, s, err)
		}
		if len(back.Terms) != len(h.Terms) {
			t.Fatalf("%q printed as %q parses to %d terms, want %d", s, text, len(back.Terms), len(h.Terms))
		}
		for i, a := range h.Terms {
			z := back.Terms[i]
			if math.Float64bits(a.Factor) != math.Float64bits(z.Factor) || a.Word != z.Word || !slices.Equal(a.Params, z.Params) {
				t.Fatalf("term %d %+v printed as %q parses to %+v", i, a, text, z)
			}
		}

		for n := 2; n <= 6; n++ {
			for _, open := range []bool{false, true} {
				op, err := h.compile(n, open, h.Params())
				if longest > n {
					if err == nil {
						t.Fatalf("placed a %d-letter word on %d sites", longest, n)
					}
					continue
				}
				if err != nil {
					t.Fatalf("compile(%d, open=%v) of %q: %v", n, open, s, err)
				}
				for _, ps := range op.order {
					if ps.x>>n != 0 || ps.z>>n != 0 {
						t.Fatalf("Pauli string %+v reaches beyond %d sites", ps, n)
					}
				}
			}
		}
	})
}
