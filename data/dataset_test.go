package data

import (
	"bytes"
	"encoding/json"
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"tidemark/data/safefile"
)

// TestMetaKeepsUnknownKeys reads a file with keys this version does not
// know, rewrites it, and checks they survive.
func TestMetaKeepsUnknownKeys(t *testing.T) {
	e := goodEntries()
	e["meta"] = metaArr(`{"param_names":["T"],"alphabet":2,"lattice":[4],"source":{"generator":"x","seed":7},"created":"2026-01-02T03:04:05Z","units":{"T":"J/k_B"},"comment":"run 3"}`)
	b := npzOf(t, false, e)
	dir := t.TempDir()
	in := filepath.Join(dir, "in.npz")
	if err := os.WriteFile(in, b, 0o644); err != nil {
		t.Fatal(err)
	}
	ds, err := Read(in)
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out.npz")
	if err := ds.Write(out, false); err != nil {
		t.Fatal(err)
	}
	again, err := Read(out)
	if err != nil {
		t.Fatal(err)
	}
	raw, _ := json.Marshal(again.Meta)
	var m map[string]any
	json.Unmarshal(raw, &m)
	if m["comment"] != "run 3" || m["units"].(map[string]any)["T"] != "J/k_B" {
		t.Fatalf("unknown keys lost: %s", raw)
	}
	if m["created"] != "2026-01-02T03:04:05Z" || again.Meta.Generator() != "x" || !strings.Contains(string(again.Meta.Source), `"seed":7`) {
		t.Fatalf("known keys changed: %s", raw)
	}
}

func TestMetaBadTypes(t *testing.T) {
	for _, s := range []string{`{"alphabet":"two"}`, `{"lattice":[1.5]}`, `{"param_names":"T"}`, `{"created":5}`} {
		var m Meta
		if err := json.Unmarshal([]byte(s), &m); err == nil {
			t.Errorf("%s accepted", s)
		}
	}
}

func TestWriteRefusesOverwrite(t *testing.T) {
	ds := randomDataset(t, 4, []int{4}, 2)
	dir := t.TempDir()
	path := filepath.Join(dir, "d.npz")
	if err := os.WriteFile(path, []byte("precious"), 0o644); err != nil {
		t.Fatal(err)
	}
	err := ds.Write(path, false)
	if !errors.Is(err, safefile.ErrExists) {
		t.Fatalf("overwrite without force: %v", err)
	}
	if b, _ := os.ReadFile(path); string(b) != "precious" {
		t.Fatal("existing file changed")
	}
	if err := ds.Write(path, true); err != nil {
		t.Fatalf("overwrite with force: %v", err)
	}
	if _, err := Read(path); err != nil {
		t.Fatal(err)
	}
	assertOnly(t, dir, "d.npz")
}

func TestWriteFailureLeavesNothing(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "out.npz")
	failing := errors.New("disk on fire")
	err := safefile.Write(path, false, func(w io.Writer) error {
		w.Write([]byte("half"))
		return failing
	})
	if !errors.Is(err, failing) {
		t.Fatalf("error %v", err)
	}
	assertOnly(t, dir)

	// An invalid dataset is refused before any file is made.
	ds := randomDataset(t, 4, []int{4}, 2)
	ds.States[3] = 9
	if err := ds.Write(path, false); err == nil {
		t.Fatal("invalid dataset written")
	}
	assertOnly(t, dir)

	// A missing folder is reported, not created.
	if err := ds.Write(filepath.Join(dir, "no", "x.npz"), false); err == nil {
		t.Fatal("write into a missing folder succeeded")
	}
}

func assertOnly(t *testing.T, dir string, names ...string) {
	t.Helper()
	ents, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, e := range ents {
		got = append(got, e.Name())
	}
	if strings.Join(got, ",") != strings.Join(names, ",") {
		t.Fatalf("folder holds %v, want %v", got, names)
	}
}

func TestValidateInMemory(t *testing.T) {
	ds := randomDataset(t, 4, []int{2, 2}, 2)
	if err := ds.Validate("mem"); err != nil {
		t.Fatal(err)
	}
	ds.Meta.ParamNames = []string{"T", "T"}
	if err := ds.Validate("mem"); err == nil || !strings.Contains(err.Error(), "distinct") {
		t.Fatalf("duplicate names: %v", err)
	}
}

// TestOnePointDatasetIsValid checks that a dataset at a single grid point
// (snapshots from one experiment, say) is valid and reads back: score and
// check work on it, and only the commands that compare points refuse it.
func TestOnePointDatasetIsValid(t *testing.T) {
	ds, err := New(4, 2, []string{"T"}, 2, []int{2}, map[string]any{"generator": "test"})
	if err != nil {
		t.Fatal(err)
	}
	for i := range ds.Params {
		ds.Params[i] = 2.3
	}
	b, err := ds.Bytes()
	if err != nil {
		t.Fatal(err)
	}
	got, err := Decode(bytes.NewReader(b), int64(len(b)), "one.npz", ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if g := NewGrid(got); g.K() != 1 || len(g.Index[0]) != 4 {
		t.Errorf("grid of %d points, want 1 with 4 snapshots", g.K())
	}
}
