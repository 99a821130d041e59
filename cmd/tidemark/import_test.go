package main

import (
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"tidemark/data"
)

func TestImportCommand(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "tiny.npz")
	msg, err := execTidemark(t, "import", "../../testdata/tiny.csv", "--params", "T", "--lattice", "2x2", "-o", out)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(msg, "12 snapshots of 4 sites") || !strings.Contains(msg, "3 grid points") {
		t.Errorf("summary %q", msg)
	}
	ds, err := data.Read(out)
	if err != nil {
		t.Fatal(err)
	}
	if ds.M != 12 || ds.N != 4 || !reflect.DeepEqual(ds.Meta.Lattice, []int{2, 2}) || ds.Meta.Generator() != "imported" {
		t.Fatalf("M=%d N=%d lattice %v gen %q", ds.M, ds.N, ds.Meta.Lattice, ds.Meta.Generator())
	}
	// The first data line of tiny.csv is "1,1,1,1,1".
	if ds.Params[0] != 1 || string(ds.States[:4]) != "\x01\x01\x01\x01" {
		t.Fatalf("first row %v %v", ds.Params[0], ds.States[:4])
	}

	// No overwrite without --force, and the file is untouched.
	before, _ := os.ReadFile(out)
	if _, err := execTidemark(t, "import", "../../testdata/tiny.csv", "--params", "T", "-o", out); err == nil || !strings.Contains(err.Error(), "already exists") {
		t.Fatalf("overwrite without --force: %v", err)
	}
	if after, _ := os.ReadFile(out); string(after) != string(before) {
		t.Fatal("output changed without --force")
	}
	if _, err := execTidemark(t, "import", "../../testdata/tiny.csv", "--params", "T", "-o", out, "--force"); err != nil {
		t.Fatalf("--force: %v", err)
	}
}

func TestImportErrors(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "bad.txt")
	os.WriteFile(bad, []byte("1 0 1\n1 0 7\n2 0 0\n2 1 1\n"), 0o644)
	cases := []struct {
		args []string
		want string
	}{
		{[]string{bad, "--params", "T", "--alphabet", "2"}, "line 2, column 3"},
		{[]string{bad, "--params", "T", "--lattice", "3x1"}, "has 3 sites"},
		{[]string{bad, "--params", "T", "--lattice", "2xq"}, "--lattice"},
		{[]string{bad, "--params", "T,,h"}, "--params"},
		{[]string{bad, "--params", "T", "--spins", "01"}, "--spins"},
		{[]string{filepath.Join(dir, "none.txt"), "--params", "T"}, "cannot open"},
	}
	for _, c := range cases {
		out := filepath.Join(dir, "out.npz")
		_, err := execTidemark(t, append([]string{"import", "-o", out}, c.args...)...)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%v: error %v, want %q", c.args, err, c.want)
		}
		if _, serr := os.Stat(out); serr == nil {
			t.Errorf("%v: an output file was left behind", c.args)
		}
	}
}
