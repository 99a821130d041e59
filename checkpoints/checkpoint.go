package checkpoints

import (
	"bufio"
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"hash"
	"io"
	"math"
	"os"
	"slices"

	"tidemark/data"
	"tidemark/data/safefile"
	"tidemark/model"
)

// Magic is the first 8 bytes of every checkpoint file.
const Magic = "TDMKCKPT"

// Version is the format version this package writes and the newest it reads.
const Version uint32 = 1

// preambleLen is the size of magic, version and the two lengths.
const preambleLen = 8 + 4 + 8 + 8

// maxHeaderLen bounds the JSON header so a corrupt length cannot make Load
// allocate without limit.
const maxHeaderLen = 1 << 28

// Errors wrapped by Load and Decode, one per check, so callers and tests can
// tell which check failed with errors.Is.
var (
	ErrMagic    = errors.New("not a tidemark checkpoint (bad magic bytes)")
	ErrVersion  = errors.New("unsupported checkpoint format version")
	ErrLength   = errors.New("checkpoint length is wrong (truncated or extended file)")
	ErrChecksum = errors.New("checkpoint checksum mismatch (the file is corrupt)")
	ErrHeader   = errors.New("checkpoint header is invalid")
)

// Checkpoint is a trained model with its header and optimiser state.
type Checkpoint struct {
	// Header is the JSON header.
	Header Header
	// Best holds the weights with the lowest validation NLL.
	Best []model.Tensor
	// Last holds the weights after the last completed epoch.
	Last []model.Tensor
	// AdamM and AdamV are Adam's moment estimates for Last, with the same
	// names and shapes; they may be nil in a checkpoint made only for scoring.
	AdamM, AdamV []model.Tensor
	// Average is the accumulator of the moving average of the weights
	// (train.Settings.Average), with the names and shapes of Best; nil when
	// the run did not average or the checkpoint was made only for scoring.
	Average []model.Tensor
}

// Model returns the model with the best weights, a copy of them (made by
// model.FromWeights; a second clone here would only be garbage of the
// size of the weights).
func (c *Checkpoint) Model() (*model.Model, error) {
	m, err := model.FromWeights(c.Header.Model, c.Best)
	if err != nil {
		return nil, fmt.Errorf("checkpoint best weights: %w", err)
	}
	return m, nil
}

// LastModel returns the model with a copy of the weights of the last
// completed epoch.
func (c *Checkpoint) LastModel() (*model.Model, error) {
	m, err := model.FromWeights(c.Header.Model, c.Last)
	if err != nil {
		return nil, fmt.Errorf("checkpoint last weights: %w", err)
	}
	return m, nil
}

// NumParams returns the number of trainable values.
func (c *Checkpoint) NumParams() int {
	n := 0
	for _, t := range c.Best {
		n += len(t.Data)
	}
	return n
}

// Fingerprint returns the hex SHA-256 of a dataset's states bytes followed
// by its params as float64 little-endian. ds must hold its states in
// memory; FingerprintBlocks also reads them from a file.
func Fingerprint(ds *data.Dataset) string {
	h := sha256.New()
	h.Write(ds.States)
	return fingerprintParams(h, ds)
}

// FingerprintBlocks is Fingerprint of a dataset whose states may be read
// from its file block by block (data.ReadHead); the error is the file's.
func FingerprintBlocks(ctx context.Context, ds *data.Dataset) (string, error) {
	h := sha256.New()
	err := ds.EachBlock(ctx, 0, func(_ int, xs []uint8) error {
		h.Write(xs)
		return nil
	})
	if err != nil {
		return "", err
	}
	return fingerprintParams(h, ds), nil
}

// fingerprintParams adds the params to h, which holds the states, and
// returns the hex digest.
func fingerprintParams(h hash.Hash, ds *data.Dataset) string {
	buf := make([]byte, 0, 8*4096)
	for i, v := range ds.Params {
		buf = binary.LittleEndian.AppendUint64(buf, math.Float64bits(v))
		if len(buf) == cap(buf) || i == len(ds.Params)-1 {
			h.Write(buf)
			buf = buf[:0]
		}
	}
	return hex.EncodeToString(h.Sum(nil))
}

// CheckDataset reports whether ds can be scored by the model: the same
// number of sites, alphabet, lattice shape and parameter names in the same
// order. The error says which differs, with both values.
func (c *Checkpoint) CheckDataset(ds *data.Dataset) error {
	h := &c.Header
	if ds.N != h.Model.Sites {
		return fmt.Errorf("dataset does not match the model: the model has %d sites, the dataset %d", h.Model.Sites, ds.N)
	}
	if ds.Meta.Alphabet != h.Model.Alphabet {
		return fmt.Errorf("dataset does not match the model: the model's alphabet is %d values per site, the dataset's %d", h.Model.Alphabet, ds.Meta.Alphabet)
	}
	if len(h.Lattice) > 0 && len(ds.Meta.Lattice) > 0 && !slices.Equal(h.Lattice, ds.Meta.Lattice) {
		return fmt.Errorf("dataset does not match the model: the model's lattice is %v, the dataset's %v", h.Lattice, ds.Meta.Lattice)
	}
	if !slices.Equal(h.ParamNames, ds.Meta.ParamNames) {
		return fmt.Errorf("dataset does not match the model: the model's parameter names are %q, the dataset's %q", h.ParamNames, ds.Meta.ParamNames)
	}
	return nil
}

// sections returns the payload sections in file order.
func (c *Checkpoint) sections() []struct {
	name string
	ts   []model.Tensor
} {
	s := []struct {
		name string
		ts   []model.Tensor
	}{{SectionBest, c.Best}, {SectionLast, c.Last}}
	if c.AdamM != nil || c.AdamV != nil {
		s = append(s, struct {
			name string
			ts   []model.Tensor
		}{SectionAdamM, c.AdamM}, struct {
			name string
			ts   []model.Tensor
		}{SectionAdamV, c.AdamV})
	}
	if c.Average != nil {
		s = append(s, struct {
			name string
			ts   []model.Tensor
		}{SectionAverage, c.Average})
	}
	return s
}

// Encode writes the checkpoint in format Version to w. It fills
// Header.Sections from the tensors. The payload is streamed through a small
// buffer, never held as a second copy of the weights in memory (at 4096
// sites the tensors of one checkpoint take over 600 MB).
func (c *Checkpoint) Encode(w io.Writer) error {
	hdr, payload, err := c.prepareHeader()
	if err != nil {
		return err
	}
	h := sha256.New()
	bw := bufio.NewWriterSize(io.MultiWriter(w, h), 1<<16)
	pre := make([]byte, 0, preambleLen)
	pre = append(pre, Magic...)
	pre = binary.LittleEndian.AppendUint32(pre, Version)
	pre = binary.LittleEndian.AppendUint64(pre, uint64(len(hdr)))
	pre = binary.LittleEndian.AppendUint64(pre, uint64(payload))
	bw.Write(pre)
	bw.Write(hdr)
	var buf [8]byte
	for _, s := range c.sections() {
		for _, t := range s.ts {
			for _, v := range t.Data {
				binary.LittleEndian.PutUint64(buf[:], math.Float64bits(v))
				bw.Write(buf[:])
			}
		}
	}
	if err := bw.Flush(); err != nil {
		return err
	}
	_, err = w.Write(h.Sum(nil))
	return err
}

// Bytes returns the encoded checkpoint.
func (c *Checkpoint) Bytes() ([]byte, error) {
	var b bytes.Buffer
	if err := c.Encode(&b); err != nil {
		return nil, err
	}
	return b.Bytes(), nil
}

// prepareHeader checks the sections, fills Header.Sections and returns the
// JSON header and the payload length in bytes.
func (c *Checkpoint) prepareHeader() (hdr []byte, payload int, err error) {
	if len(c.Best) == 0 {
		return nil, 0, errors.New("checkpoint has no weights")
	}
	c.Header.Sections = c.Header.Sections[:0]
	for _, s := range c.sections() {
		sec := Section{Name: s.name}
		if len(s.ts) != len(c.Best) {
			return nil, 0, fmt.Errorf("checkpoint section %q has %d tensors, expected %d like %q", s.name, len(s.ts), len(c.Best), SectionBest)
		}
		for i, t := range s.ts {
			if t.Name != c.Best[i].Name || !slices.Equal(t.Shape, c.Best[i].Shape) {
				return nil, 0, fmt.Errorf("checkpoint section %q tensor %d is %s%v, expected %s%v", s.name, i, t.Name, t.Shape, c.Best[i].Name, c.Best[i].Shape)
			}
			if n := shapeLen(t.Shape); n != len(t.Data) {
				return nil, 0, fmt.Errorf("checkpoint section %q tensor %s: shape %v needs %d values, found %d", s.name, t.Name, t.Shape, n, len(t.Data))
			}
			sec.Tensors = append(sec.Tensors, TensorInfo{Name: t.Name, Shape: slices.Clone(t.Shape)})
			payload += 8 * len(t.Data)
		}
		c.Header.Sections = append(c.Header.Sections, sec)
	}
	hdr, err = json.Marshal(&c.Header)
	if err != nil {
		return nil, 0, fmt.Errorf("encoding checkpoint header: %w", err)
	}
	return hdr, payload, nil
}

func shapeLen(shape []int) int {
	n := 1
	for _, s := range shape {
		if s < 0 || (s > 0 && n > math.MaxInt/s) {
			return -1 // negative, or too many values to count
		}
		n *= s
	}
	return n
}

// Save writes the checkpoint atomically to path; an existing file is
// replaced only when force is true.
func (c *Checkpoint) Save(path string, force bool) error {
	// Checked before the file is created, so a bad checkpoint leaves no
	// temporary file behind and its error names the path once.
	if _, _, err := c.prepareHeader(); err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	return safefile.Write(path, force, c.Encode)
}

// Load reads and checks a checkpoint file. The file is read twice in
// pieces (once for the checksum, once to decode), never held whole in
// memory beside its tensors.
func Load(path string) (*Checkpoint, error) {
	f, err := os.Open(path)
	if err == nil {
		defer f.Close()
		var fi os.FileInfo
		if fi, err = f.Stat(); err == nil {
			var c *Checkpoint
			c, err = decode(f, fi.Size(), path)
			var re readError
			if !errors.As(err, &re) {
				return c, err
			}
			err = re.err
		}
	}
	var pe *os.PathError
	if errors.As(err, &pe) {
		err = pe.Err
	}
	return nil, fmt.Errorf("%s: cannot read checkpoint: %w", path, err)
}

// readError is a failure to read the source, not a fault of its content.
type readError struct{ err error }

func (e readError) Error() string { return e.err.Error() }

// Decode parses an encoded checkpoint; name is used in messages. The error
// wraps ErrMagic, ErrVersion, ErrLength, ErrChecksum or ErrHeader.
func Decode(b []byte, name string) (*Checkpoint, error) {
	c, err := decode(bytes.NewReader(b), int64(len(b)), name)
	var re readError
	if errors.As(err, &re) {
		return nil, re.err
	}
	return c, err
}

// decode is Decode from size bytes of ra; failures to read are returned
// as readError.
func decode(ra io.ReaderAt, size int64, name string) (*Checkpoint, error) {
	fail := func(kind error, format string, args ...any) error {
		return fmt.Errorf("%s: %w: %s", name, kind, fmt.Sprintf(format, args...))
	}
	b := make([]byte, min(size, preambleLen))
	if _, err := ra.ReadAt(b, 0); err != nil && len(b) > 0 {
		return nil, readError{err}
	}
	if len(b) < len(Magic) || !bytes.Equal(b[:len(Magic)], []byte(Magic)) {
		n := min(len(b), len(Magic))
		return nil, fail(ErrMagic, "expected the file to start with %q, found %q", Magic, b[:n])
	}
	if size < preambleLen+sha256.Size {
		return nil, fail(ErrLength, "expected at least %d bytes, found %d", preambleLen+sha256.Size, size)
	}
	ver := binary.LittleEndian.Uint32(b[8:12])
	if ver > Version {
		return nil, fail(ErrVersion, "the file has format version %d, this tidemark reads versions up to %d (the file was written by a newer tidemark; upgrade to read it)", ver, Version)
	}
	if ver == 0 {
		return nil, fail(ErrVersion, "expected a format version from 1 to %d, found 0", Version)
	}
	hlen := binary.LittleEndian.Uint64(b[12:20])
	plen := binary.LittleEndian.Uint64(b[20:28])
	if hlen > maxHeaderLen || plen > uint64(size) || plen%8 != 0 {
		return nil, fail(ErrLength, "the recorded header length %d and payload length %d do not fit a file of %d bytes", hlen, plen, size)
	}
	want := uint64(preambleLen) + hlen + plen + sha256.Size
	if want != uint64(size) {
		return nil, fail(ErrLength, "expected %d bytes (header %d, payload %d), found %d", want, hlen, plen, size)
	}
	bodyLen := size - sha256.Size
	h := sha256.New()
	if _, err := io.Copy(h, io.NewSectionReader(ra, 0, bodyLen)); err != nil {
		return nil, readError{err}
	}
	sum := h.Sum(nil)
	rec := make([]byte, sha256.Size)
	if _, err := ra.ReadAt(rec, bodyLen); err != nil {
		return nil, readError{err}
	}
	if !bytes.Equal(sum, rec) {
		return nil, fail(ErrChecksum, "expected SHA-256 %x, found %x recorded", rec, sum)
	}
	hdr := make([]byte, hlen)
	if _, err := ra.ReadAt(hdr, preambleLen); err != nil {
		return nil, readError{err}
	}
	pay := bufio.NewReaderSize(io.NewSectionReader(ra, preambleLen+int64(hlen), int64(plen)), 1<<16)
	c, err := decodeBody(hdr, pay, int(plen), fail)
	if err != nil {
		return nil, err
	}
	return c, nil
}

// decodeBody parses the JSON header hdr and the plen payload bytes read
// from pay.
func decodeBody(hdr []byte, pay *bufio.Reader, plen int, fail func(kind error, format string, args ...any) error) (*Checkpoint, error) {
	c := &Checkpoint{}
	if err := json.Unmarshal(hdr, &c.Header); err != nil {
		return nil, fail(ErrHeader, "expected a JSON object: %v", err)
	}
	if err := c.Header.Model.Validate(); err != nil {
		return nil, fail(ErrHeader, "%v", err)
	}
	if err := c.Header.Ensemble.Check(); err != nil {
		return nil, fail(ErrHeader, "%v", err)
	}
	off := 0
	chunk := make([]byte, 1<<16)
	if len(c.Header.Sections) < 2 {
		return nil, fail(ErrHeader, "expected at least the sections %q and %q, found %d sections", SectionBest, SectionLast, len(c.Header.Sections))
	}
	for _, s := range c.Header.Sections {
		var ts []model.Tensor
		for _, ti := range s.Tensors {
			n := shapeLen(ti.Shape)
			if n < 0 || n > (plen-off)/8 {
				return nil, fail(ErrHeader, "section %q tensor %s with shape %v does not fit in the %d-byte payload", s.Name, ti.Name, ti.Shape, plen)
			}
			d := make([]float64, n)
			for i := 0; i < n; {
				k := min(n-i, len(chunk)/8)
				if _, err := io.ReadFull(pay, chunk[:8*k]); err != nil {
					return nil, readError{err}
				}
				for j := range k {
					d[i+j] = math.Float64frombits(binary.LittleEndian.Uint64(chunk[8*j:]))
				}
				i += k
				off += 8 * k
			}
			ts = append(ts, model.Tensor{Name: ti.Name, Shape: slices.Clone(ti.Shape), Data: d})
		}
		switch s.Name {
		case SectionBest:
			c.Best = ts
		case SectionLast:
			c.Last = ts
		case SectionAdamM:
			c.AdamM = ts
		case SectionAdamV:
			c.AdamV = ts
		case SectionAverage:
			c.Average = ts
		default:
			return nil, fail(ErrHeader, "unknown payload section %q", s.Name)
		}
	}
	if off != plen {
		return nil, fail(ErrHeader, "the sections describe %d payload bytes, the file holds %d", off, plen)
	}
	if len(c.Best) == 0 || len(c.Last) != len(c.Best) {
		return nil, fail(ErrHeader, "expected sections %q and %q with the same tensors, found %d and %d tensors", SectionBest, SectionLast, len(c.Best), len(c.Last))
	}
	if (c.AdamM == nil) != (c.AdamV == nil) {
		return nil, fail(ErrHeader, "expected both sections %q and %q or neither, found %d and %d tensors", SectionAdamM, SectionAdamV, len(c.AdamM), len(c.AdamV))
	}
	// Every section holds the tensors of "best", so that the checkpoint can
	// be written again (found by FuzzDecode).
	for _, sec := range c.sections() {
		if len(sec.ts) != len(c.Best) {
			return nil, fail(ErrHeader, "section %q has %d tensors, expected %d as in %q", sec.name, len(sec.ts), len(c.Best), SectionBest)
		}
		for i, t := range sec.ts {
			if t.Name != c.Best[i].Name || !slices.Equal(t.Shape, c.Best[i].Shape) {
				return nil, fail(ErrHeader, "section %q tensor %d is %s%v, expected %s%v as in %q", sec.name, i, t.Name, t.Shape, c.Best[i].Name, c.Best[i].Shape, SectionBest)
			}
		}
	}
	return c, nil
}
