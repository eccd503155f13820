package report

import (
	"bufio"
	"fmt"
	"io"
	"os"
	"path/filepath"
)

// WriteFileAtomic writes a file through write into a temporary file in the
// same directory and renames it into place only when write and the flush
// succeed, so a failure never leaves a half-written file at path.
func WriteFileAtomic(path string, write func(w io.Writer) error) (err error) {
	dir := filepath.Dir(path)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("create folder %s: %w", dir, err)
	}
	f, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return fmt.Errorf("create %s: %w", path, err)
	}
	defer func() {
		if err != nil {
			f.Close()
			os.Remove(f.Name())
		}
	}()
	bw := bufio.NewWriter(f)
	if err = write(bw); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err = bw.Flush(); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err = f.Chmod(0o644); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err = f.Close(); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err = os.Rename(f.Name(), path); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	return nil
}

// Staging collects the files of one output folder in a hidden temporary
// folder beside it; Commit moves them into place together, Discard removes
// them. A run that fails half-way therefore leaves the final folder as it was.
type Staging struct {
	final string // the folder the files end up in
	tmp   string // the hidden folder they are written to
}

// NewStaging prepares a staging folder for the output folder final.
func NewStaging(final string) (*Staging, error) {
	parent := filepath.Dir(final)
	if err := os.MkdirAll(parent, 0o755); err != nil {
		return nil, fmt.Errorf("create folder %s: %w", parent, err)
	}
	tmp, err := os.MkdirTemp(parent, "."+filepath.Base(final)+".tmp-*")
	if err != nil {
		return nil, fmt.Errorf("create folder in %s: %w", parent, err)
	}
	return &Staging{final: final, tmp: tmp}, nil
}

// Path returns where the file called name is written while staging.
func (s *Staging) Path(name string) string { return filepath.Join(s.tmp, name) }

// Final returns the folder the files end up in.
func (s *Staging) Final() string { return s.final }

// Commit replaces the final folder's files of the same names with the staged
// ones and removes the staging folder. Files already in the final folder that
// were not staged are left alone.
func (s *Staging) Commit() error {
	if err := os.MkdirAll(s.final, 0o755); err != nil {
		return fmt.Errorf("create folder %s: %w", s.final, err)
	}
	entries, err := os.ReadDir(s.tmp)
	if err != nil {
		return fmt.Errorf("read staging folder: %w", err)
	}
	for _, e := range entries {
		if err := os.Rename(filepath.Join(s.tmp, e.Name()), filepath.Join(s.final, e.Name())); err != nil {
			return fmt.Errorf("move %s into %s: %w", e.Name(), s.final, err)
		}
	}
	return os.Remove(s.tmp)
}

// Discard removes the staging folder and everything in it. It is safe to
// call after Commit.
func (s *Staging) Discard() { os.RemoveAll(s.tmp) }
