package checkpoints

import (
	"context"
	"encoding/binary"
	"errors"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"tidemark/data"
	"tidemark/model"
)

func testCheckpoint(t *testing.T) *Checkpoint {
	t.Helper()
	cfg := model.DefaultConfig(9, 2, 1, []float64{1}, []float64{3})
	cfg.Hidden = []int{8}
	cfg.CondHidden = []int{4}
	m, err := model.New(cfg, 7)
	if err != nil {
		t.Fatal(err)
	}
	c := &Checkpoint{
		Header: Header{
			Software:   "test",
			Model:      cfg,
			ParamNames: []string{"T"},
			Alphabet:   2,
			Lattice:    []int{3, 3},
			HeldOut:    [][]float64{{2.2}},
			Metrics:    []EpochMetrics{{Epoch: 1, TrainBitsPerSite: 0.9, ValBitsPerSite: 0.95, SamplesPerS: 1000, Seconds: 0.5, LR: 1e-3}},
			BestEpoch:  1,
			Optimizer:  OptimizerState{Method: "adam", Step: 10, LR: 1e-3, Epoch: 1},
		},
		Best: cloneTensors(m.Weights),
		Last: cloneTensors(m.Weights),
	}
	for _, ts := range c.Last {
		for i := range ts.Data {
			ts.Data[i] += 0.25
		}
	}
	c.AdamM = cloneTensors(m.Weights)
	c.AdamV = cloneTensors(m.Weights)
	c.Average = cloneTensors(m.Weights)
	for _, ts := range c.Average {
		for i := range ts.Data {
			ts.Data[i] -= 0.125
		}
	}
	return c
}

func TestRoundTrip(t *testing.T) {
	c := testCheckpoint(t)
	path := filepath.Join(t.TempDir(), "a.ckpt")
	if err := c.Save(path, false); err != nil {
		t.Fatal(err)
	}
	if err := c.Save(path, false); err == nil {
		t.Fatal("second Save without force overwrote the file")
	}
	got, err := Load(path)
	if err != nil {
		t.Fatal(err)
	}
	for _, pair := range [][2][]model.Tensor{{c.Best, got.Best}, {c.Last, got.Last}, {c.AdamM, got.AdamM}, {c.AdamV, got.AdamV}, {c.Average, got.Average}} {
		if len(pair[0]) != len(pair[1]) {
			t.Fatalf("tensor count %d, want %d", len(pair[1]), len(pair[0]))
		}
		for i := range pair[0] {
			a, b := pair[0][i], pair[1][i]
			if a.Name != b.Name || !slices.Equal(a.Shape, b.Shape) || !slices.Equal(a.Data, b.Data) {
				t.Fatalf("tensor %s differs after the round trip", a.Name)
			}
		}
	}
	if got.Header.BestEpoch != 1 || got.Header.Metrics[0].ValBitsPerSite != 0.95 || got.Header.Optimizer.Step != 10 {
		t.Fatalf("header differs after the round trip: %+v", got.Header)
	}
	m, err := got.Model()
	if err != nil {
		t.Fatal(err)
	}
	if m.NumParams() != c.NumParams() {
		t.Fatalf("NumParams %d, want %d", m.NumParams(), c.NumParams())
	}
}

func TestLoadFailures(t *testing.T) {
	good, err := testCheckpoint(t).Bytes()
	if err != nil {
		t.Fatal(err)
	}
	mod := func(f func(b []byte) []byte) []byte { return f(slices.Clone(good)) }
	cases := []struct {
		name string
		b    []byte
		want error
		text string
	}{
		{"bad magic", mod(func(b []byte) []byte { b[0] = 'X'; return b }), ErrMagic, "bad magic"},
		{"not a checkpoint", []byte("PK\x03\x04 a zip file"), ErrMagic, "bad magic"},
		{"empty", nil, ErrMagic, "bad magic"},
		{"newer version", mod(func(b []byte) []byte { binary.LittleEndian.PutUint32(b[8:], Version+1); return b }), ErrVersion, "newer tidemark"},
		{"version zero", mod(func(b []byte) []byte { binary.LittleEndian.PutUint32(b[8:], 0); return b }), ErrVersion, "version"},
		{"truncated", good[:len(good)-100], ErrLength, "length"},
		{"truncated to preamble", good[:20], ErrLength, "length"},
		{"extended", append(slices.Clone(good), 0), ErrLength, "length"},
		{"flipped payload byte", mod(func(b []byte) []byte { b[len(b)-200] ^= 0x10; return b }), ErrChecksum, "checksum"},
		{"flipped header byte", mod(func(b []byte) []byte { b[preambleLen+5] ^= 0x01; return b }), ErrChecksum, "checksum"},
		{"flipped checksum byte", mod(func(b []byte) []byte { b[len(b)-1] ^= 0x01; return b }), ErrChecksum, "checksum"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Decode(tc.b, "x.ckpt")
			if !errors.Is(err, tc.want) {
				t.Fatalf("error %v, want %v", err, tc.want)
			}
			if !strings.Contains(err.Error(), tc.text) || !strings.HasPrefix(err.Error(), "x.ckpt: ") {
				t.Fatalf("error %q does not name the file and %q", err, tc.text)
			}
		})
	}
	if _, err := Load(filepath.Join(t.TempDir(), "missing.ckpt")); err == nil || !strings.Contains(err.Error(), "missing.ckpt") {
		t.Fatalf("missing file: %v", err)
	}
}

func TestCheckDataset(t *testing.T) {
	c := testCheckpoint(t)
	mk := func(n int, names []string, q int, lattice []int) *data.Dataset {
		ds, err := data.New(4, n, names, q, lattice, map[string]string{"generator": "test"})
		if err != nil {
			t.Fatal(err)
		}
		return ds
	}
	cases := []struct {
		name string
		ds   *data.Dataset
		want string // "" = accepted
	}{
		{"match", mk(9, []string{"T"}, 2, []int{3, 3}), ""},
		{"sites", mk(16, []string{"T"}, 2, []int{4, 4}), "9 sites, the dataset 16"},
		{"alphabet", mk(9, []string{"T"}, 3, []int{3, 3}), "alphabet is 2 values per site, the dataset's 3"},
		{"lattice", mk(9, []string{"T"}, 2, []int{9}), "lattice is [3 3], the dataset's [9]"},
		{"param names", mk(9, []string{"h"}, 2, []int{3, 3}), `parameter names are ["T"], the dataset's ["h"]`},
		{"param count", mk(9, []string{"T", "h"}, 2, []int{3, 3}), "parameter names"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			err := c.CheckDataset(tc.ds)
			if tc.want == "" {
				if err != nil {
					t.Fatal(err)
				}
				return
			}
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("error %v, want one containing %q", err, tc.want)
			}
		})
	}
}

func TestFingerprint(t *testing.T) {
	ds, err := data.New(3, 2, []string{"T"}, 2, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	copy(ds.Params, []float64{1, 2, 3})
	a := Fingerprint(ds)
	ds.Params[2] = 3.0000001
	b := Fingerprint(ds)
	ds.Params[2] = 3
	ds.States[5] = 1
	c := Fingerprint(ds)
	if a == b || a == c || len(a) != 64 {
		t.Fatalf("fingerprints %s %s %s should differ and be 64 hex digits", a, b, c)
	}
	// SHA-256 of 6 zero bytes followed by float64 1, 2, 3 little-endian,
	// computed independently with Python's hashlib:
	// hashlib.sha256(bytes(6)+struct.pack('<3d',1,2,3)).hexdigest().
	const want = "56bb6ea48d4b17b256b315972eb774a2783a8ecc68dcf4a503e63ef92ba581b3"
	if a != want {
		t.Fatalf("fingerprint %s, want %s", a, want)
	}
}

func cloneTensors(ts []model.Tensor) []model.Tensor {
	out := make([]model.Tensor, len(ts))
	for i, t := range ts {
		out[i] = model.Tensor{Name: t.Name, Shape: slices.Clone(t.Shape), Data: slices.Clone(t.Data)}
	}
	return out
}

// The fingerprint of a dataset read block by block from its file is that of
// the same dataset in memory.
func TestFingerprintBlocks(t *testing.T) {
	ds, err := data.New(20000, 3, []string{"T"}, 2, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	for i := range ds.States {
		ds.States[i] = uint8(i * 7 % 5 % 2)
	}
	for i := range ds.Params {
		ds.Params[i] = float64(i%4) / 3
	}
	path := filepath.Join(t.TempDir(), "d.npz")
	if err := ds.Write(path, false); err != nil {
		t.Fatal(err)
	}
	head, err := data.ReadHead(path, data.ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	want := Fingerprint(ds)
	for _, d := range []*data.Dataset{ds, head} {
		got, err := FingerprintBlocks(context.Background(), d)
		if err != nil || got != want {
			t.Errorf("in file %v: %s, %v; want %s", d.InFile(), got, err, want)
		}
	}
}
