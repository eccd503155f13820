//go:build linux || darwin || freebsd || netbsd || openbsd || dragonfly

package outdir

import (
	"errors"
	"os"
	"syscall"
)

// openLock opens (creating) the lock file, refusing a symbolic link planted
// in its place (opening through one would truncate the file it points to)
// and anything but a regular file (O_NONBLOCK: a planted FIFO must not block
// the open; on a regular file the flag changes nothing).
func openLock(path string) (*os.File, error) {
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE|syscall.O_NOFOLLOW|syscall.O_NONBLOCK, 0o666)
	if errors.Is(err, syscall.ELOOP) {
		return nil, errors.New(LockFile + " is a symbolic link; remove it")
	}
	if err != nil {
		return nil, err
	}
	if fi, err := f.Stat(); err != nil || !fi.Mode().IsRegular() {
		f.Close()
		return nil, errors.New(LockFile + " is not a regular file; remove it")
	}
	return f, nil
}

// tryLock takes an exclusive flock on f without blocking; busy reports that
// another open file holds it.
func tryLock(f *os.File) (busy bool, err error) {
	for {
		err = syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB)
		switch {
		case err == nil:
			return false, nil
		case errors.Is(err, syscall.EINTR):
			continue
		case errors.Is(err, syscall.EWOULDBLOCK):
			return true, nil
		}
		return false, err
	}
}
