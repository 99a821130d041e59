package data

import (
	"archive/zip"
	"bytes"
	"strings"
	"testing"

	"codeberg.org/sbinet/npyio/npz"
)

// TestWriteNPZReadByNpyio writes one array of each kind with WriteNPZ and
// reads it back with npyio, an independent reader of the NumPy format.
func TestWriteNPZReadByNpyio(t *testing.T) {
	for _, method := range []uint16{zip.Deflate, zip.Store} {
		js, err := JSONArray("meta", map[string]any{"units": "nats"})
		if err != nil {
			t.Fatal(err)
		}
		var b bytes.Buffer
		err = WriteNPZ(&b, method,
			Float64Array("f", []float64{1.5, -2, 3, 4.25, 5, 6}, 2, 3),
			Int64Array("i", []int{7, -8, 1 << 40}),
			Uint8Array("u", []uint8{0, 1, 255}, 3),
			js)
		if err != nil {
			t.Fatal(err)
		}
		r, err := npz.NewReader(bytes.NewReader(b.Bytes()), int64(b.Len()))
		if err != nil {
			t.Fatal(err)
		}
		var f []float64
		if err := r.Read("f.npy", &f); err != nil || len(f) != 6 || f[3] != 4.25 {
			t.Errorf("method %d: float64 array %v, %v", method, f, err)
		}
		if h := r.Header("f.npy"); h == nil || len(h.Descr.Shape) != 2 || h.Descr.Shape[0] != 2 || h.Descr.Shape[1] != 3 {
			t.Errorf("method %d: float64 header %+v", method, h)
		}
		var i []int64
		if err := r.Read("i.npy", &i); err != nil || len(i) != 3 || i[1] != -8 || i[2] != 1<<40 {
			t.Errorf("method %d: int64 array %v, %v", method, i, err)
		}
		var u []uint8
		if err := r.Read("meta.npy", &u); err != nil || string(u) != `{"units":"nats"}` {
			t.Errorf("method %d: JSON array %q, %v", method, u, err)
		}
	}
}

func TestWriteNPZRefusesTwoArraysOfOneName(t *testing.T) {
	var b bytes.Buffer
	err := WriteNPZ(&b, zip.Store, Int64Array("a", []int{1}), Int64Array("a", []int{2}))
	if err == nil || !strings.Contains(err.Error(), `"a"`) {
		t.Errorf("two arrays named a: error %v", err)
	}
}

// TestWriteNPZFile writes a file with its meta and refuses to overwrite it
// without force.
func TestWriteNPZFile(t *testing.T) {
	path := t.TempDir() + "/a.npz"
	if err := WriteNPZFile(path, false, map[string]any{"units": "nats"}, Int64Array("n", []int{3})); err != nil {
		t.Fatal(err)
	}
	r, err := npz.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	var meta []uint8
	if err := r.Read("meta.npy", &meta); err != nil || string(meta) != `{"units":"nats"}` {
		t.Errorf("meta %q, %v", meta, err)
	}
	if err := WriteNPZFile(path, false, nil); err == nil {
		t.Error("an existing file was overwritten without force")
	}
}
