//go:build !(linux || darwin || freebsd || netbsd || openbsd || dragonfly)

package outdir

import (
	"errors"
	"fmt"
	"os"
	"runtime"
)

// errNoLock says why Open fails on this platform.
var errNoLock = fmt.Errorf("locking an output folder is not supported on %s: %w", runtime.GOOS, errors.ErrUnsupported)

func openLock(path string) (*os.File, error) { return nil, errNoLock }

func tryLock(f *os.File) (busy bool, err error) { return false, errNoLock }
