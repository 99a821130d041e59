package textimport

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"

	"tidemark/data"
)

// Options describes the columns of the file.
type Options struct {
	// ParamNames names the d leading parameter columns (none for an
	// unlabelled file).
	ParamNames []string
	// Lattice is the shape of the sites, row-major; nil means a chain of
	// as many sites as the first line has.
	Lattice []int
	// Alphabet is q; 0 means the largest value found plus one, at least 2.
	Alphabet int
	// Spins reads site values −1 and +1 (stored as 0 and 1) instead of
	// 0..q−1.
	Spins bool
}

// MaxLine is the longest line accepted, in bytes.
const MaxLine = 64 << 20

// Error is a problem at a place in the input: a 1-based line and, when it
// is not 0, a 1-based column (the field number on that line).
type Error struct {
	File         string
	Line, Column int
	Msg          string
}

func (e *Error) Error() string {
	if e.Column > 0 {
		return fmt.Sprintf("%s: line %d, column %d: %s", e.File, e.Line, e.Column, e.Msg)
	}
	return fmt.Sprintf("%s: line %d: %s", e.File, e.Line, e.Msg)
}

// ReadFile imports the file at path.
func ReadFile(path string, opt Options) (*data.Dataset, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("%s: cannot open: %w", path, unwrapPath(err))
	}
	defer f.Close()
	if st, err := f.Stat(); err == nil && st.IsDir() {
		return nil, fmt.Errorf("%s: expected a text or CSV file, found a folder", path)
	}
	return Read(f, path, opt)
}

func unwrapPath(err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// layout is what the first data line showed.
type layout int

const (
	undecided layout = iota
	fields           // one site value per field
	digits           // one string of digits holding all sites
)

// Read imports snapshots from r; name is the file name used in messages and
// recorded (as a base name) in meta.source.
func Read(r io.Reader, name string, opt Options) (*data.Dataset, error) {
	d := len(opt.ParamNames)
	if opt.Spins && opt.Alphabet != 0 && opt.Alphabet != 2 {
		return nil, fmt.Errorf("%s: ±1 spins have alphabet 2, but alphabet %d was asked for", name, opt.Alphabet)
	}
	if opt.Alphabet != 0 && (opt.Alphabet < 2 || opt.Alphabet > 256) {
		return nil, fmt.Errorf("%s: expected an alphabet from 2 to 256, found %d", name, opt.Alphabet)
	}
	latN := 0
	if opt.Lattice != nil {
		latN = 1
		for _, l := range opt.Lattice {
			if l <= 0 {
				return nil, fmt.Errorf("%s: expected positive lattice sizes, found %v", name, opt.Lattice)
			}
			latN *= l
		}
	}
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 1<<20), MaxLine)
	var (
		states   []uint8
		params   []float64
		n        = -1
		lay      = undecided
		sep      byte // ',' or ' ' as seen on the first data line
		maxVal   = -1
		lineNo   int
		seenData bool
		toks     []token
	)
	fail := func(col int, format string, args ...any) error {
		return &Error{File: name, Line: lineNo, Column: col, Msg: fmt.Sprintf(format, args...)}
	}
	for sc.Scan() {
		lineNo++
		line := sc.Bytes()
		if lineNo == 1 {
			line = bytes.TrimPrefix(line, []byte("\xef\xbb\xbf"))
		}
		if bytes.IndexByte(line, 0) >= 0 {
			return nil, fail(0, "expected a text or CSV file, found binary data (a zero byte; a .npz or .ckpt file?)")
		}
		line = bytes.TrimSpace(line)
		if len(line) == 0 || line[0] == '#' {
			continue
		}
		var err error
		toks, err = split(toks[:0], line)
		if err != nil {
			return nil, fail(len(toks)+1, "%v", err)
		}
		if !seenData {
			seenData = true
			if isHeader(toks) {
				continue
			}
		}
		if len(toks) < d+1 {
			return nil, fail(0, "expected %d parameter columns and then the site values, found %d columns", d, len(toks))
		}
		for i := 0; i < d; i++ {
			v, err := strconv.ParseFloat(string(toks[i].b), 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fail(i+1, "parameter %s: expected a finite number, found %q", opt.ParamNames[i], toks[i].b)
			}
			params = append(params, v)
		}
		sites := toks[d:]
		if lay == undecided {
			lay = fields
			if len(sites) == 1 && len(sites[0].b) > 1 && !opt.Spins && allDigits(sites[0].b) {
				lay = digits
			}
			n = len(sites)
			if lay == digits {
				n = len(sites[0].b)
			}
			sep = toks[0].sep
			if latN > 0 && latN != n {
				return nil, fail(0, "the lattice %v has %d sites, but this line has %d site values", opt.Lattice, latN, n)
			}
		}
		if lay == digits {
			if len(sites) != 1 || len(sites[0].b) != n {
				got := 0
				for _, s := range sites {
					got += len(s.b)
				}
				return nil, fail(d+1, "expected one string of %d digits (as on the first data line), found %d columns holding %d characters", n, len(sites), got)
			}
			for j, c := range sites[0].b {
				if c < '0' || c > '9' {
					return nil, fail(d+1, "site %d: expected a digit, found %q", j+1, c)
				}
				v := int(c - '0')
				if opt.Alphabet > 0 && v >= opt.Alphabet {
					return nil, fail(d+1, "site %d: expected a value below the alphabet %d, found %d", j+1, opt.Alphabet, v)
				}
				maxVal = max(maxVal, v)
				states = append(states, uint8(v))
			}
			continue
		}
		if len(sites) != n {
			return nil, fail(0, "expected %d columns (%d parameters and %d sites, as on the first data line), found %d", d+n, d, n, len(toks))
		}
		for j, s := range sites {
			col := d + j + 1
			if opt.Spins {
				switch string(s.b) {
				case "1", "+1":
					states = append(states, 1)
				case "-1":
					states = append(states, 0)
				default:
					return nil, fail(col, "expected a spin -1 or +1, found %q", s.b)
				}
				continue
			}
			v, ok := smallInt(s.b)
			if !ok {
				hint := ""
				switch {
				case string(s.b) == "-1" || string(s.b) == "+1":
					hint = " (use --spins pm1 for ±1 spins)"
				case d == 0 && j == 0:
					hint = " (name leading parameter columns with --params)"
				}
				return nil, fail(col, "expected a site value 0 to %d, found %q%s", limit(opt.Alphabet)-1, s.b, hint)
			}
			if v >= limit(opt.Alphabet) {
				return nil, fail(col, "expected a site value below the alphabet %d, found %d", limit(opt.Alphabet), v)
			}
			maxVal = max(maxVal, v)
			states = append(states, uint8(v))
		}
	}
	if err := sc.Err(); err != nil {
		lineNo++
		if errors.Is(err, bufio.ErrTooLong) {
			return nil, fail(0, "line longer than %d bytes", MaxLine)
		}
		return nil, fmt.Errorf("%s: reading: %w", name, err)
	}
	if n <= 0 {
		return nil, fmt.Errorf("%s: expected at least one snapshot line, found none", name)
	}
	m := len(states) / n
	q := opt.Alphabet
	if opt.Spins {
		q = 2
	}
	if q == 0 {
		q = max(maxVal+1, 2)
	}
	format := "text"
	switch {
	case lay == digits:
		format = "digits"
	case sep == ',':
		format = "csv"
	}
	source := map[string]string{"generator": "imported", "file": filepath.Base(name), "format": format}
	if opt.Spins {
		source["spins"] = "pm1"
	}
	ds, err := data.New(0, n, opt.ParamNames, q, opt.Lattice, source)
	if err != nil {
		return nil, err
	}
	ds.M, ds.States, ds.Params = m, states, params
	if d == 0 {
		ds.Params = nil
		return ds, nil
	}
	if err := ds.Validate(name); err != nil {
		return nil, err
	}
	return ds, nil
}

func limit(q int) int {
	if q == 0 {
		return 256
	}
	return q
}

// token is one field of a line and the separator that followed it.
type token struct {
	b   []byte
	sep byte
}

// split cuts a trimmed line into fields separated by a comma (with optional
// spaces around it) or by runs of spaces and tabs. An empty field between
// two commas is an error.
func split(dst []token, line []byte) ([]token, error) {
	i := 0
	for i < len(line) {
		j := i
		for j < len(line) && line[j] != ',' && line[j] != ' ' && line[j] != '\t' {
			j++
		}
		if j == i {
			return dst, errors.New("expected a value, found an empty column")
		}
		t := token{b: line[i:j], sep: ' '}
		for j < len(line) && (line[j] == ' ' || line[j] == '\t') {
			j++
		}
		if j < len(line) && line[j] == ',' {
			t.sep = ','
			j++
			for j < len(line) && (line[j] == ' ' || line[j] == '\t') {
				j++
			}
			if j == len(line) {
				dst = append(dst, t)
				return dst, errors.New("expected a value after the last comma, found the end of the line")
			}
		}
		dst = append(dst, t)
		i = j
	}
	return dst, nil
}

// isHeader reports whether the first data line is a header: a line with a
// field that is not a number.
func isHeader(toks []token) bool {
	for _, t := range toks {
		s := string(t.b)
		if s == "-1" || s == "+1" {
			continue
		}
		if _, err := strconv.ParseFloat(s, 64); err != nil {
			return true
		}
	}
	return false
}

func allDigits(b []byte) bool {
	for _, c := range b {
		if c < '0' || c > '9' {
			return false
		}
	}
	return true
}

// smallInt parses a non-negative decimal integer below 256.
func smallInt(b []byte) (int, bool) {
	if len(b) == 0 || len(b) > 3 {
		return 0, false
	}
	v := 0
	for _, c := range b {
		if c < '0' || c > '9' {
			return 0, false
		}
		v = v*10 + int(c-'0')
	}
	return v, v < 256
}
