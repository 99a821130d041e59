package data_test

import (
	"archive/zip"
	"bytes"
	"encoding/binary"
	"encoding/json"
	"errors"
	"hash/crc32"
	"math"
	"math/big"
	"slices"
	"strconv"
	"strings"
	"testing"

	"tidemark/data"
)

// fuzzDataset returns a small valid dataset: m snapshots of the lattice's
// sites at d parameters, two points with m/2 snapshots each.
func fuzzDataset(f *testing.F, m int, lattice []int, names []string, q int) *data.Dataset {
	f.Helper()
	n := 1
	for _, l := range lattice {
		n *= l
	}
	ds, err := data.New(m, n, names, q, lattice, map[string]any{"generator": "fuzz-seed", "note": "made in FuzzDecode"})
	if err != nil {
		f.Fatal(err)
	}
	for i := range ds.States {
		ds.States[i] = uint8((i*7 + i/3) % q)
	}
	for r := 0; r < m; r++ {
		for j := 0; j < ds.D; j++ {
			ds.Params[r*ds.D+j] = 1.5 + float64(2*r/m) + 0.25*float64(j)
		}
	}
	if err := ds.Validate("seed"); err != nil {
		f.Fatal(err)
	}
	return ds
}

// FuzzDecode feeds arbitrary bytes to the dataset reader. It must never
// panic (Decode turns a panic inside npyio or archive/zip into an error, so
// the target also fails on such an error: it marks a check Decode should
// make itself). A success must be a valid dataset that survives an
// encode/decode round trip unchanged.
func FuzzDecode(f *testing.F) {
	seeds := []*data.Dataset{
		fuzzDataset(f, 4, []int{3}, []string{"T"}, 2),
		fuzzDataset(f, 6, []int{2, 2}, []string{"T", "h"}, 3),
		fuzzDataset(f, 4, []int{1}, []string{"J"}, 256),
	}
	withExtra := fuzzDataset(f, 4, []int{2}, []string{"T"}, 2)
	withExtra.Meta.Extra = map[string]json.RawMessage{"comment": json.RawMessage(`"kept"`)}
	seeds = append(seeds, withExtra)
	for _, ds := range seeds {
		b, err := ds.Bytes()
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b, false)
		f.Add(b, true)
		// Corrupted copies: a flipped byte in the middle, a truncated tail,
		// a damaged zip directory and a damaged first local header.
		mid := slices.Clone(b)
		mid[len(mid)/2] ^= 0x40
		f.Add(mid, false)
		f.Add(b[:len(b)-7], false)
		dir := slices.Clone(b)
		dir[len(dir)-30] ^= 0xff
		f.Add(dir, false)
		loc := slices.Clone(b)
		loc[20] ^= 0x01
		f.Add(loc, false)
	}
	f.Add([]byte{}, false)
	f.Add(hugeClaimArchive(f), false)
	// A lattice whose product overflows int to exactly N = 3:
	// 3·((2^32+1)(2^32−1))² = 3·(2^64−1)² ≡ 3 (mod 2^64).
	wrap := fuzzDataset(f, 4, []int{3}, []string{"T"}, 2)
	wrap.Meta.Lattice = []int{3, 1<<32 + 1, 1<<32 - 1, 1<<32 + 1, 1<<32 - 1}
	if b, err := wrap.Bytes(); err == nil {
		f.Add(b, false)
	}
	f.Add([]byte("PK\x05\x06"+strings.Repeat("\x00", 18)), true)

	f.Fuzz(func(t *testing.T, b []byte, unlabelled bool) {
		opt := data.ReadOptions{Unlabelled: unlabelled}
		ds, err := data.Decode(bytes.NewReader(b), int64(len(b)), "fuzz.npz", opt)
		if err != nil {
			if ds != nil {
				t.Fatalf("Decode returned a dataset together with the error %v", err)
			}
			var ve *data.ValidationError
			if !errors.As(err, &ve) {
				t.Fatalf("error %v (%T) is not a *ValidationError", err, err)
			}
			if strings.Contains(err.Error(), "corrupt content (") {
				t.Fatalf("Decode recovered from a panic: %v", err)
			}
			if !strings.HasPrefix(err.Error(), "fuzz.npz: ") {
				t.Fatalf("error %q does not name the file", err)
			}
			return
		}
		if len(ds.States) != ds.M*ds.N || len(ds.Params) != ds.M*ds.D {
			t.Fatalf("M=%d N=%d D=%d but %d states and %d params", ds.M, ds.N, ds.D, len(ds.States), len(ds.Params))
		}
		// The lattice has N sites, counted without overflow.
		sites := new(big.Int).SetInt64(1)
		for _, l := range ds.Meta.Lattice {
			sites.Mul(sites, big.NewInt(int64(l)))
		}
		if len(ds.Meta.Lattice) == 0 || !sites.IsInt64() || sites.Int64() != int64(ds.N) {
			t.Fatalf("accepted the lattice %v (%v sites) for %d sites", ds.Meta.Lattice, sites, ds.N)
		}
		if !unlabelled {
			if err := ds.Validate("fuzz.npz"); err != nil {
				t.Fatalf("Decode accepted a dataset that Validate rejects: %v", err)
			}
		}
		if ds.D == 0 {
			// An unlabelled dataset cannot be written (Encode writes no
			// params and Write validates with params), so stop here.
			return
		}
		re, err := ds.Bytes()
		if err != nil {
			t.Fatalf("re-encoding a decoded dataset: %v", err)
		}
		back, err := data.Decode(bytes.NewReader(re), int64(len(re)), "re.npz", opt)
		if err != nil {
			t.Fatalf("decoding a re-encoded dataset: %v", err)
		}
		if back.M != ds.M || back.N != ds.N || back.D != ds.D || !bytes.Equal(back.States, ds.States) {
			t.Fatalf("states or shape changed in the round trip")
		}
		for i := range ds.Params {
			if math.Float64bits(back.Params[i]) != math.Float64bits(ds.Params[i]) {
				t.Fatalf("params[%d] changed from %v to %v", i, ds.Params[i], back.Params[i])
			}
		}
		m1, err1 := json.Marshal(ds.Meta)
		m2, err2 := json.Marshal(back.Meta)
		if err1 != nil || err2 != nil || !bytes.Equal(m1, m2) {
			t.Fatalf("meta changed in the round trip: %s (%v) → %s (%v)", m1, err1, m2, err2)
		}
	})
}

// FuzzParseGridSpec feeds arbitrary text to the --grid parser. It must not
// panic; a success must name distinct valid axes whose values are finite,
// whose per-axis counts are what the text asks for, and whose product has
// at most MaxGridPoints points, all returned by Points.
func FuzzParseGridSpec(f *testing.F) {
	for _, s := range []string{
		"T=1.5:3.5:21",
		"T=2.0:2.6:7,Jy=0.5:1.5:11",
		"h=0;0.5;1;2",
		"T = 1 : 2 : 3 , h = 1;2",
		"T=1:1:1",
		"T=3:1:5",
		"T=1e-300:1e300:4",
		"x=-0.1;+2e3;.5",
		"T=1:2",
		"T=1:2:0",
		"T=nan;1",
		"a=1;2,a=3",
		"",
		"=1",
		"T=1:2:1048577",
		"T=0.1234567890123456:1:3",
		"T=-1e308:1e308:3",
		"T=1.00000000000049:1.0000000000005:3",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		spec, err := data.ParseGridSpec(s)
		if err != nil {
			var se *data.SpecError
			if !errors.As(err, &se) {
				t.Fatalf("error %v (%T) is not a *SpecError", err, err)
			}
			if se.Column < 1 || se.Column > len(s)+1 {
				t.Fatalf("error column %d outside the text of %d bytes", se.Column, len(s))
			}
			return
		}
		// The expected count of each axis, read from the text independently
		// of the parser: "start:stop:count" gives count values, a list of
		// values separated by ';' gives one value per field.
		parts := strings.Split(s, ",")
		if len(parts) != len(spec.Axes) {
			t.Fatalf("%d comma-separated parts but %d axes", len(parts), len(spec.Axes))
		}
		total := 1
		seen := map[string]bool{}
		for i, ax := range spec.Axes {
			name, body, _ := strings.Cut(parts[i], "=")
			if ax.Name != strings.TrimSpace(name) || ax.Name == "" || seen[ax.Name] {
				t.Fatalf("axis %d named %q from the text %q (names so far %v)", i, ax.Name, parts[i], seen)
			}
			seen[ax.Name] = true
			want := strings.Count(body, ";") + 1
			if f := strings.Split(body, ":"); len(f) == 3 {
				n, err := strconv.Atoi(strings.TrimSpace(f[2]))
				if err != nil {
					t.Fatalf("accepted a count %q that is not a whole number", f[2])
				}
				want = n
				// The end points are the ones given.
				a, _ := strconv.ParseFloat(strings.TrimSpace(f[0]), 64)
				b, _ := strconv.ParseFloat(strings.TrimSpace(f[1]), 64)
				if ax.Values[0] != a || ax.Values[len(ax.Values)-1] != b {
					t.Fatalf("axis %q runs from %v to %v, the text asks for %v to %v", ax.Name, ax.Values[0], ax.Values[len(ax.Values)-1], a, b)
				}
				// Evenly spaced values run monotonically from a to b.
				for j := 1; j < len(ax.Values); j++ {
					if (b >= a && ax.Values[j] < ax.Values[j-1]) || (b < a && ax.Values[j] > ax.Values[j-1]) {
						t.Fatalf("axis %q values %v are not monotonic from %v to %v", ax.Name, ax.Values, a, b)
					}
				}
			}
			if len(ax.Values) != want {
				t.Fatalf("axis %q has %d values, the text asks for %d", ax.Name, len(ax.Values), want)
			}
			for _, v := range ax.Values {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					t.Fatalf("axis %q has the non-finite value %v", ax.Name, v)
				}
			}
			total *= len(ax.Values)
		}
		if total > data.MaxGridPoints {
			t.Fatalf("accepted %d points, more than MaxGridPoints", total)
		}
		if total <= 1<<14 { // keep each execution fast
			pts := spec.Points()
			if len(pts) != total {
				t.Fatalf("Points returned %d points, the axes make %d", len(pts), total)
			}
			for _, p := range pts {
				if len(p) != len(spec.Axes) {
					t.Fatalf("point %v has %d coordinates, want %d", p, len(p), len(spec.Axes))
				}
			}
		}
	})
}

// hugeClaimArchive returns a small archive whose states entry is stored
// (not deflated) with an NPY header claiming 2^20 × 2^20 sites and a zip
// directory claiming the 2^40 bytes that needs, while holding only a few.
func hugeClaimArchive(t testing.TB) []byte {
	t.Helper()
	npy := func(descr, shape string) []byte {
		dict := "{'descr': '" + descr + "', 'fortran_order': False, 'shape': " + shape + ", }"
		for (10+len(dict)+1)%64 != 0 {
			dict += " "
		}
		dict += "\n"
		return append([]byte{0x93, 'N', 'U', 'M', 'P', 'Y', 1, 0, byte(len(dict)), byte(len(dict) >> 8)}, dict...)
	}
	var b bytes.Buffer
	zw := zip.NewWriter(&b)
	meta := `{"param_names":["T"],"alphabet":2,"lattice":[1048576,1048576]}`
	params := make([]byte, 16)
	binary.LittleEndian.PutUint64(params[8:], math.Float64bits(1))
	for _, e := range []struct {
		name  string
		body  []byte
		claim uint64
	}{
		{"meta.npy", append(npy("|u1", "("+strconv.Itoa(len(meta))+",)"), meta...), 0},
		{"params.npy", append(npy("<f8", "(2, 1)"), params...), 0},
		{"states.npy", append(npy("|u1", "(1048576, 1048576)"), 0, 1, 0, 1), 1<<40 + 128},
	} {
		claim := e.claim
		if claim == 0 {
			claim = uint64(len(e.body))
		}
		w, err := zw.CreateRaw(&zip.FileHeader{Name: e.name, Method: zip.Store, CRC32: crc32.ChecksumIEEE(e.body),
			CompressedSize64: uint64(len(e.body)), UncompressedSize64: claim})
		if err != nil {
			t.Fatal(err)
		}
		w.Write(e.body)
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// TestDecodeHugeClaimedSize checks that a few hundred bytes claiming a
// terabyte of states are refused before the reader allocates the terabyte
// (which ends the process with "out of memory", beyond any recover).
func TestDecodeHugeClaimedSize(t *testing.T) {
	b := hugeClaimArchive(t)
	_, err := data.Decode(bytes.NewReader(b), int64(len(b)), "huge.npz", data.ReadOptions{})
	if err == nil || !strings.Contains(err.Error(), "huge.npz: states: ") {
		t.Fatalf("error %v, want one naming huge.npz and the states array", err)
	}
	t.Log(err)
}
