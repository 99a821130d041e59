// Package safefile writes output files atomically: the bytes go to a
// temporary file in the destination folder, are flushed to disk, and only
// then renamed over the destination. A reader never sees a half-written
// file, and an existing file is never replaced unless the caller asks.
package safefile

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
)

// ErrExists is returned (wrapped) when the destination exists and force is false.
var ErrExists = errors.New("already exists (use --force to overwrite)")

// CheckWritable reports an error if path is a folder, if path exists and
// force is false, or if its folder does not exist. Commands call it before
// long work so that a refusal comes before the work, not after.
func CheckWritable(path string, force bool) error {
	if path == "" {
		return fmt.Errorf("output path is empty")
	}
	if st, err := os.Stat(path); err == nil && st.IsDir() {
		return fmt.Errorf("%s: expected an output file, found a folder", path)
	}
	if !force {
		if _, err := os.Lstat(path); err == nil {
			return fmt.Errorf("%s: %w", path, ErrExists)
		}
	}
	dir := filepath.Dir(path)
	st, err := os.Stat(dir)
	if err != nil {
		return fmt.Errorf("%s: output folder %s: %w", path, dir, err)
	}
	if !st.IsDir() {
		return fmt.Errorf("%s: %s is not a folder", path, dir)
	}
	return nil
}

// Write creates path atomically with the bytes that fn writes. If fn or any
// step fails, the temporary file is removed and any earlier file at path is
// left untouched.
func Write(path string, force bool, fn func(w io.Writer) error) (err error) {
	if err := CheckWritable(path, force); err != nil {
		return err
	}
	dir := filepath.Dir(path)
	removeStale(path)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return fmt.Errorf("%s: cannot create temporary file: %w", path, err)
	}
	tmpName := tmp.Name()
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmpName)
		}
	}()
	if err = fn(tmp); err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	if err = tmp.Sync(); err != nil {
		return fmt.Errorf("%s: flushing to disk: %w", path, err)
	}
	if err = tmp.Close(); err != nil {
		return fmt.Errorf("%s: closing: %w", path, err)
	}
	if err = os.Chmod(tmpName, 0o644); err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	if !force {
		// Link fails if the destination appeared meanwhile; rename would replace it.
		if err = os.Link(tmpName, path); err != nil {
			if errors.Is(err, fs.ErrExist) {
				err = fmt.Errorf("%s: %w", path, ErrExists)
				return err
			}
			// Some file systems have no hard links; fall back to rename.
			if err = os.Rename(tmpName, path); err != nil {
				return fmt.Errorf("%s: %w", path, err)
			}
		} else {
			os.Remove(tmpName)
		}
	} else if err = os.Rename(tmpName, path); err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	if d, derr := os.Open(dir); derr == nil {
		d.Sync()
		d.Close()
	}
	return nil
}

// removeStale deletes the temporary files of path that an earlier Write
// could not clean up because its process was killed (SIGKILL, power loss)
// between creating and renaming them. Such a write never took effect, so
// the file at path, if any, is still the earlier complete one.
func removeStale(path string) {
	old, _ := filepath.Glob(filepath.Join(filepath.Dir(path), "."+globEscape(filepath.Base(path))+".tmp-*"))
	for _, f := range old {
		os.Remove(f)
	}
}

// globEscape quotes the characters filepath.Match treats specially.
func globEscape(s string) string {
	var b []byte
	for i := 0; i < len(s); i++ {
		switch s[i] {
		case '*', '?', '[', '\\':
			b = append(b, '\\')
		}
		b = append(b, s[i])
	}
	return string(b)
}

// WriteBytes is Write for a byte slice already in memory.
func WriteBytes(path string, force bool, b []byte) error {
	return Write(path, force, func(w io.Writer) error {
		_, err := w.Write(b)
		return err
	})
}

// SamePath reports whether two paths name the same file, or would once
// created (the same absolute path).
func SamePath(a, b string) bool {
	if a == b {
		return true
	}
	sa, errA := os.Stat(a)
	sb, errB := os.Stat(b)
	if errA == nil && errB == nil {
		return os.SameFile(sa, sb)
	}
	aa, _ := filepath.Abs(a)
	bb, _ := filepath.Abs(b)
	return aa == bb
}
