package textimport

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

func TestReadGood(t *testing.T) {
	cases := []struct {
		name   string
		in     string
		opt    Options
		m, n   int
		q      int
		states []uint8
		params []float64
		format string
	}{
		{"csv with header", "T,s0,s1,s2\n1.5,0,1,0\n1.5,1,1,0\n2.5,0,0,0\n2.5,1,0,1\n",
			Options{ParamNames: []string{"T"}}, 4, 3, 2,
			[]uint8{0, 1, 0, 1, 1, 0, 0, 0, 0, 1, 0, 1}, []float64{1.5, 1.5, 2.5, 2.5}, "csv"},
		{"whitespace, comments, CRLF, BOM", "\xef\xbb\xbf# made by hand\r\n1 0  2 0\r\n\r\n1\t1 1 0\r\n# between\n2 0 0 0\n2  2 2 2\n",
			Options{ParamNames: []string{"T"}}, 4, 3, 3,
			[]uint8{0, 2, 0, 1, 1, 0, 0, 0, 0, 2, 2, 2}, []float64{1, 1, 2, 2}, "text"},
		{"digit strings, two params", "T h config\n1,0,0110\n1,0,0111\n2,0.5,1111\n2,0.5,0000\n",
			Options{ParamNames: []string{"T", "h"}, Lattice: []int{2, 2}}, 4, 4, 2,
			[]uint8{0, 1, 1, 0, 0, 1, 1, 1, 1, 1, 1, 1, 0, 0, 0, 0}, []float64{1, 0, 1, 0, 2, 0.5, 2, 0.5}, "digits"},
		{"pm1 spins", "1, -1, +1, 1\n1, 1, 1, 1\n3, -1, -1, -1\n3, -1, 1, -1\n",
			Options{ParamNames: []string{"T"}, Spins: true}, 4, 3, 2,
			[]uint8{0, 1, 1, 1, 1, 1, 0, 0, 0, 0, 1, 0}, []float64{1, 1, 3, 3}, "csv"},
		{"alphabet given", "1 0 0\n1 0 1\n2 1 0\n2 1 1\n",
			Options{ParamNames: []string{"T"}, Alphabet: 4}, 4, 2, 4,
			[]uint8{0, 0, 0, 1, 1, 0, 1, 1}, []float64{1, 1, 2, 2}, "text"},
		{"all zero still q=2", "1 0\n1 0\n2 0\n2 0\n",
			Options{ParamNames: []string{"T"}}, 4, 1, 2,
			[]uint8{0, 0, 0, 0}, []float64{1, 1, 2, 2}, "text"},
		{"unlabelled", "0,1\n1,1\n",
			Options{}, 2, 2, 2,
			[]uint8{0, 1, 1, 1}, nil, "csv"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			ds, err := Read(strings.NewReader(c.in), "/some/dir/in.txt", c.opt)
			if err != nil {
				t.Fatal(err)
			}
			if ds.M != c.m || ds.N != c.n || ds.D != len(c.opt.ParamNames) || ds.Meta.Alphabet != c.q {
				t.Fatalf("M=%d N=%d D=%d q=%d, want %d %d %d %d", ds.M, ds.N, ds.D, ds.Meta.Alphabet, c.m, c.n, len(c.opt.ParamNames), c.q)
			}
			if !reflect.DeepEqual(ds.States, c.states) || !reflect.DeepEqual(ds.Params, c.params) {
				t.Fatalf("states %v params %v", ds.States, ds.Params)
			}
			wantSrc := fmt.Sprintf(`"file":"in.txt","format":%q,"generator":"imported"`, c.format)
			if !strings.Contains(string(ds.Meta.Source), wantSrc) {
				t.Fatalf("source %s, want %s", ds.Meta.Source, wantSrc)
			}
			if c.opt.Spins != strings.Contains(string(ds.Meta.Source), `"spins":"pm1"`) {
				t.Fatalf("source %s: spins", ds.Meta.Source)
			}
			wantLat := c.opt.Lattice
			if wantLat == nil {
				wantLat = []int{c.n}
			}
			if !reflect.DeepEqual(ds.Meta.Lattice, wantLat) {
				t.Fatalf("lattice %v, want %v", ds.Meta.Lattice, wantLat)
			}
		})
	}
}

func TestReadErrors(t *testing.T) {
	T := Options{ParamNames: []string{"T"}}
	cases := []struct {
		name      string
		in        string
		opt       Options
		line, col int
		want      string
	}{
		{"empty", "# nothing\n\n", T, -1, 0, "at least one snapshot"},
		{"bad param", "1,0,1\nx1,0,1\n", T, 2, 1, `parameter T: expected a finite number, found "x1"`},
		{"NaN param", "1,0,1\nNaN,0,1\n", T, 2, 1, "finite number"},
		{"value too big for alphabet", "1 0 1\n1 0 2\n", Options{ParamNames: []string{"T"}, Alphabet: 2}, 2, 3, "below the alphabet 2, found 2"},
		{"not a value", "1 0 1\n1 0 z\n", T, 2, 3, `found "z"`},
		{"value above 255", "1 0 1\n1 0 300\n", T, 2, 3, `found "300"`},
		{"spins without flag", "1 -1 1\n", T, 1, 2, "--spins pm1"},
		{"params without flag", "2.5 0 1\n", Options{}, 1, 1, "--params"},
		{"short row", "1,0,1,1\n1,0,1,1\n1,0,1\n", T, 3, 0, "expected 4 columns"},
		{"long row", "1,0,1\n1,0,1,1\n", T, 2, 0, "found 4"},
		{"empty column", "1,0,1\n1,,1\n", T, 2, 2, "empty column"},
		{"trailing comma", "1,0,1\n1,0,1,\n", T, 2, 4, "last comma"},
		{"no site values", "1\n", T, 1, 0, "found 1 columns"},
		{"bad spin", "1 1 -1\n1 1 0\n", Options{ParamNames: []string{"T"}, Spins: true}, 2, 3, "spin -1 or +1"},
		{"digit string length", "1 0101\n1 011\n", T, 2, 2, "one string of 4 digits"},
		{"digit above alphabet", "1 0101\n1 0131\n", Options{ParamNames: []string{"T"}, Alphabet: 2}, 2, 2, "site 3: expected a value below the alphabet 2"},
		{"lattice size", "1 0 1 1\n", Options{ParamNames: []string{"T"}, Lattice: []int{2, 2}}, 1, 0, "has 4 sites, but this line has 3"},
		{"lonely point", "1 0 1\n1 1 1\n2 0 0\n", T, -1, 0, "at least 2 samples at every grid point"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := Read(strings.NewReader(c.in), "in.csv", c.opt)
			if err == nil {
				t.Fatal("accepted")
			}
			msg := err.Error()
			if !strings.HasPrefix(msg, "in.csv: ") || !strings.Contains(msg, c.want) || strings.Contains(msg, "\n") {
				t.Fatalf("message %q, want the file and %q on one line", msg, c.want)
			}
			var e *Error
			if c.line < 0 {
				return
			}
			if !errors.As(err, &e) || e.Line != c.line || e.Column != c.col {
				t.Fatalf("%q: want line %d column %d", msg, c.line, c.col)
			}
		})
	}
}

func TestBadOptions(t *testing.T) {
	for _, opt := range []Options{{Spins: true, Alphabet: 3}, {Alphabet: 1}, {Alphabet: 300}, {Lattice: []int{0, 4}}} {
		if _, err := Read(strings.NewReader("0 1\n"), "x", opt); err == nil {
			t.Errorf("%+v accepted", opt)
		}
	}
}

// lines is a reader that produces a generated file without holding it.
type lines struct {
	n, i int
	buf  []byte
	row  func(i int) string
}

func (l *lines) Read(p []byte) (int, error) {
	for len(l.buf) == 0 {
		if l.i == l.n {
			return 0, io.EOF
		}
		l.buf = []byte(l.row(l.i))
		l.i++
	}
	k := copy(p, l.buf)
	l.buf = l.buf[k:]
	return k, nil
}

// TestStreamsLongAndManyLines reads lines longer than bufio's default 64 KiB
// limit, and many lines, from a generated stream.
func TestStreamsLongAndManyLines(t *testing.T) {
	long := strings.Repeat("1,", 49999) + "0"
	ds, err := Read(&lines{n: 4, row: func(i int) string { return fmt.Sprintf("%d,%s\n", i/2, long) }}, "long.csv", Options{ParamNames: []string{"T"}})
	if err != nil {
		t.Fatal(err)
	}
	if ds.N != 50000 || ds.M != 4 || ds.States[49999] != 0 || ds.States[49998] != 1 {
		t.Fatalf("N=%d M=%d", ds.N, ds.M)
	}
	ds, err = Read(&lines{n: 100000, row: func(i int) string { return fmt.Sprintf("%d 0110%d\n", i%10, i%2) }}, "many.txt", Options{ParamNames: []string{"T"}})
	if err != nil {
		t.Fatal(err)
	}
	if ds.M != 100000 || ds.N != 5 || ds.States[5*7+4] != 1 {
		t.Fatalf("M=%d N=%d", ds.M, ds.N)
	}
}

func TestReadFile(t *testing.T) {
	dir := t.TempDir()
	if _, err := ReadFile(filepath.Join(dir, "none.csv"), Options{}); err == nil || !strings.Contains(err.Error(), "none.csv: cannot open") {
		t.Fatalf("missing file: %v", err)
	}
	if _, err := ReadFile(dir, Options{}); err == nil || !strings.Contains(err.Error(), "folder") {
		t.Fatalf("folder: %v", err)
	}
	p := filepath.Join(dir, "ok.csv")
	os.WriteFile(p, []byte("0,1\n1,0\n"), 0o644)
	if ds, err := ReadFile(p, Options{}); err != nil || ds.M != 2 {
		t.Fatalf("ok.csv: %v", err)
	}
}

// BenchmarkRead imports 10^6 lines of 64 comma-separated binary sites.
func BenchmarkRead(b *testing.B) {
	row := "2.25," + strings.TrimSuffix(strings.Repeat("0,1,", 32), ",") + "\n"
	for i := 0; i < b.N; i++ {
		_, err := Read(&lines{n: 1000000, row: func(i int) string {
			if i%2 == 0 {
				return "1.5" + row[4:]
			}
			return row
		}}, "bench.csv", Options{ParamNames: []string{"T"}})
		if err != nil {
			b.Fatal(err)
		}
	}
}
