package chain

import (
	"errors"
	"reflect"
	"strings"
	"testing"
)

func TestParseGood(t *testing.T) {
	tests := []struct {
		text string
		want []Term
	}{
		{"-ZZ - h*X", []Term{{Factor: -1, Word: "ZZ", Column: 1}, {Factor: -1, Params: []string{"h"}, Word: "X", Column: 5}}},
		{"ZZ", []Term{{Factor: 1, Word: "ZZ", Column: 1}}},
		{"+2.5*XX+YY", []Term{{Factor: 2.5, Word: "XX", Column: 1}, {Factor: 1, Word: "YY", Column: 8}}},
		{"  -0.5*J*h*ZIZ ", []Term{{Factor: -0.5, Params: []string{"J", "h"}, Word: "ZIZ", Column: 3}}},
		{"1e-3*X - 2*3*Z", []Term{{Factor: 1e-3, Word: "X", Column: 1}, {Factor: -6, Word: "Z", Column: 8}}},
		{"h_2*g1*Y", []Term{{Factor: 1, Params: []string{"h_2", "g1"}, Word: "Y", Column: 1}}},
	}
	for _, tc := range tests {
		h, err := Parse(tc.text)
		if err != nil {
			t.Errorf("Parse(%q): %v", tc.text, err)
			continue
		}
		if !reflect.DeepEqual(h.Terms, tc.want) {
			t.Errorf("Parse(%q) = %+v, want %+v", tc.text, h.Terms, tc.want)
		}
	}
}

func TestParseBad(t *testing.T) {
	tests := []struct {
		text   string
		column int
		found  string // a piece of the message
	}{
		{"", 1, "end of text"},
		{"-ZZ -", 6, "end of text"},
		{"-ZZ h*X", 5, "'+', '-' or end of text"},
		{"2X", 2, `Pauli word "X"`},
		{"-h", 3, "'*' and a Pauli word"},
		{"ZZ*h", 3, "the word comes last"},
		{"-ZZ - h*X + $", 13, `"$"`},
		{"X*h*Z", 2, "the word comes last"},
		{"-ZZ + *X", 7, `"*"`},
		{"-ZZ - h**X", 9, `"*"`},
		{"-ZZ - 1.2.3*X", 7, "a finite number"},
		{"ZZ X", 4, `Pauli word "X"`},
	}
	for _, tc := range tests {
		_, err := Parse(tc.text)
		var pe *ParseError
		if !errors.As(err, &pe) {
			t.Errorf("Parse(%q): error %v, want a *ParseError", tc.text, err)
			continue
		}
		if pe.Column != tc.column || !strings.Contains(err.Error(), tc.found) {
			t.Errorf("Parse(%q): %v (column %d), want column %d mentioning %s", tc.text, err, pe.Column, tc.column, tc.found)
		}
	}
}

func TestNewRejects(t *testing.T) {
	tests := []struct {
		cfg  Config
		want string
	}{
		{Config{Sites: 1, Hamiltonian: "-ZZ"}, "expected 2 to 16, found 1"},
		{Config{Sites: 17, Hamiltonian: "-ZZ"}, "expected 2 to 16, found 17"},
		{Config{Sites: 4, Hamiltonian: "-ZZ - h*X"}, `parameter "h" is not a grid axis`},
		{Config{Sites: 4, Hamiltonian: "-ZZ - h*X", Params: []string{"h", "g"}}, `grid axis "g" does not appear`},
		{Config{Sites: 3, Hamiltonian: "ZZZZ"}, "at most 3 letters"},
		{Config{Sites: 4, Hamiltonian: "-ZZ - h*Z", Params: []string{"h"}, Sector: SectorEven}, "does not commute"},
		{Config{Sites: 4, Hamiltonian: "-ZZ - h*X", Params: []string{"h", "h"}}, "given twice"},
	}
	for _, tc := range tests {
		_, err := New(tc.cfg)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("New(%+v): error %v, want one containing %q", tc.cfg, err, tc.want)
		}
	}
}

func TestSymmetryChecks(t *testing.T) {
	tests := []struct {
		text           string
		real, commutes bool
	}{
		{"-ZZ - h*X", true, true},
		{"-ZZ - h*Z", true, false},
		{"-ZZ - h*X + h*Z - h*Z", true, true}, // the Z field cancels
		{"XY - YX", false, false},             // X⊗Y anticommutes with X⊗X
		{"XY + YX - XY - YX", true, true},     // cancels to nothing
		{"-YY - h*X", true, true},
		{"-ZZ - h*X + 0.1*Y", false, false},
	}
	for _, tc := range tests {
		s, err := New(Config{Sites: 4, Hamiltonian: tc.text, Params: paramsOf(t, tc.text), Sector: SectorNone})
		if err != nil {
			t.Fatal(err)
		}
		if s.IsReal() != tc.real || s.CommutesWithFlip() != tc.commutes {
			t.Errorf("%q: real=%v commutes=%v, want %v %v", tc.text, s.IsReal(), s.CommutesWithFlip(), tc.real, tc.commutes)
		}
	}
}

func paramsOf(t *testing.T, text string) []string {
	h, err := Parse(text)
	if err != nil {
		t.Fatal(err)
	}
	return h.Params()
}
