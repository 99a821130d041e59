package data

import (
	"encoding/json"
	"fmt"
	"math"
	"time"
)

// Meta is the JSON object stored in a dataset's meta array.
type Meta struct {
	// ParamNames names the d parameter columns, in order.
	ParamNames []string
	// Alphabet is q, the number of values a site can take (values 0..q−1).
	Alphabet int
	// Lattice is the shape of the sites in row-major order; its product is N.
	Lattice []int
	// Source describes where the data came from: an object with a
	// "generator" key and every setting needed to rebuild an exact reference.
	Source json.RawMessage
	// Created is the RFC 3339 time the file was made.
	Created string
	// Extra keeps keys this version does not know, so that rewriting a file
	// loses nothing.
	Extra map[string]json.RawMessage
}

var knownMetaKeys = map[string]bool{"param_names": true, "alphabet": true, "lattice": true, "source": true, "created": true}

// MarshalJSON writes the known keys and every extra key.
func (m Meta) MarshalJSON() ([]byte, error) {
	out := map[string]any{}
	for k, v := range m.Extra {
		out[k] = v
	}
	names := m.ParamNames
	if names == nil {
		names = []string{}
	}
	out["param_names"] = names
	out["alphabet"] = m.Alphabet
	out["lattice"] = m.Lattice
	if len(m.Source) > 0 {
		out["source"] = m.Source
	}
	if m.Created != "" {
		out["created"] = m.Created
	}
	return json.Marshal(out)
}

// UnmarshalJSON reads the known keys and keeps the rest in Extra.
func (m *Meta) UnmarshalJSON(b []byte) error {
	var raw map[string]json.RawMessage
	if err := json.Unmarshal(b, &raw); err != nil {
		return err
	}
	*m = Meta{}
	if v, ok := raw["param_names"]; ok {
		if err := json.Unmarshal(v, &m.ParamNames); err != nil {
			return fmt.Errorf("param_names: expected a list of strings: %w", err)
		}
	}
	if v, ok := raw["alphabet"]; ok {
		if err := json.Unmarshal(v, &m.Alphabet); err != nil {
			return fmt.Errorf("alphabet: expected an integer: %w", err)
		}
	}
	if v, ok := raw["lattice"]; ok {
		if err := json.Unmarshal(v, &m.Lattice); err != nil {
			return fmt.Errorf("lattice: expected a list of integers: %w", err)
		}
	}
	if v, ok := raw["source"]; ok {
		m.Source = v
	}
	if v, ok := raw["created"]; ok {
		if err := json.Unmarshal(v, &m.Created); err != nil {
			return fmt.Errorf("created: expected a string: %w", err)
		}
	}
	for k, v := range raw {
		if !knownMetaKeys[k] {
			if m.Extra == nil {
				m.Extra = map[string]json.RawMessage{}
			}
			m.Extra[k] = v
		}
	}
	return nil
}

// Generator returns source.generator, or "" when there is none.
func (m Meta) Generator() string {
	var s struct {
		Generator string `json:"generator"`
	}
	if len(m.Source) == 0 || json.Unmarshal(m.Source, &s) != nil {
		return ""
	}
	return s.Generator
}

// Dataset is a set of M snapshots of N sites with q values each, taken at
// d-dimensional control parameters.
type Dataset struct {
	// M, N and D are the number of snapshots, sites and parameters.
	M, N, D int
	// States holds the snapshots row-major: site j of snapshot m is States[m*N+j].
	States []uint8
	// Params holds the parameters row-major: parameter i of snapshot m is
	// Params[m*D+i]. It is nil for an unlabelled dataset (D = 0).
	Params []float64
	// Meta is the dataset's meta object.
	Meta Meta

	// file and fileOpt name the file the states are read from, block by
	// block, when States is nil (ReadHead).
	file    string
	fileOpt ReadOptions
}

// New returns a dataset with the given shape and names, alphabet q, lattice
// shape (nil means a chain of N sites) and source object, stamped with the
// current time. States and params are allocated and zero.
func New(m, n int, names []string, q int, lattice []int, source any) (*Dataset, error) {
	src, err := json.Marshal(source)
	if err != nil {
		return nil, fmt.Errorf("dataset source: %w", err)
	}
	if lattice == nil {
		lattice = []int{n}
	}
	d := len(names)
	return &Dataset{
		M: m, N: n, D: d,
		States: make([]uint8, m*n),
		Params: make([]float64, m*d),
		Meta: Meta{
			ParamNames: append([]string(nil), names...),
			Alphabet:   q,
			Lattice:    append([]int(nil), lattice...),
			Source:     src,
			Created:    time.Now().UTC().Format(time.RFC3339),
		},
	}, nil
}

// Row returns snapshot m (a view, not a copy).
func (ds *Dataset) Row(m int) []uint8 { return ds.States[m*ds.N : (m+1)*ds.N] }

// ParamRow returns the parameters of snapshot m (a view, not a copy).
func (ds *Dataset) ParamRow(m int) []float64 { return ds.Params[m*ds.D : (m+1)*ds.D] }

// Sites returns N.
func (ds *Dataset) Sites() int { return ds.N }

// Alphabet returns q.
func (ds *Dataset) Alphabet() int { return ds.Meta.Alphabet }

// Validate checks the dataset's internal consistency and returns the first
// problem as a *ValidationError naming file (which may be empty).
func (ds *Dataset) Validate(file string) error {
	return ds.validate(file, true)
}

func (ds *Dataset) validate(file string, needParams bool) error {
	return ds.check(file, needParams, true)
}

// check is validate; without states it leaves out the checks of the
// states' values (a Stream checks them block by block).
func (ds *Dataset) check(file string, needParams, states bool) error {
	bad := func(where, expected, found string) error {
		return &ValidationError{File: file, Where: where, Expected: expected, Found: found}
	}
	if ds.M == 0 {
		return bad("states", "at least one snapshot", "0 rows")
	}
	if ds.N == 0 {
		return bad("states", "at least one site per snapshot", "0 columns")
	}
	if states && len(ds.States) != ds.M*ds.N {
		return bad("states", fmt.Sprintf("%d values (%d×%d)", ds.M*ds.N, ds.M, ds.N), fmt.Sprintf("%d", len(ds.States)))
	}
	q := ds.Meta.Alphabet
	if q < 2 || q > 256 {
		return bad("meta.alphabet", "an integer from 2 to 256", fmt.Sprintf("%d", q))
	}
	if states {
		if err := checkValues(file, ds.States, 0, ds.N, q); err != nil {
			return err
		}
	}
	prod := 1
	for _, l := range ds.Meta.Lattice {
		if l <= 0 {
			return bad("meta.lattice", "positive sizes", fmt.Sprintf("%v", ds.Meta.Lattice))
		}
		if prod > ds.N/l {
			// The product exceeds N; stop before it can overflow.
			return bad("meta.lattice", fmt.Sprintf("sizes whose product is the %d sites of states", ds.N), fmt.Sprintf("%v (product above %d)", ds.Meta.Lattice, ds.N))
		}
		prod *= l
	}
	if len(ds.Meta.Lattice) == 0 || prod != ds.N {
		return bad("meta.lattice", fmt.Sprintf("sizes whose product is the %d sites of states", ds.N), fmt.Sprintf("%v (product %d)", ds.Meta.Lattice, prod))
	}
	if ds.D == 0 && !needParams {
		return nil
	}
	if ds.D == 0 {
		return bad("params", "at least one parameter column", "none")
	}
	if len(ds.Params) != ds.M*ds.D {
		return bad("params", fmt.Sprintf("%d rows, as many as states", ds.M), fmt.Sprintf("%d values for %d columns", len(ds.Params), ds.D))
	}
	if len(ds.Meta.ParamNames) != ds.D {
		return bad("meta.param_names", fmt.Sprintf("%d names, one per params column", ds.D), fmt.Sprintf("%d", len(ds.Meta.ParamNames)))
	}
	seen := map[string]bool{}
	for _, n := range ds.Meta.ParamNames {
		if n == "" || seen[n] {
			return bad("meta.param_names", "distinct non-empty names", fmt.Sprintf("%q", ds.Meta.ParamNames))
		}
		seen[n] = true
	}
	for i, v := range ds.Params {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return bad(fmt.Sprintf("params[%d,%d]", i/ds.D, i%ds.D), "a finite number", fmt.Sprintf("%v", v))
		}
	}
	g := NewGrid(ds)
	for k, idx := range g.Index {
		if len(idx) < 2 {
			return bad("params", "at least 2 samples at every grid point", fmt.Sprintf("%d at %s", len(idx), g.Label(k)))
		}
	}
	return nil
}

// checkValues checks that every site value of the rows xs of n sites,
// the first being snapshot first of its file, lies below the alphabet size q.
func checkValues(file string, xs []uint8, first, n, q int) error {
	for i, v := range xs {
		if int(v) >= q {
			return &ValidationError{File: file, Where: fmt.Sprintf("states[%d,%d]", first+i/n, i%n),
				Expected: fmt.Sprintf("a value below the alphabet size %d", q), Found: fmt.Sprintf("%d", v)}
		}
	}
	return nil
}

// ValidationError is one problem with an input file: where it is, what was
// expected and what was found.
type ValidationError struct {
	File, Where, Expected, Found string
}

func (e *ValidationError) Error() string {
	s := ""
	if e.File != "" {
		s = e.File + ": "
	}
	return fmt.Sprintf("%s%s: expected %s, found %s", s, e.Where, e.Expected, e.Found)
}
