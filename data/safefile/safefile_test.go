package safefile

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func names(t *testing.T, dir string) string {
	t.Helper()
	ents, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var s []string
	for _, e := range ents {
		s = append(s, e.Name())
	}
	return strings.Join(s, ",")
}

func TestWriteBytes(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "a.txt")
	if err := WriteBytes(p, false, []byte("one")); err != nil {
		t.Fatal(err)
	}
	if err := WriteBytes(p, false, []byte("two")); !errors.Is(err, ErrExists) {
		t.Fatalf("second write without force: %v", err)
	}
	if b, _ := os.ReadFile(p); string(b) != "one" {
		t.Fatalf("content %q after refused overwrite", b)
	}
	if err := WriteBytes(p, true, []byte("three")); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(p); string(b) != "three" {
		t.Fatalf("content %q after forced overwrite", b)
	}
	if got := names(t, dir); got != "a.txt" {
		t.Fatalf("folder holds %s", got)
	}
}

func TestWriteFailureKeepsOldFile(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "a.txt")
	os.WriteFile(p, []byte("old"), 0o644)
	boom := errors.New("boom")
	err := Write(p, true, func(w io.Writer) error {
		io.WriteString(w, "partial")
		return boom
	})
	if !errors.Is(err, boom) || !strings.Contains(err.Error(), p) {
		t.Fatalf("error %v", err)
	}
	if b, _ := os.ReadFile(p); string(b) != "old" {
		t.Fatalf("old file now holds %q", b)
	}
	if got := names(t, dir); got != "a.txt" {
		t.Fatalf("folder holds %s (a temporary file was left)", got)
	}
}

func TestCheckWritable(t *testing.T) {
	dir := t.TempDir()
	file := filepath.Join(dir, "f")
	os.WriteFile(file, nil, 0o644)
	cases := []struct {
		path  string
		force bool
		want  string // "" for no error
	}{
		{filepath.Join(dir, "new"), false, ""},
		{file, false, "already exists"},
		{file, true, ""},
		{"", false, "empty"},
		{filepath.Join(dir, "missing", "x"), false, "output folder"},
		{filepath.Join(file, "x"), true, "not a folder"},
	}
	for _, c := range cases {
		err := CheckWritable(c.path, c.force)
		if (c.want == "") != (err == nil) || (err != nil && !strings.Contains(err.Error(), c.want)) {
			t.Errorf("CheckWritable(%q, %v) = %v, want %q", c.path, c.force, err, c.want)
		}
	}
}

func TestSamePath(t *testing.T) {
	dir := t.TempDir()
	a := filepath.Join(dir, "a")
	if err := os.WriteFile(a, []byte("x"), 0o644); err != nil {
		t.Fatal(err)
	}
	t.Chdir(dir)
	for _, tc := range []struct {
		x, y string
		want bool
	}{{a, "a", true}, {a, filepath.Join(dir, ".", "a"), true}, {"b", filepath.Join(dir, "b"), true}, {a, "b", false}} {
		if got := SamePath(tc.x, tc.y); got != tc.want {
			t.Errorf("SamePath(%q, %q) = %v, want %v", tc.x, tc.y, got, tc.want)
		}
	}
}
