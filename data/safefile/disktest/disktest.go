// Package disktest gives tests a full disk and a read-only folder: a small
// tmpfs mounted for the test, and the same remounted read-only (root writes
// through permission bits, so chmod alone proves nothing as root). Tests
// skip, saying why, where mounting is not possible.
package disktest

import (
	"bytes"
	"os"
	"os/exec"
	"slices"
	"testing"
)

// Small mounts a tmpfs of 64 KiB on a fresh folder and unmounts it when the
// test ends, failed or not. It skips the test, saying why, where mounting is
// not possible (not root, or no mount permission).
func Small(t testing.TB) string {
	t.Helper()
	if os.Geteuid() != 0 {
		t.Skip("skipped: mounting a small tmpfs needs root; full-disk and read-only behaviour is untested here")
	}
	dir := t.TempDir()
	if out, err := exec.Command("mount", "-t", "tmpfs", "-o", "size=64k", "tmpfs", dir).CombinedOutput(); err != nil {
		t.Skipf("skipped: cannot mount a tmpfs (%v: %s); full-disk behaviour is untested here", err, bytes.TrimSpace(out))
	}
	t.Cleanup(func() {
		if out, err := exec.Command("umount", dir).CombinedOutput(); err != nil {
			// A busy mount is detached lazily so the folder can go.
			t.Logf("umount %s: %v: %s; detaching lazily", dir, err, out)
			exec.Command("umount", "-l", dir).Run()
		}
	})
	return dir
}

// ReadOnly returns a folder and a function that makes it read-only, to be
// called once the earlier files are written. As root the folder is a small
// tmpfs remounted read-only; otherwise it is chmod 0555 until the test ends.
func ReadOnly(t testing.TB) (dir string, freeze func()) {
	t.Helper()
	if os.Geteuid() == 0 {
		dir = Small(t)
		return dir, func() {
			if out, err := exec.Command("mount", "-o", "remount,ro", dir).CombinedOutput(); err != nil {
				t.Skipf("skipped: cannot remount the tmpfs read-only (%v: %s)", err, bytes.TrimSpace(out))
			}
		}
	}
	dir = t.TempDir()
	return dir, func() {
		if err := os.Chmod(dir, 0o555); err != nil {
			t.Fatal(err)
		}
		t.Cleanup(func() { os.Chmod(dir, 0o755) })
	}
}

// OnlyFiles fails the test unless dir holds exactly the named entries, in
// order (so no temporary file was left behind).
func OnlyFiles(t testing.TB, dir string, names ...string) {
	t.Helper()
	ents, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, e := range ents {
		got = append(got, e.Name())
	}
	if !slices.Equal(got, names) {
		t.Fatalf("folder holds %q, want only %q", got, names)
	}
}
