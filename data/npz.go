package data

import (
	"archive/zip"
	"bufio"
	"bytes"
	"compress/flate"
	"encoding/binary"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
	"time"

	"codeberg.org/sbinet/npyio/npy"

	"tidemark/data/safefile"
)

// ReadOptions changes what Read accepts.
type ReadOptions struct {
	// Unlabelled accepts a file with no params array (D = 0), for commands
	// that infer parameters rather than need them.
	Unlabelled bool
}

// Read loads and validates a dataset file.
func Read(path string) (*Dataset, error) { return ReadWith(path, ReadOptions{}) }

// ReadWith loads and validates a dataset file with options.
func ReadWith(path string, opt ReadOptions) (ds *Dataset, err error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("%s: cannot open dataset: %w", path, unwrapPath(err))
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	if st.IsDir() {
		return nil, fmt.Errorf("%s: expected a .npz dataset file, found a folder", path)
	}
	return Decode(f, st.Size(), path, opt)
}

func unwrapPath(err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// Decode reads a dataset from an .npz archive of the given size; name is
// used in messages.
//
// The NPY headers are parsed by npyio; the array bodies are read here in one
// io.ReadFull each, which is much faster than npyio's element-wise reader
// (BenchmarkDecode). Reading each entry to its end also makes archive/zip
// verify the entry's CRC-32, so a corrupt file is reported.
func Decode(r io.ReaderAt, size int64, name string, opt ReadOptions) (ds *Dataset, err error) {
	defer func() {
		if p := recover(); p != nil {
			ds, err = nil, &ValidationError{File: name, Where: "archive", Expected: "a readable NumPy .npz archive", Found: fmt.Sprintf("corrupt content (%v)", p)}
		}
	}()
	bad := func(where, expected, found string) error {
		return &ValidationError{File: name, Where: where, Expected: expected, Found: found}
	}
	zr, err := zip.NewReader(r, size)
	if err != nil {
		return nil, bad("archive", "a NumPy .npz (zip) archive", fmt.Sprintf("an unreadable file (%v)", err))
	}
	entry := map[string]*zip.File{}
	var keys []string
	for _, f := range zr.File {
		if f.CompressedSize64 > uint64(size) {
			return nil, bad("archive", fmt.Sprintf("entries no larger than the %d-byte file", size), fmt.Sprintf("%s claiming %d compressed bytes", f.Name, f.CompressedSize64))
		}
		k := strings.TrimSuffix(f.Name, ".npy")
		if _, dup := entry[k]; !dup {
			keys = append(keys, k)
		}
		entry[k] = f
	}
	for _, want := range []string{"states", "meta"} {
		if entry[want] == nil {
			return nil, bad("archive", fmt.Sprintf("an array named %q", want), fmt.Sprintf("arrays %v", keys))
		}
	}
	if entry["params"] == nil && !opt.Unlabelled {
		return nil, bad("archive", `an array named "params"`, fmt.Sprintf("arrays %v", keys))
	}
	ds = &Dataset{}

	// meta
	mh, metaBytes, err := readNPY(entry["meta"], 1, func(h *npy.Header) string {
		if !isU1(h.Descr.Type) || len(h.Descr.Shape) != 1 {
			return "uint8 1-D array of UTF-8 JSON"
		}
		return ""
	})
	if err != nil {
		return nil, bad("meta", err.Error(), describe(mh))
	}
	if err := json.Unmarshal(metaBytes, &ds.Meta); err != nil {
		return nil, bad("meta", "a JSON object", fmt.Sprintf("invalid JSON (%v)", err))
	}

	// states
	sh, states, err := readNPY(entry["states"], 1, func(h *npy.Header) string {
		switch {
		case !isU1(h.Descr.Type) && !isB1(h.Descr.Type):
			return "dtype uint8"
		case len(h.Descr.Shape) != 2:
			return "a 2-D array (M snapshots × N sites)"
		case h.Descr.Fortran && h.Descr.Shape[0] > 1 && h.Descr.Shape[1] > 1:
			return "C (row-major) order, not Fortran order"
		}
		return ""
	})
	if err != nil {
		return nil, bad("states", err.Error(), describe(sh))
	}
	ds.M, ds.N = sh.Descr.Shape[0], sh.Descr.Shape[1]
	ds.States = states
	if len(ds.Meta.Lattice) == 0 && ds.N > 0 {
		ds.Meta.Lattice = []int{ds.N}
	}

	// params
	if entry["params"] != nil {
		ph, raw, err := readNPY(entry["params"], 8, func(h *npy.Header) string {
			s := h.Descr.Shape
			switch {
			case !isF8(h.Descr.Type):
				return "dtype float64 (little-endian)"
			case len(s) != 1 && len(s) != 2:
				return "a 2-D array (M × d)"
			case s[0] != ds.M:
				return fmt.Sprintf("%d rows, as many as states", ds.M)
			case h.Descr.Fortran && len(s) == 2 && s[0] > 1 && s[1] > 1:
				return "C (row-major) order, not Fortran order"
			}
			return ""
		})
		if err != nil {
			return nil, bad("params", err.Error(), describe(ph))
		}
		ds.D = 1
		if len(ph.Descr.Shape) == 2 {
			ds.D = ph.Descr.Shape[1]
		}
		if ds.D > 0 {
			ds.Params = make([]float64, len(raw)/8)
			for i := range ds.Params {
				ds.Params[i] = math.Float64frombits(binary.LittleEndian.Uint64(raw[8*i:]))
			}
		}
	}
	if err := ds.validate(name, !opt.Unlabelled); err != nil {
		return nil, err
	}
	return ds, nil
}

// readNPY opens one archive entry, parses its NPY header, lets check reject
// it (check returns what was expected, or ""), and reads the body of
// elemSize-byte elements to the end of the entry.
func readNPY(f *zip.File, elemSize int, check func(*npy.Header) string) (*npy.Header, []byte, error) {
	rc, err := f.Open()
	if err != nil {
		return nil, nil, fmt.Errorf("a readable archive entry (%v)", err)
	}
	defer rc.Close()
	pre, err := npyPreamble(rc)
	if err != nil {
		return nil, nil, err
	}
	rp, err := npy.NewReader(io.MultiReader(bytes.NewReader(pre), rc))
	if err != nil {
		return nil, nil, fmt.Errorf("a NumPy .npy header (%v)", err)
	}
	h := &rp.Header
	if msg := check(h); msg != "" {
		return h, nil, errors.New(msg)
	}
	n := uint64(elemSize)
	for _, s := range h.Descr.Shape {
		if s < 0 || (s > 0 && n > math.MaxInt64/uint64(s)) {
			return h, nil, errors.New("a valid shape")
		}
		n *= uint64(s)
	}
	if n > f.UncompressedSize64 {
		return h, nil, fmt.Errorf("%d data bytes (truncated entry of %d bytes)", n, f.UncompressedSize64)
	}
	// Deflate expands data at most 1032:1 (zlib's technical notes; from
	// memory), so a body larger than that of the compressed entry means a
	// damaged size; refuse it before allocating the body, since a failed
	// huge allocation ends the process (found with TestDecodeHugeClaimedSize).
	if n/1032 > f.CompressedSize64 {
		return h, nil, fmt.Errorf("%d data bytes (the entry holds only %d compressed bytes)", n, f.CompressedSize64)
	}
	body := make([]byte, n)
	if _, err := io.ReadFull(rc, body); err != nil {
		return h, nil, fmt.Errorf("%d readable data bytes (%v)", n, err)
	}
	// Read to the end so that archive/zip checks the CRC-32.
	var one [1]byte
	if k, err := rc.Read(one[:]); k != 0 || !errors.Is(err, io.EOF) {
		if err == nil || errors.Is(err, io.EOF) {
			return h, nil, fmt.Errorf("exactly %d data bytes", n)
		}
		return h, nil, fmt.Errorf("intact data (%v)", err)
	}
	return h, body, nil
}

// maxNPYHeader bounds the NPY header dictionary, so that a damaged length
// cannot make the reader allocate without limit (NumPy's own headers are a
// few hundred bytes).
const maxNPYHeader = 1 << 16

// npyPreamble reads the NPY magic, version, header length and header from r
// and checks that the header has the layout npyio's parser assumes: npyio
// slices the dictionary between its keys without bounds checks, and damaged
// headers made it panic (found by FuzzDecode). It returns the bytes read, to
// be handed to npyio, or an error saying what was expected.
func npyPreamble(r io.Reader) ([]byte, error) {
	const what = "a NumPy .npy header"
	pre := make([]byte, 8, 12)
	if _, err := io.ReadFull(r, pre); err != nil {
		return nil, fmt.Errorf("%s (%v)", what, err)
	}
	if string(pre[:6]) != "\x93NUMPY" {
		return nil, fmt.Errorf("%s (magic bytes \\x93NUMPY, found %q)", what, pre[:6])
	}
	var hlen uint64
	switch pre[6] {
	case 1:
		pre = pre[:10]
		if _, err := io.ReadFull(r, pre[8:]); err != nil {
			return nil, fmt.Errorf("%s (%v)", what, err)
		}
		hlen = uint64(binary.LittleEndian.Uint16(pre[8:]))
	case 2:
		pre = pre[:12]
		if _, err := io.ReadFull(r, pre[8:]); err != nil {
			return nil, fmt.Errorf("%s (%v)", what, err)
		}
		hlen = uint64(binary.LittleEndian.Uint32(pre[8:]))
	default:
		return nil, fmt.Errorf("%s of format version 1 or 2 (found version %d)", what, pre[6])
	}
	if hlen > maxNPYHeader {
		return nil, fmt.Errorf("%s of at most %d bytes (found a length of %d)", what, maxNPYHeader, hlen)
	}
	hdr := make([]byte, hlen)
	if _, err := io.ReadFull(r, hdr); err != nil {
		return nil, fmt.Errorf("%s of %d bytes (%v)", what, hlen, err)
	}
	if !npyDictLayoutOK(hdr) {
		return nil, fmt.Errorf("%s dictionary {'descr': ..., 'fortran_order': ..., 'shape': (...), } ending in a newline (found %q)", what, truncate(hdr, 80))
	}
	return append(pre, hdr...), nil
}

// npyDictLayoutOK reports whether every slice npyio takes of the header is
// in bounds: a newline, the three keys in NumPy's order, a closing brace
// after them and a shape of at least "()".
func npyDictLayoutOK(hdr []byte) bool {
	nl := bytes.LastIndexByte(hdr, '\n')
	if nl < 0 {
		return false
	}
	buf := hdr[:nl]
	d := bytes.Index(buf, []byte("'descr': "))
	o := bytes.Index(buf, []byte("'fortran_order': "))
	s := bytes.Index(buf, []byte("'shape': "))
	e := bytes.Index(buf, []byte("}"))
	if d < 0 || o < 0 || s < 0 || e < 0 {
		return false
	}
	return d+len("'descr': ") <= o-2 && o+len("'fortran_order': ") <= s-2 && s+len("'shape': ")+2 <= e-2
}

func truncate(b []byte, n int) []byte {
	if len(b) > n {
		return b[:n]
	}
	return b
}

func isU1(t string) bool {
	t = strings.Trim(t, "'\"")
	return t == "|u1" || t == "<u1" || t == "u1" || t == "=u1" || t == ">u1"
}
func isB1(t string) bool {
	t = strings.Trim(t, "'\"")
	return t == "|b1" || t == "b1" || t == "?"
}
func isF8(t string) bool {
	t = strings.Trim(t, "'\"")
	return t == "<f8" || t == "f8" || t == "=f8"
}

func describe(h *npy.Header) string {
	if h == nil {
		return "no readable header"
	}
	order := ""
	if h.Descr.Fortran {
		order = ", Fortran order"
	}
	return fmt.Sprintf("dtype %s, shape %v%s", strings.Trim(h.Descr.Type, "'\""), h.Descr.Shape, order)
}

// Encode writes ds as an .npz archive to w: a zip of states.npy, params.npy
// and meta.npy in NPY format 1.0, deflated at the fastest level.
//
// Reading goes through npyio; writing emits the NPY header directly and the
// array bodies as raw bytes, because npyio's writer inspects every element
// by reflection.
func (ds *Dataset) Encode(w io.Writer) error {
	if ds.M == 0 {
		return errors.New("cannot write a dataset with no snapshots")
	}
	meta, err := json.Marshal(ds.Meta)
	if err != nil {
		return fmt.Errorf("encoding meta: %w", err)
	}
	arrays := []Array{Uint8Array("states", ds.States, ds.M, ds.N)}
	if ds.D > 0 {
		arrays = append(arrays, Float64Array("params", ds.Params, ds.M, ds.D))
	}
	arrays = append(arrays, Uint8Array("meta", meta, len(meta)))
	return WriteNPZ(w, zip.Deflate, arrays...)
}

// Array is one named array of an .npz archive written by WriteNPZ.
type Array struct {
	// Name is the array's name, without ".npy".
	Name string
	// Descr is the NPY dtype: "|u1", "<f8" or "<i8".
	Descr string
	// Shape is the C-order shape.
	Shape []int
	// Body writes the little-endian data.
	Body func(io.Writer) error
}

// Float64Array returns v as a "<f8" array of the given shape.
func Float64Array(name string, v []float64, shape ...int) Array {
	return Array{name, "<f8", shape, func(w io.Writer) error { return WriteFloat64s(w, v) }}
}

// Uint8Array returns v as a "|u1" array of the given shape.
func Uint8Array(name string, v []uint8, shape ...int) Array {
	return Array{name, "|u1", shape, func(w io.Writer) error {
		_, err := w.Write(v)
		return err
	}}
}

// Int64Array returns v as a 1-D "<i8" array.
func Int64Array(name string, v []int) Array {
	return Array{name, "<i8", []int{len(v)}, func(w io.Writer) error {
		var buf [8]byte
		for _, x := range v {
			binary.LittleEndian.PutUint64(buf[:], uint64(int64(x)))
			if _, err := w.Write(buf[:]); err != nil {
				return err
			}
		}
		return nil
	}}
}

// JSONArray returns v encoded as UTF-8 JSON bytes in a "|u1" array, the way
// tidemark stores metadata in an .npz archive.
func JSONArray(name string, v any) (Array, error) {
	js, err := json.Marshal(v)
	if err != nil {
		return Array{}, fmt.Errorf("encoding %s: %w", name, err)
	}
	return Uint8Array(name, js, len(js)), nil
}

// WriteNPZ writes arrays as a NumPy .npz archive (a zip of NPY 1.0 files)
// to w, each entry deflated at the fastest level (method zip.Deflate) or
// stored (zip.Store). Two arrays may not share a name.
func WriteNPZ(w io.Writer, method uint16, arrays ...Array) error {
	zw := zip.NewWriter(w)
	zw.RegisterCompressor(zip.Deflate, func(out io.Writer) (io.WriteCloser, error) {
		return flate.NewWriter(out, flate.BestSpeed)
	})
	seen := map[string]bool{}
	for _, a := range arrays {
		if seen[a.Name] {
			return fmt.Errorf("two arrays are named %q", a.Name)
		}
		seen[a.Name] = true
		if err := putNPY(zw, a.Name+".npy", method, a.Descr, a.Shape, a.Body); err != nil {
			return err
		}
	}
	return zw.Close()
}

// putNPY adds the entry name (ending in .npy) to an .npz archive being
// written: an NPY 1.0 array of dtype descr ("|u1", "<f8", …) and the given
// C-order shape, whose little-endian data body writes. method is
// zip.Deflate or zip.Store.
func putNPY(zw *zip.Writer, name string, method uint16, descr string, shape []int, body func(io.Writer) error) error {
	f, err := zw.CreateHeader(&zip.FileHeader{Name: name, Method: method, Modified: time.Now()})
	if err != nil {
		return fmt.Errorf("%s: %w", name, err)
	}
	bw := bufio.NewWriterSize(f, 1<<20)
	if _, err := bw.Write(npyHeader(descr, shape)); err != nil {
		return fmt.Errorf("%s: %w", name, err)
	}
	if err := body(bw); err != nil {
		return fmt.Errorf("%s: %w", name, err)
	}
	return bw.Flush()
}

// WriteFloat64s writes v as little-endian float64 values (an NPY "<f8" body).
func WriteFloat64s(w io.Writer, v []float64) error {
	var buf [8]byte
	for _, x := range v {
		binary.LittleEndian.PutUint64(buf[:], math.Float64bits(x))
		if _, err := w.Write(buf[:]); err != nil {
			return err
		}
	}
	return nil
}

// npyHeader returns the NPY 1.0 preamble for a C-order array: magic,
// version, header length and the Python dict literal, padded with spaces
// and a newline to a multiple of 64 bytes (as NumPy itself does).
func npyHeader(descr string, shape []int) []byte {
	sh := "("
	for i, s := range shape {
		if i > 0 {
			sh += ", "
		}
		sh += strconv.Itoa(s)
	}
	if len(shape) == 1 {
		sh += ","
	}
	sh += ")"
	dict := fmt.Sprintf("{'descr': '%s', 'fortran_order': False, 'shape': %s, }", descr, sh)
	total := 10 + len(dict) + 1
	pad := (64 - total%64) % 64
	dict += strings.Repeat(" ", pad) + "\n"
	out := make([]byte, 0, 10+len(dict))
	out = append(out, "\x93NUMPY"...)
	out = append(out, 1, 0)
	out = binary.LittleEndian.AppendUint16(out, uint16(len(dict)))
	return append(out, dict...)
}

// Write validates ds and writes it atomically to path; an existing file is
// replaced only when force is true.
func (ds *Dataset) Write(path string, force bool) error {
	if err := ds.validate(path, ds.D > 0); err != nil {
		return err
	}
	return safefile.Write(path, force, ds.Encode)
}

// Bytes returns the encoded archive, for tests and in-memory use.
func (ds *Dataset) Bytes() ([]byte, error) {
	var b bytes.Buffer
	err := ds.Encode(&b)
	return b.Bytes(), err
}

// WriteNPZFile writes arrays and meta, stored as the UTF-8 JSON array
// "meta", atomically to path as a deflated .npz archive; an existing file
// is replaced only when force is true.
func WriteNPZFile(path string, force bool, meta any, arrays ...Array) error {
	js, err := JSONArray("meta", meta)
	if err != nil {
		return err
	}
	return safefile.Write(path, force, func(w io.Writer) error {
		return WriteNPZ(w, zip.Deflate, append(arrays, js)...)
	})
}
