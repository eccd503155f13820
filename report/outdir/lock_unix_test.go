//go:build linux || darwin || freebsd || netbsd || openbsd || dragonfly

package outdir

import (
	"context"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// A FIFO planted as the lock file is refused at once; opening it for
// reading or writing without O_NONBLOCK would block Open for ever.
func TestLockFileFIFORefused(t *testing.T) {
	root := t.TempDir()
	if err := syscall.Mkfifo(filepath.Join(root, LockFile), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := Open(context.Background(), root, Options{}); err == nil || !strings.Contains(err.Error(), "is not a regular file") {
		t.Errorf("Open with a FIFO as lock file: %v", err)
	}
	if h := readHolder(filepath.Join(root, LockFile)); h != (Holder{}) {
		t.Errorf("readHolder of a FIFO = %+v, want nothing", h)
	}
}
