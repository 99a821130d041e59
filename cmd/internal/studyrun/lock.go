//go:build unix

package studyrun

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
)

// lockFile takes an exclusive lock (flock) on the file at path, created if
// need be, and writes this process's id into it. With wait it waits for
// the lock; without, a lock another process holds is an error that names
// that process's id (as it wrote it). The lock lasts until release is
// called or the process ends, however it ends.
func lockFile(path string, wait bool) (release func(), err error) {
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return nil, err
	}
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		return nil, err
	}
	how := syscall.LOCK_EX
	if !wait {
		how |= syscall.LOCK_NB
	}
	for {
		err = syscall.Flock(int(f.Fd()), how)
		if !errors.Is(err, syscall.EINTR) {
			break
		}
	}
	if err != nil {
		f.Close()
		if errors.Is(err, syscall.EWOULDBLOCK) {
			b, _ := os.ReadFile(path)
			if pid, perr := strconv.Atoi(strings.TrimSpace(string(b))); perr == nil {
				return nil, fmt.Errorf("%w (pid %d)", errLocked, pid)
			}
			return nil, errLocked
		}
		return nil, fmt.Errorf("locking %s: %w", path, err)
	}
	if err := f.Truncate(0); err == nil {
		f.WriteAt([]byte(strconv.Itoa(os.Getpid())+"\n"), 0)
	}
	return func() { f.Close() }, nil
}
