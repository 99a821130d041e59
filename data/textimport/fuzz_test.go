package textimport_test

import (
	"bytes"
	"errors"
	"math"
	"strconv"
	"strings"
	"testing"

	"tidemark/data/textimport"
)

// fuzzOptions are the option combinations FuzzRead tries, chosen by a byte.
var fuzzOptions = []textimport.Options{
	{},
	{ParamNames: []string{"T"}},
	{ParamNames: []string{"T", "h"}, Lattice: []int{2, 2}},
	{ParamNames: []string{"T"}, Spins: true},
	{ParamNames: []string{"T"}, Alphabet: 3},
	{Lattice: []int{3}, Alphabet: 256},
}

// FuzzRead feeds arbitrary text to the text importer under several option
// combinations. It must not panic; a failure must be one clear line naming
// the file; a success must be a consistent dataset (valid when it has
// parameters) that, written back out as CSV, reads in again unchanged.
func FuzzRead(f *testing.F) {
	for _, s := range []string{
		"T,s0,s1,s2\n1.5,0,1,0\n1.5,1,1,0\n2.5,0,0,0\n2.5,1,0,1\n",
		"\xef\xbb\xbf# comment\r\n1 0  2 0\r\n\r\n1\t1 1 0\r\n2 0 0 0\n2  2 2 2\n",
		"T h config\n1,0,0110\n1,0,0111\n2,0.5,1111\n2,0.5,0000\n",
		"1, -1, +1, 1\n1, 1, 1, 1\n3, -1, -1, -1\n3, -1, 1, -1\n",
		"0,1\n1,1\n",
		"1 0 0\n1 0 1\n2 1 0\n2 1 1\n",
		"1,,0\n",
		"1,0,\n",
		"nan 0 1\n",
		"1e309 0 1\n",
		"1 255 0 7\n1 0 0 0\n",
		"",
		"#only a comment\n",
	} {
		for o := range fuzzOptions {
			f.Add(s, uint8(o))
		}
	}
	f.Fuzz(func(t *testing.T, s string, which uint8) {
		opt := fuzzOptions[int(which)%len(fuzzOptions)]
		ds, err := textimport.Read(strings.NewReader(s), "fuzz.txt", opt)
		if err != nil {
			if ds != nil {
				t.Fatalf("Read returned a dataset together with the error %v", err)
			}
			msg := err.Error()
			if !strings.HasPrefix(msg, "fuzz.txt: ") || strings.Contains(msg, "\n") {
				t.Fatalf("error %q is not one line naming the file", msg)
			}
			var le *textimport.Error
			if errors.As(err, &le) && (le.Line < 1 || le.Column < 0) {
				t.Fatalf("error place line %d column %d", le.Line, le.Column)
			}
			return
		}
		d := len(opt.ParamNames)
		if ds.M < 1 || ds.N < 1 || ds.D != d || len(ds.States) != ds.M*ds.N || len(ds.Params) != ds.M*ds.D {
			t.Fatalf("inconsistent shape: M=%d N=%d D=%d, %d states, %d params", ds.M, ds.N, ds.D, len(ds.States), len(ds.Params))
		}
		q := ds.Meta.Alphabet
		if q < 2 || q > 256 || (opt.Alphabet != 0 && q != opt.Alphabet) || (opt.Spins && q != 2) {
			t.Fatalf("alphabet %d with options %+v", q, opt)
		}
		for i, v := range ds.States {
			if int(v) >= q {
				t.Fatalf("state %d is %d, not below the alphabet %d", i, v, q)
			}
		}
		if opt.Lattice != nil && ds.N != product(opt.Lattice) {
			t.Fatalf("N=%d for the lattice %v", ds.N, opt.Lattice)
		}
		if d > 0 {
			if err := ds.Validate("fuzz.txt"); err != nil {
				t.Fatalf("Read returned a dataset that Validate rejects: %v", err)
			}
		}
		for _, p := range ds.Params {
			if math.IsNaN(p) || math.IsInf(p, 0) {
				t.Fatalf("non-finite parameter %v", p)
			}
		}

		// Write the dataset back as CSV (site values, or ±1 with Spins) and
		// read it again with the same options.
		var b bytes.Buffer
		for m := 0; m < ds.M; m++ {
			var fields []string
			for _, p := range ds.ParamRow(m) {
				fields = append(fields, strconv.FormatFloat(p, 'g', -1, 64))
			}
			for _, v := range ds.Row(m) {
				switch {
				case opt.Spins && v == 1:
					fields = append(fields, "+1")
				case opt.Spins:
					fields = append(fields, "-1")
				default:
					fields = append(fields, strconv.Itoa(int(v)))
				}
			}
			b.WriteString(strings.Join(fields, ",") + "\n")
		}
		back, err := textimport.Read(&b, "back.csv", opt)
		if err != nil {
			t.Fatalf("re-reading the written CSV: %v", err)
		}
		if back.M != ds.M || back.N != ds.N || !bytes.Equal(back.States, ds.States) {
			t.Fatalf("states changed in the CSV round trip: %v → %v", ds.States, back.States)
		}
		for i := range ds.Params {
			if back.Params[i] != ds.Params[i] {
				t.Fatalf("params[%d] changed from %v to %v", i, ds.Params[i], back.Params[i])
			}
		}
		if opt.Alphabet == 0 && back.Meta.Alphabet != q {
			// The inferred alphabet comes from the largest value, which the
			// round trip keeps.
			t.Fatalf("alphabet changed from %d to %d", q, back.Meta.Alphabet)
		}
	})
}

// product returns the number of sites of a lattice.
func product(l []int) int {
	n := 1
	for _, s := range l {
		n *= s
	}
	return n
}
