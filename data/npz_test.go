package data

import (
	"archive/zip"
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// arr is one hand-made NPY entry of a test archive.
type arr struct {
	descr   string
	shape   []int
	fortran bool
	body    []byte
	raw     []byte // when set, the whole entry (header and body) verbatim
}

// handHeader builds an NPY 1.0 header independently of npyHeader, so that
// tests can ask for any dtype, shape and order.
func handHeader(descr string, shape []int, fortran bool) []byte {
	parts := make([]string, len(shape))
	for i, s := range shape {
		parts[i] = fmt.Sprint(s)
	}
	sh := "(" + strings.Join(parts, ", ")
	if len(shape) == 1 {
		sh += ","
	}
	sh += ")"
	fo := "False"
	if fortran {
		fo = "True"
	}
	dict := fmt.Sprintf("{'descr': '%s', 'fortran_order': %s, 'shape': %s, }", descr, fo, sh)
	for (10+len(dict)+1)%64 != 0 {
		dict += " "
	}
	dict += "\n"
	var b bytes.Buffer
	b.WriteString("\x93NUMPY\x01\x00")
	binary.Write(&b, binary.LittleEndian, uint16(len(dict)))
	b.WriteString(dict)
	return b.Bytes()
}

// npzOf zips the entries (stored, not deflated, when store is true).
func npzOf(t testing.TB, store bool, entries map[string]arr) []byte {
	t.Helper()
	var b bytes.Buffer
	zw := zip.NewWriter(&b)
	for _, name := range []string{"states", "params", "meta", "extra"} {
		e, ok := entries[name]
		if !ok {
			continue
		}
		method := zip.Deflate
		if store {
			method = zip.Store
		}
		w, err := zw.CreateHeader(&zip.FileHeader{Name: name + ".npy", Method: method})
		if err != nil {
			t.Fatal(err)
		}
		if e.raw != nil {
			w.Write(e.raw)
		} else {
			w.Write(handHeader(e.descr, e.shape, e.fortran))
			w.Write(e.body)
		}
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func f64s(v ...float64) []byte {
	b := make([]byte, 8*len(v))
	for i, x := range v {
		binary.LittleEndian.PutUint64(b[8*i:], math.Float64bits(x))
	}
	return b
}

// goodEntries is a valid dataset: 8 snapshots of 4 sites, T ∈ {1, 2}, 4 each.
func goodEntries() map[string]arr {
	states := []byte{0, 1, 0, 1, 1, 1, 0, 0, 0, 0, 0, 0, 1, 1, 1, 1, 0, 1, 1, 0, 1, 0, 0, 1, 1, 1, 1, 0, 0, 0, 1, 1}
	meta := []byte(`{"param_names":["T"],"alphabet":2,"lattice":[2,2],"source":{"generator":"test"}}`)
	return map[string]arr{
		"states": {descr: "|u1", shape: []int{8, 4}, body: states},
		"params": {descr: "<f8", shape: []int{8, 1}, body: f64s(1, 1, 1, 1, 2, 2, 2, 2)},
		"meta":   {descr: "|u1", shape: []int{len(meta)}, body: meta},
	}
}

func with(edit func(map[string]arr)) map[string]arr {
	e := goodEntries()
	edit(e)
	return e
}

func metaArr(s string) arr { return arr{descr: "|u1", shape: []int{len(s)}, body: []byte(s)} }

func TestDecodeGood(t *testing.T) {
	b := npzOf(t, false, goodEntries())
	ds, err := Decode(bytes.NewReader(b), int64(len(b)), "good.npz", ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if ds.M != 8 || ds.N != 4 || ds.D != 1 || ds.Meta.Alphabet != 2 || ds.Meta.Generator() != "test" {
		t.Fatalf("got M=%d N=%d D=%d q=%d gen=%q", ds.M, ds.N, ds.D, ds.Meta.Alphabet, ds.Meta.Generator())
	}
	if ds.States[5] != 1 || ds.Params[4] != 2 {
		t.Fatalf("values: states[5]=%d params[4]=%v", ds.States[5], ds.Params[4])
	}
}

// TestDecodeRejects checks that every kind of bad file gets one line that
// names the file, the array and what was expected.
// rejectCase is a damaged dataset file and the message it must get.
type rejectCase struct {
	name  string
	file  []byte
	where string
	want  string // substring of the message
}

// rejectCases returns damaged dataset files with one fault each.
func rejectCases(t testing.TB) []rejectCase {
	good := npzOf(t, true, goodEntries())
	return []rejectCase{
		{"missing states", npzOf(t, false, with(func(e map[string]arr) { delete(e, "states") })), "archive", `an array named "states"`},
		{"missing params", npzOf(t, false, with(func(e map[string]arr) { delete(e, "params") })), "archive", `an array named "params"`},
		{"missing meta", npzOf(t, false, with(func(e map[string]arr) { delete(e, "meta") })), "archive", `an array named "meta"`},
		{"states int64", npzOf(t, false, with(func(e map[string]arr) {
			e["states"] = arr{descr: "<i8", shape: []int{8, 4}, body: make([]byte, 8*32)}
		})), "states", "dtype uint8"},
		{"params float32", npzOf(t, false, with(func(e map[string]arr) {
			e["params"] = arr{descr: "<f4", shape: []int{8, 1}, body: make([]byte, 4*8)}
		})), "params", "dtype float64"},
		{"params big-endian", npzOf(t, false, with(func(e map[string]arr) {
			e["params"] = arr{descr: ">f8", shape: []int{8, 1}, body: make([]byte, 8*8)}
		})), "params", "little-endian"},
		{"states 1-D", npzOf(t, false, with(func(e map[string]arr) {
			e["states"] = arr{descr: "|u1", shape: []int{32}, body: make([]byte, 32)}
		})), "states", "2-D"},
		{"states 3-D", npzOf(t, false, with(func(e map[string]arr) {
			e["states"] = arr{descr: "|u1", shape: []int{8, 2, 2}, body: make([]byte, 32)}
		})), "states", "2-D"},
		{"states Fortran", npzOf(t, false, with(func(e map[string]arr) {
			s := e["states"]
			s.fortran = true
			e["states"] = s
		})), "states", "C (row-major) order"},
		{"row counts differ", npzOf(t, false, with(func(e map[string]arr) {
			e["params"] = arr{descr: "<f8", shape: []int{7, 1}, body: f64s(1, 1, 1, 1, 2, 2, 2)}
		})), "params", "8 rows, as many as states"},
		{"params 3-D", npzOf(t, false, with(func(e map[string]arr) {
			e["params"] = arr{descr: "<f8", shape: []int{8, 1, 1}, body: f64s(1, 1, 1, 1, 2, 2, 2, 2)}
		})), "params", "2-D"},
		{"state above alphabet", npzOf(t, false, with(func(e map[string]arr) {
			s := e["states"]
			s.body = append([]byte(nil), s.body...)
			s.body[4*3+2] = 2
			e["states"] = s
		})), "states[3,2]", "below the alphabet size 2"},
		{"NaN param", npzOf(t, false, with(func(e map[string]arr) {
			e["params"] = arr{descr: "<f8", shape: []int{8, 1}, body: f64s(1, 1, math.NaN(), 1, 2, 2, 2, 2)}
		})), "params[2,0]", "a finite number"},
		{"Inf param", npzOf(t, false, with(func(e map[string]arr) {
			e["params"] = arr{descr: "<f8", shape: []int{8, 1}, body: f64s(1, 1, 1, 1, 2, 2, 2, math.Inf(-1))}
		})), "params[7,0]", "a finite number"},
		{"no snapshots", npzOf(t, false, with(func(e map[string]arr) {
			e["states"] = arr{descr: "|u1", shape: []int{0, 4}}
			e["params"] = arr{descr: "<f8", shape: []int{0, 1}}
		})), "states", "at least one snapshot"},
		{"point with one sample", npzOf(t, false, with(func(e map[string]arr) {
			e["params"] = arr{descr: "<f8", shape: []int{8, 1}, body: f64s(1, 1, 1, 1, 2, 2, 2, 3)}
		})), "params", "at least 2 samples at every grid point"},
		{"meta not JSON", npzOf(t, false, with(func(e map[string]arr) { e["meta"] = metaArr(`{"alphabet":2,`) })), "meta", "a JSON object"},
		{"meta a list", npzOf(t, false, with(func(e map[string]arr) { e["meta"] = metaArr(`[1,2]`) })), "meta", "a JSON object"},
		{"meta int64", npzOf(t, false, with(func(e map[string]arr) {
			e["meta"] = arr{descr: "<i8", shape: []int{1}, body: make([]byte, 8)}
		})), "meta", "uint8 1-D"},
		{"lattice product", npzOf(t, false, with(func(e map[string]arr) {
			e["meta"] = metaArr(`{"param_names":["T"],"alphabet":2,"lattice":[3,2]}`)
		})), "meta.lattice", "product is the 4 sites"},
		{"alphabet missing", npzOf(t, false, with(func(e map[string]arr) {
			e["meta"] = metaArr(`{"param_names":["T"],"lattice":[4]}`)
		})), "meta.alphabet", "from 2 to 256"},
		{"names count", npzOf(t, false, with(func(e map[string]arr) {
			e["meta"] = metaArr(`{"param_names":["T","h"],"alphabet":2}`)
		})), "meta.param_names", "1 names"},
		{"body shorter than header", npzOf(t, false, with(func(e map[string]arr) {
			s := e["states"]
			s.body = s.body[:20]
			e["states"] = s
		})), "states", "32 readable data bytes"},
		{"body longer than header", npzOf(t, false, with(func(e map[string]arr) {
			s := e["states"]
			s.body = append(append([]byte(nil), s.body...), 0, 0, 0, 0)
			e["states"] = s
		})), "states", "exactly 32 data bytes"},
		{"not NPY", npzOf(t, false, with(func(e map[string]arr) { e["states"] = arr{raw: []byte("hello, world")} })), "states", "NumPy .npy header"},
		{"truncated archive", good[:len(good)/2], "archive", "zip"},
		{"not a zip", []byte("T,s1,s2\n1,0,1\n"), "archive", "zip"},
		{"empty file", nil, "archive", "zip"},
		{"corrupt entry", corrupt(good, []byte{0, 1, 0, 1, 1, 1, 0, 0}), "states", "checksum"},
	}
}

func TestDecodeRejects(t *testing.T) {
	for _, c := range rejectCases(t) {
		t.Run(c.name, func(t *testing.T) {
			ds, err := Decode(bytes.NewReader(c.file), int64(len(c.file)), "bad.npz", ReadOptions{})
			if err == nil {
				t.Fatalf("accepted: M=%d N=%d", ds.M, ds.N)
			}
			var ve *ValidationError
			if !errors.As(err, &ve) {
				t.Fatalf("error %T, want *ValidationError: %v", err, err)
			}
			msg := err.Error()
			if strings.Contains(msg, "\n") {
				t.Errorf("message has several lines: %q", msg)
			}
			if !strings.HasPrefix(msg, "bad.npz: "+c.where+": expected ") {
				t.Errorf("message %q does not start with file, %q and expected", msg, c.where)
			}
			if !strings.Contains(msg, c.want) || !strings.Contains(msg, ", found ") {
				t.Errorf("message %q lacks %q or the found part", msg, c.want)
			}
		})
	}
}

// corrupt flips a byte inside the first occurrence of pat in a stored
// (uncompressed) archive, so only the CRC can notice.
func corrupt(b, pat []byte) []byte {
	out := append([]byte(nil), b...)
	i := bytes.Index(out, pat)
	if i < 0 {
		panic("pattern not in archive")
	}
	out[i] ^= 1
	return out
}

func TestDecodeBoolStatesAndUnlabelled(t *testing.T) {
	e := goodEntries()
	s := e["states"]
	s.descr = "|b1"
	e["states"] = s
	delete(e, "params")
	b := npzOf(t, false, e)
	if _, err := Decode(bytes.NewReader(b), int64(len(b)), "x.npz", ReadOptions{}); err == nil {
		t.Fatal("a file without params was accepted without Unlabelled")
	}
	ds, err := Decode(bytes.NewReader(b), int64(len(b)), "x.npz", ReadOptions{Unlabelled: true})
	if err != nil {
		t.Fatal(err)
	}
	if ds.D != 0 || ds.Params != nil || ds.M != 8 {
		t.Fatalf("D=%d params=%v M=%d", ds.D, ds.Params, ds.M)
	}
}

// TestRoundTrip writes a random 2-D dataset and reads it back.
func TestRoundTrip(t *testing.T) {
	ds := randomDataset(t, 60, []int{3, 5}, 3)
	path := filepath.Join(t.TempDir(), "r.npz")
	if err := ds.Write(path, false); err != nil {
		t.Fatal(err)
	}
	got, err := Read(path)
	if err != nil {
		t.Fatal(err)
	}
	if got.M != ds.M || got.N != ds.N || got.D != ds.D || !bytes.Equal(got.States, ds.States) {
		t.Fatalf("shape or states differ")
	}
	for i := range ds.Params {
		if got.Params[i] != ds.Params[i] {
			t.Fatalf("params[%d] = %v, want %v", i, got.Params[i], ds.Params[i])
		}
	}
	if fmt.Sprint(got.Meta.Lattice) != "[3 5]" || got.Meta.Alphabet != 3 || got.Meta.Created != ds.Meta.Created {
		t.Fatalf("meta %+v", got.Meta)
	}
}

func TestReadErrorsNameTheFile(t *testing.T) {
	dir := t.TempDir()
	if _, err := Read(filepath.Join(dir, "none.npz")); err == nil || !strings.Contains(err.Error(), "none.npz") {
		t.Errorf("missing file: %v", err)
	}
	if _, err := Read(dir); err == nil || !strings.Contains(err.Error(), "folder") {
		t.Errorf("folder: %v", err)
	}
	p := filepath.Join(dir, "bad.npz")
	os.WriteFile(p, []byte("junk"), 0o644)
	if _, err := Read(p); err == nil || !strings.HasPrefix(err.Error(), p+": archive: expected") {
		t.Errorf("junk file: %v", err)
	}
}

// randomDataset draws m snapshots per point on the 2-D grid T ∈ {1,2,3} ×
// h ∈ {0, 0.5}, on a lattice, with alphabet q.
func randomDataset(t testing.TB, m int, lattice []int, q int) *Dataset {
	t.Helper()
	n := 1
	for _, l := range lattice {
		n *= l
	}
	ds, err := New(6*m, n, []string{"T", "h"}, q, lattice, map[string]any{"generator": "test"})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for i := range ds.States {
		ds.States[i] = uint8(rng.IntN(q))
	}
	for i := 0; i < ds.M; i++ {
		k := rng.IntN(6)
		if i < 6 {
			k = i
		}
		if i >= 6 && i < 12 {
			k = i - 6
		}
		ds.Params[2*i] = float64(1 + k/2)
		ds.Params[2*i+1] = 0.5 * float64(k%2)
	}
	return ds
}

// BenchmarkDecode reads a 200000×256 random spin dataset from memory.
func BenchmarkDecode(b *testing.B) {
	m, n := 200000, 256
	ds, _ := New(m, n, []string{"T"}, 2, nil, map[string]string{"generator": "bench"})
	rng := rand.New(rand.NewPCG(3, 4))
	for i := range ds.States {
		ds.States[i] = uint8(rng.IntN(2))
	}
	for i := 0; i < m; i++ {
		ds.Params[i] = 1.5 + 0.1*float64(i%21)
	}
	raw, err := ds.Bytes()
	if err != nil {
		b.Fatal(err)
	}
	b.SetBytes(int64(m * n))
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := Decode(bytes.NewReader(raw), int64(len(raw)), "bench.npz", ReadOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}
