//go:build unix

package studyrun

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// TestLockFile checks the output folder's lock: a held lock refuses a
// second taker with the holder's pid, a released one is free again.
func TestLockFile(t *testing.T) {
	path := filepath.Join(t.TempDir(), "out", ".lock")
	for _, tc := range []struct {
		name    string
		hold    bool // another open file holds the lock
		release bool // and lets it go before the second try
		wantErr bool
	}{
		{"free", false, false, false},
		{"held", true, false, true},
		{"released", true, true, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var release func()
			if tc.hold {
				var err error
				if release, err = lockFile(path, false); err != nil {
					t.Fatal(err)
				}
				if tc.release {
					release()
				} else {
					defer release()
				}
			}
			again, err := lockFile(path, false)
			if tc.wantErr {
				if !errors.Is(err, errLocked) || !strings.Contains(err.Error(), fmt.Sprintf("(pid %d)", os.Getpid())) {
					t.Fatalf("got %v, want %v naming pid %d", err, errLocked, os.Getpid())
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			again()
		})
	}
}

// TestUnitLockWaits holds one unit's lock as another process running it
// would, and checks that RunUnit waits for it rather than running the unit
// a second time at once.
func TestUnitLockWaits(t *testing.T) {
	p, out := loadSmall(t, smallStudy)
	u := p.Units[StageSimulate][0]
	release, err := lockFile(filepath.Join(out, unitLockPath(u.Name)), false)
	if err != nil {
		t.Fatal(err)
	}
	done := make(chan error, 1)
	go func() {
		_, err := p.RunUnit(context.Background(), u)
		done <- err
	}()
	select {
	case err := <-done:
		t.Fatalf("RunUnit returned (%v) while another holder had the unit's lock", err)
	case <-time.After(300 * time.Millisecond):
	}
	if _, err := os.Stat(filepath.Join(out, pointPath(u.Size, u.Point))); err == nil {
		t.Fatal("the unit wrote its output while another holder had its lock")
	}
	release()
	if err := <-done; err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(filepath.Join(out, stampPath(u.Name))); err != nil {
		t.Errorf("after the lock was released the unit did not finish: %v", err)
	}
}
