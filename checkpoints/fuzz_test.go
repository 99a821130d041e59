package checkpoints_test

import (
	"bytes"
	"crypto/sha256"
	"encoding/binary"
	"encoding/json"
	"errors"
	"math/big"
	"slices"
	"strings"
	"testing"

	"tidemark/checkpoints"
	"tidemark/model"
)

// preamble is magic, version, header length and payload length (see the
// file layout in the package documentation).
const preamble = 8 + 4 + 8 + 8

// smallCheckpoint returns a real checkpoint of a tiny model on a 3×3
// lattice with one parameter, with all four sections, or only the two
// weight sections when adam is false.
func smallCheckpoint(tb testing.TB, adam bool) *checkpoints.Checkpoint {
	tb.Helper()
	cfg := model.DefaultConfig(9, 2, 1, []float64{1}, []float64{3})
	cfg.Hidden = []int{6}
	cfg.CondHidden = []int{3}
	m, err := model.New(cfg, 11)
	if err != nil {
		tb.Fatal(err)
	}
	clone := func(shift float64) []model.Tensor {
		out := make([]model.Tensor, len(m.Weights))
		for i, t := range m.Weights {
			d := slices.Clone(t.Data)
			for j := range d {
				d[j] += shift
			}
			out[i] = model.Tensor{Name: t.Name, Shape: slices.Clone(t.Shape), Data: d}
		}
		return out
	}
	c := &checkpoints.Checkpoint{
		Header: checkpoints.Header{
			Software:   "fuzz",
			Created:    "2026-01-01T00:00:00Z",
			Model:      cfg,
			ParamNames: []string{"T"},
			Alphabet:   2,
			Lattice:    []int{3, 3},
			HeldOut:    [][]float64{{2.2}},
			Metrics:    []checkpoints.EpochMetrics{{Epoch: 1, TrainBitsPerSite: 0.9, ValBitsPerSite: 0.95, LR: 1e-3}},
			BestEpoch:  1,
			Optimizer:  checkpoints.OptimizerState{Method: "adam", Step: 3, LR: 1e-3, Epoch: 1},
		},
		Best: clone(0),
		Last: clone(0.125),
	}
	if adam {
		c.AdamM, c.AdamV = clone(-0.5), clone(0.5)
	}
	return c
}

// reseal rewrites the two lengths and the trailing checksum of b, treating
// everything after the preamble up to the last 32 bytes as header then
// payload with the header length kept (clamped to what is there), so that
// a mutation inside the header or payload reaches the header and section
// checks instead of stopping at the checksum.
func reseal(b []byte) []byte {
	if len(b) < preamble+sha256.Size || string(b[:8]) != checkpoints.Magic {
		return b
	}
	b = slices.Clone(b)
	body := len(b) - sha256.Size - preamble
	h := binary.LittleEndian.Uint64(b[12:20])
	if h > uint64(body) {
		h = uint64(body)
	}
	p := uint64(body) - h
	p -= p % 8
	b = b[:preamble+int(h)+int(p)+sha256.Size]
	binary.LittleEndian.PutUint64(b[12:20], h)
	binary.LittleEndian.PutUint64(b[20:28], p)
	sum := sha256.Sum256(b[:len(b)-sha256.Size])
	copy(b[len(b)-sha256.Size:], sum[:])
	return b
}

// FuzzDecode feeds arbitrary bytes to the checkpoint loader, either as they
// are or resealed (lengths and checksum made right) so that the fuzzer can
// explore the JSON header and the sections. Decode must not panic; its
// errors must name the file and wrap exactly one of the five check errors;
// a success must encode again and decode to the same tensors.
func FuzzDecode(f *testing.F) {
	for _, adam := range []bool{true, false} {
		b, err := smallCheckpoint(f, adam).Bytes()
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b, false)
		f.Add(b, true)
		f.Add(b[:len(b)-40], false)
		f.Add(b[:preamble+10], true)
		flip := slices.Clone(b)
		flip[preamble+3] ^= 0x20
		f.Add(flip, true)
	}
	// Shapes whose element count overflows: 2^61 values need 2^64 bytes,
	// which wraps to 0; 2^32 × 2^32 values wrap to 0 values.
	for _, shape := range [][]int{{1 << 61}, {1 << 32, 1 << 32}} {
		c := smallCheckpoint(f, false)
		b, err := c.Bytes()
		if err != nil {
			f.Fatal(err)
		}
		f.Add(withFirstShape(f, b, shape), false)
	}
	f.Add([]byte(checkpoints.Magic), false)
	f.Add([]byte{}, false)

	kinds := []error{checkpoints.ErrMagic, checkpoints.ErrVersion, checkpoints.ErrLength, checkpoints.ErrChecksum, checkpoints.ErrHeader}
	f.Fuzz(func(t *testing.T, b []byte, resealed bool) {
		if resealed {
			b = reseal(b)
		}
		c, err := checkpoints.Decode(b, "fuzz.ckpt")
		if err != nil {
			if c != nil {
				t.Fatalf("Decode returned a checkpoint together with the error %v", err)
			}
			n := 0
			for _, k := range kinds {
				if errors.Is(err, k) {
					n++
				}
			}
			if n != 1 || !strings.HasPrefix(err.Error(), "fuzz.ckpt: ") || strings.Contains(err.Error(), "\n") {
				t.Fatalf("error %q names the file and wraps %d of the check errors, want 1", err, n)
			}
			return
		}
		for _, sec := range [][]model.Tensor{c.Best, c.Last, c.AdamM, c.AdamV} {
			for _, ts := range sec {
				n := big.NewInt(1)
				for _, d := range ts.Shape {
					n.Mul(n, big.NewInt(int64(d)))
				}
				if !n.IsInt64() || n.Int64() != int64(len(ts.Data)) {
					t.Fatalf("tensor %s of shape %v (%v values) holds %d values", ts.Name, ts.Shape, n, len(ts.Data))
				}
			}
		}
		if len(c.Best) == 0 || len(c.Last) != len(c.Best) {
			t.Fatalf("accepted %d best and %d last tensors", len(c.Best), len(c.Last))
		}
		re, err := c.Bytes()
		if err != nil {
			t.Fatalf("Decode accepted a checkpoint that cannot be encoded again: %v", err)
		}
		back, err := checkpoints.Decode(re, "re.ckpt")
		if err != nil {
			t.Fatalf("decoding a re-encoded checkpoint: %v", err)
		}
		for _, pair := range [][2][]model.Tensor{{c.Best, back.Best}, {c.Last, back.Last}, {c.AdamM, back.AdamM}, {c.AdamV, back.AdamV}} {
			if len(pair[0]) != len(pair[1]) {
				t.Fatalf("tensor count changed from %d to %d", len(pair[0]), len(pair[1]))
			}
			for i := range pair[0] {
				a, z := pair[0][i], pair[1][i]
				if a.Name != z.Name || !slices.Equal(a.Shape, z.Shape) || len(a.Data) != len(z.Data) {
					t.Fatalf("tensor %d changed from %s%v to %s%v", i, a.Name, a.Shape, z.Name, z.Shape)
				}
				for j := range a.Data {
					if a.Data[j] != z.Data[j] && (a.Data[j] == a.Data[j] || z.Data[j] == z.Data[j]) {
						t.Fatalf("tensor %s value %d changed from %v to %v", a.Name, j, a.Data[j], z.Data[j])
					}
				}
			}
		}
		// Building the model must fail cleanly or succeed; skip configurations
		// so large that building them would only measure memory.
		small := len(c.Header.Model.Hidden)+len(c.Header.Model.CondHidden) < 8
		for _, h := range append(slices.Clone(c.Header.Model.Hidden), c.Header.Model.CondHidden...) {
			small = small && h < 1<<10
		}
		if small && c.Header.Model.Sites < 1<<8 && c.Header.Model.Fourier < 1<<8 && c.Header.Model.ParamDim < 1<<6 {
			_, _ = c.Model()
			_, _ = c.LastModel()
		}
	})
}

// withFirstShape returns the encoded checkpoint b with the shape of the
// first tensor of the first section replaced in the JSON header, resealed.
func withFirstShape(tb testing.TB, b []byte, shape []int) []byte {
	tb.Helper()
	h := binary.LittleEndian.Uint64(b[12:20])
	var hdr map[string]any
	dec := json.NewDecoder(bytes.NewReader(b[preamble : preamble+int(h)]))
	dec.UseNumber()
	if err := dec.Decode(&hdr); err != nil {
		tb.Fatal(err)
	}
	secs := hdr["sections"].([]any)
	first := secs[0].(map[string]any)["tensors"].([]any)[0].(map[string]any)
	first["shape"] = shape
	nh, err := json.Marshal(hdr)
	if err != nil {
		tb.Fatal(err)
	}
	out := append([]byte(nil), b[:preamble]...)
	binary.LittleEndian.PutUint64(out[12:20], uint64(len(nh)))
	out = append(out, nh...)
	out = append(out, b[preamble+int(h):]...)
	return reseal(out)
}
