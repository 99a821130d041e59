package main

import (
	"encoding/json"
	"errors"
	"io"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"tidemark/data"
)

// scatteredDataset writes a 2-D dataset whose points are not a product grid,
// with 2, 3 and 5 samples at its three points.
func scatteredDataset(t *testing.T) string {
	t.Helper()
	ds, err := data.New(10, 6, []string{"T", "h"}, 3, []int{2, 3}, map[string]string{"generator": "test"})
	if err != nil {
		t.Fatal(err)
	}
	pts := [][2]float64{{1, 0}, {1, 0}, {2, 1}, {2, 1}, {2, 1}, {3, 0}, {3, 0}, {3, 0}, {3, 0}, {3, 0}}
	for i, p := range pts {
		ds.Params[2*i], ds.Params[2*i+1] = p[0], p[1]
	}
	path := filepath.Join(t.TempDir(), "s.npz")
	if err := ds.Write(path, false); err != nil {
		t.Fatal(err)
	}
	return path
}

func TestInspectJSON(t *testing.T) {
	path := scatteredDataset(t)
	out, err := execTidemark(t, "inspect", path, "--json")
	if err != nil {
		t.Fatal(err)
	}
	var r map[string]any
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, out)
	}
	st, _ := os.Stat(path)
	want := map[string]any{
		"kind": "dataset", "file": path, "file_bytes": float64(st.Size()),
		"samples": 10.0, "sites": 6.0, "alphabet": 3.0, "lattice": []any{2.0, 3.0},
		"params": []any{
			map[string]any{"name": "T", "min": 1.0, "max": 3.0, "values": 3.0},
			map[string]any{"name": "h", "min": 0.0, "max": 1.0, "values": 2.0},
		},
		"grid":              map[string]any{"points": 3.0, "shape": []any{3.0, 2.0}, "product": false},
		"samples_per_point": map[string]any{"min": 2.0, "median": 3.0, "max": 5.0},
		"generator":         "test",
		"source":            map[string]any{"generator": "test"},
	}
	delete(r, "created")
	if !reflect.DeepEqual(r, want) {
		got, _ := json.Marshal(r)
		exp, _ := json.Marshal(want)
		t.Fatalf("inspect --json\n got %s\nwant %s", got, exp)
	}
}

func TestInspectText(t *testing.T) {
	out, err := execTidemark(t, "inspect", "../../testdata/tiny.npz")
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"samples            12", "lattice 2x2", "T from 1 to 3, 3 values", "3 points (T: 3)", "min 4, median 4, max 4", "source             imported"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	out, err = execTidemark(t, "inspect", scatteredDataset(t))
	if err != nil || !strings.Contains(out, "scattered points") || !strings.Contains(out, "median 3") {
		t.Errorf("scattered: %v\n%s", err, out)
	}
}

func TestInspectDispatch(t *testing.T) {
	dir := t.TempDir()
	other := filepath.Join(dir, "x.ckpt")
	os.WriteFile(other, []byte("TMCK...."), 0o644)
	if _, err := execTidemark(t, "inspect", other); err == nil || !strings.Contains(err.Error(), "expected a .npz dataset or a .ckpt checkpoint") {
		t.Fatalf("unknown file: %v", err)
	}

	saved := inspectHooks
	defer func() { inspectHooks = saved }()
	var seen []string
	inspectHooks = []func(string, bool, io.Writer) (bool, error){
		func(p string, asJSON bool, w io.Writer) (bool, error) {
			seen = append(seen, "first")
			return false, nil
		},
		func(p string, asJSON bool, w io.Writer) (bool, error) {
			seen = append(seen, "second")
			io.WriteString(w, "a checkpoint\n")
			return true, nil
		},
	}
	out, err := execTidemark(t, "inspect", other)
	if err != nil || out != "a checkpoint\n" || strings.Join(seen, ",") != "first,second" {
		t.Fatalf("hooks: out %q err %v seen %v", out, err, seen)
	}
	// A dataset never reaches the hooks.
	seen = nil
	if _, err := execTidemark(t, "inspect", "../../testdata/tiny.npz"); err != nil || seen != nil {
		t.Fatalf("dataset went to hooks: %v %v", err, seen)
	}
	broken := errors.New("bad checksum")
	inspectHooks = []func(string, bool, io.Writer) (bool, error){
		func(string, bool, io.Writer) (bool, error) { return true, broken },
	}
	if _, err := execTidemark(t, "inspect", other); !errors.Is(err, broken) {
		t.Fatalf("hook error: %v", err)
	}
}

func TestInspectBadDataset(t *testing.T) {
	p := filepath.Join(t.TempDir(), "trunc.npz")
	b, _ := os.ReadFile("../../testdata/tiny.npz")
	os.WriteFile(p, b[:len(b)-30], 0o644)
	_, err := execTidemark(t, "inspect", p)
	if err == nil || !strings.Contains(err.Error(), p+": archive: expected") {
		t.Fatalf("truncated: %v", err)
	}
}
