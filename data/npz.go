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
	f, size, err := openDataset(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return Decode(f, size, path, opt)
}

// openDataset opens the dataset file path and returns its size.
func openDataset(path string) (*os.File, int64, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, 0, fmt.Errorf("%s: cannot open dataset: %w", path, unwrapPath(err))
	}
	st, err := f.Stat()
	if err != nil {
		f.Close()
		return nil, 0, fmt.Errorf("%s: %w", path, err)
	}
	if st.IsDir() {
		f.Close()
		return nil, 0, fmt.Errorf("%s: expected a .npz dataset file, found a folder", path)
	}
	return f, st.Size(), nil
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
	defer recoverCorrupt(name, &err)
	h, err := openArchive(r, size, name, opt)
	if err != nil {
		return nil, err
	}
	defer h.close()
	ds = h.ds
	ds.States, err = h.readStates(name)
	if err != nil {
		return nil, err
	}
	if err := h.readParams(name); err != nil {
		return nil, err
	}
	if err := ds.validate(name, !opt.Unlabelled); err != nil {
		return nil, err
	}
	return ds, nil
}

// recoverCorrupt turns a panic of the NPY header parser into the error of a
// corrupt archive.
func recoverCorrupt(name string, err *error) {
	if p := recover(); p != nil {
		*err = &ValidationError{File: name, Where: "archive", Expected: "a readable NumPy .npz archive", Found: fmt.Sprintf("corrupt content (%v)", p)}
	}
}

// archive is an opened dataset archive: its meta read, the header of its
// states checked and the states entry open at the first byte of the body.
type archive struct {
	ds     *Dataset // M, N and Meta set; States and Params not read
	params *zip.File
	states *npyBody
}

// openArchive opens the .npz archive of the given size, reads its meta and
// the header of its states; name is used in messages.
func openArchive(r io.ReaderAt, size int64, name string, opt ReadOptions) (*archive, error) {
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
	ds := &Dataset{}

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
	body, err := openNPY(entry["states"], 1, func(h *npy.Header) string {
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
		return nil, bad("states", err.Error(), describe(body.header()))
	}
	sh := body.h
	ds.M, ds.N = sh.Descr.Shape[0], sh.Descr.Shape[1]
	if len(ds.Meta.Lattice) == 0 && ds.N > 0 {
		ds.Meta.Lattice = []int{ds.N}
	}
	return &archive{ds: ds, params: entry["params"], states: body}, nil
}

// close closes the states entry.
func (a *archive) close() { a.states.close() }

// readStates reads the whole body of the states entry.
func (a *archive) readStates(name string) ([]byte, error) {
	states, err := a.states.readAll()
	if err != nil {
		return nil, &ValidationError{File: name, Where: "states", Expected: err.Error(), Found: describe(a.states.h)}
	}
	return states, nil
}

// readParams reads the params entry, if there is one, into a.ds.
func (a *archive) readParams(name string) error {
	ds := a.ds
	if a.params == nil {
		return nil
	}
	ph, raw, err := readNPY(a.params, 8, func(h *npy.Header) string {
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
		return &ValidationError{File: name, Where: "params", Expected: err.Error(), Found: describe(ph)}
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
	return nil
}

// readNPY opens one archive entry, parses its NPY header, lets check reject
// it (check returns what was expected, or ""), and reads the body of
// elemSize-byte elements to the end of the entry.
func readNPY(f *zip.File, elemSize int, check func(*npy.Header) string) (*npy.Header, []byte, error) {
	b, err := openNPY(f, elemSize, check)
	if err != nil {
		return b.header(), nil, err
	}
	defer b.close()
	body, err := b.readAll()
	return b.h, body, err
}

// npyBody is an archive entry open at the first byte of its NPY body.
type npyBody struct {
	h    *npy.Header
	rc   io.ReadCloser
	n    uint64 // body bytes
	read uint64 // body bytes read so far
}

// header returns the parsed header, or nil when there is none.
func (b *npyBody) header() *npy.Header {
	if b == nil {
		return nil
	}
	return b.h
}

func (b *npyBody) close() {
	if b != nil && b.rc != nil {
		b.rc.Close()
	}
}

// openNPY opens one archive entry, parses its NPY header, lets check reject
// it (check returns what was expected, or "") and checks that the entry can
// hold a body of the header's shape in elemSize-byte elements. On an error
// the entry is closed and the returned body, if not nil, holds the header.
func openNPY(f *zip.File, elemSize int, check func(*npy.Header) string) (*npyBody, error) {
	rc, err := f.Open()
	if err != nil {
		return nil, fmt.Errorf("a readable archive entry (%v)", err)
	}
	fail := func(h *npy.Header, err error) (*npyBody, error) {
		rc.Close()
		if h == nil {
			return nil, err
		}
		return &npyBody{h: h}, err
	}
	pre, err := npyPreamble(rc)
	if err != nil {
		return fail(nil, err)
	}
	rp, err := npy.NewReader(io.MultiReader(bytes.NewReader(pre), rc))
	if err != nil {
		return fail(nil, fmt.Errorf("a NumPy .npy header (%v)", err))
	}
	h := &rp.Header
	if msg := check(h); msg != "" {
		return fail(h, errors.New(msg))
	}
	n := uint64(elemSize)
	for _, s := range h.Descr.Shape {
		if s < 0 || (s > 0 && n > math.MaxInt64/uint64(s)) {
			return fail(h, errors.New("a valid shape"))
		}
		n *= uint64(s)
	}
	if n > f.UncompressedSize64 {
		return fail(h, fmt.Errorf("%d data bytes (truncated entry of %d bytes)", n, f.UncompressedSize64))
	}
	// Deflate expands data at most 1032:1 (zlib's technical notes; from
	// memory), so a body larger than that of the compressed entry means a
	// damaged size; refuse it before allocating the body, since a failed
	// huge allocation ends the process (found with TestDecodeHugeClaimedSize).
	if n/1032 > f.CompressedSize64 {
		return fail(h, fmt.Errorf("%d data bytes (the entry holds only %d compressed bytes)", n, f.CompressedSize64))
	}
	return &npyBody{h: h, rc: rc, n: n}, nil
}

// readAll reads the whole body and checks that the entry ends there.
func (b *npyBody) readAll() ([]byte, error) {
	body := make([]byte, b.n)
	if err := b.readFull(body); err != nil {
		return nil, err
	}
	if err := b.end(); err != nil {
		return nil, err
	}
	return body, nil
}

// readFull reads the next len(dst) bytes of the body.
func (b *npyBody) readFull(dst []byte) error {
	if _, err := io.ReadFull(b.rc, dst); err != nil {
		if errors.Is(err, io.EOF) && b.read > 0 {
			// Reading the body at once would have ended within it.
			err = io.ErrUnexpectedEOF
		}
		return fmt.Errorf("%d readable data bytes (%v)", b.n, err)
	}
	b.read += uint64(len(dst))
	return nil
}

// end reads to the end of the entry, so that archive/zip checks the
// CRC-32, and checks that the body was the whole entry.
func (b *npyBody) end() error {
	var one [1]byte
	if k, err := b.rc.Read(one[:]); k != 0 || !errors.Is(err, io.EOF) {
		if err == nil || errors.Is(err, io.EOF) {
			return fmt.Errorf("exactly %d data bytes", b.n)
		}
		return fmt.Errorf("intact data (%v)", err)
	}
	return nil
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
