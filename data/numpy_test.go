package data

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// python returns /usr/bin/python3 when it can import numpy, or skips.
func python(t *testing.T) string {
	t.Helper()
	const py = "/usr/bin/python3"
	if _, err := os.Stat(py); err != nil {
		t.Skip("skipping NumPy interoperability: /usr/bin/python3 not found (apt-get install python3-numpy)")
	}
	if out, err := exec.Command(py, "-c", "import numpy").CombinedOutput(); err != nil {
		t.Skipf("skipping NumPy interoperability: numpy not importable in %s (apt-get install python3-numpy): %s", py, strings.TrimSpace(string(out)))
	}
	return py
}

// TestNumPyLoadsOurFiles writes a dataset and checks shapes, dtypes, values
// and meta as NumPy sees them.
func TestNumPyLoadsOurFiles(t *testing.T) {
	py := python(t)
	ds := randomDataset(t, 5, []int{2, 3}, 3)
	path := filepath.Join(t.TempDir(), "ours.npz")
	if err := ds.Write(path, false); err != nil {
		t.Fatal(err)
	}
	// Python prints a checksum-free description; Go prints the same from ds.
	script := `
import sys, json, numpy as np
f = np.load(sys.argv[1])
s, p = f["states"], f["params"]
m = json.loads(f["meta"].tobytes())
print(sorted(f.files))
print(s.dtype, s.shape, p.dtype, p.shape, f["meta"].dtype)
print(int(s.sum()), int((s * np.arange(s.shape[1])).sum()), repr(float(p[:, 0].sum())), repr(float(p[:, 1].sum())))
print(m["param_names"], m["alphabet"], m["lattice"], m["source"]["generator"])
`
	out, err := exec.Command(py, "-c", script, path).CombinedOutput()
	if err != nil {
		t.Fatalf("numpy failed: %v\n%s", err, out)
	}
	sum, wsum := 0, 0
	for i, v := range ds.States {
		sum += int(v)
		wsum += int(v) * (i % ds.N)
	}
	var pT, ph float64
	for i := 0; i < ds.M; i++ {
		pT += ds.Params[2*i]
		ph += ds.Params[2*i+1]
	}
	want := strings.Join([]string{
		"['meta', 'params', 'states']",
		"uint8 (30, 6) float64 (30, 2) uint8",
		itoa(sum) + " " + itoa(wsum) + " " + pyFloat(pT) + " " + pyFloat(ph),
		"['T', 'h'] 3 [2, 3] test",
	}, "\n")
	if got := strings.TrimSpace(string(out)); got != want {
		t.Fatalf("numpy sees\n%s\nwant\n%s", got, want)
	}
}

// TestWeLoadNumPyFiles reads files made by np.savez and np.savez_compressed,
// including a 1-D params array and a bool states array.
func TestWeLoadNumPyFiles(t *testing.T) {
	py := python(t)
	dir := t.TempDir()
	script := `
import sys, json, numpy as np
d = sys.argv[1]
s = (np.arange(40).reshape(10, 4) % 3).astype(np.uint8)
p = np.repeat(np.array([[1.5, 0.0], [2.5, 0.25]]), 5, axis=0)
meta = np.frombuffer(json.dumps({"param_names": ["T", "h"], "alphabet": 3, "lattice": [2, 2],
    "source": {"generator": "numpy"}, "note": "kept"}).encode(), dtype=np.uint8)
np.savez(d + "/plain.npz", states=s, params=p, meta=meta)
np.savez_compressed(d + "/compressed.npz", states=s, params=p, meta=meta)
meta1 = np.frombuffer(json.dumps({"param_names": ["T"], "alphabet": 2}).encode(), dtype=np.uint8)
np.savez_compressed(d + "/onedim.npz", states=(s % 2).astype(bool), params=p[:, 0].copy(), meta=meta1)
`
	if out, err := exec.Command(py, "-c", script, dir).CombinedOutput(); err != nil {
		t.Fatalf("numpy failed: %v\n%s", err, out)
	}
	for _, name := range []string{"plain.npz", "compressed.npz"} {
		ds, err := Read(filepath.Join(dir, name))
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if ds.M != 10 || ds.N != 4 || ds.D != 2 || ds.Meta.Alphabet != 3 || ds.Meta.Generator() != "numpy" {
			t.Fatalf("%s: M=%d N=%d D=%d q=%d", name, ds.M, ds.N, ds.D, ds.Meta.Alphabet)
		}
		for i, v := range ds.States {
			if int(v) != i%3 {
				t.Fatalf("%s: states[%d] = %d, want %d", name, i, v, i%3)
			}
		}
		if ds.Params[0] != 1.5 || ds.Params[1] != 0 || ds.Params[18] != 2.5 || ds.Params[19] != 0.25 {
			t.Fatalf("%s: params %v", name, ds.Params)
		}
		if string(ds.Meta.Extra["note"]) != `"kept"` {
			t.Fatalf("%s: extra meta %v", name, ds.Meta.Extra)
		}
		g := NewGrid(ds)
		if g.K() != 2 || len(g.Index[0]) != 5 {
			t.Fatalf("%s: grid K=%d", name, g.K())
		}
	}
	ds, err := Read(filepath.Join(dir, "onedim.npz"))
	if err != nil {
		t.Fatal(err)
	}
	if ds.D != 1 || ds.Meta.Lattice[0] != 4 || !bytes.Equal(ds.States[:4], []byte{0, 1, 0, 0}) {
		t.Fatalf("onedim: D=%d lattice=%v states=%v", ds.D, ds.Meta.Lattice, ds.States[:4])
	}
}

func itoa(i int) string { return strconv.Itoa(i) }

// pyFloat formats x as Python's repr does for moderate values.
func pyFloat(x float64) string {
	s := strconv.FormatFloat(x, 'g', -1, 64)
	if !strings.ContainsAny(s, ".eIN") {
		s += ".0"
	}
	return s
}
