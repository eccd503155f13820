package outdir

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
)

// Stage is a hidden staging folder for one output sub-folder. Write its
// files, then Commit or Discard it; a deferred Discard after Commit does
// nothing.
type Stage struct {
	d    *Dir
	name string // the sub-folder it becomes
	path string // absolute path of the staging folder
	done bool   // committed or discarded; guarded by d.mu
}

// Stage makes a staging folder for the output sub-folder name: one path
// element of at most MaxNameLen bytes of valid UTF-8, not beginning with a
// dot, without / or \ and without the characters textsafe.Terminal escapes
// (controls, format characters, and invisible letters and marks such as the
// Hangul filler U+3164 or a variation selector, which would make two folder
// names look alike). It refuses early when root/name exists and may not be
// replaced (see Commit).
func (d *Dir) Stage(name string) (*Stage, error) {
	if err := checkName(name); err != nil {
		return nil, err
	}
	if err := d.replaceable(name); err != nil {
		return nil, err
	}
	path, err := createUnique(d.root, stagePrefix, func(p string) error { return os.Mkdir(p, 0o777) })
	if err != nil {
		return nil, fmt.Errorf("stage %s: %w", d.show(name), err)
	}
	s := &Stage{d: d, name: name, path: path}
	d.mu.Lock()
	defer d.mu.Unlock()
	if d.closed {
		os.RemoveAll(path)
		return nil, ErrClosed
	}
	d.stages[s] = struct{}{}
	return s, nil
}

// replaceable reports why root/name may not be replaced by a commit: it
// exists and is not a real folder (a file or a symbolic link), or is a folder
// without the marker file, which canalstep did not write.
func (d *Dir) replaceable(name string) error {
	fi, err := os.Lstat(filepath.Join(d.root, name))
	switch {
	case errors.Is(err, fs.ErrNotExist):
		return nil
	case err != nil:
		return fmt.Errorf("stage %s: %w", d.show(name), err)
	case !fi.IsDir():
		return fmt.Errorf("cannot replace %s: it exists and is not a folder; move it away or choose another output folder", d.show(name))
	}
	mi, err := os.Lstat(filepath.Join(d.root, name, MarkerFile))
	if err != nil || !mi.Mode().IsRegular() {
		return fmt.Errorf("cannot replace %s: it was not written by canalstep (no %s in it); move it away or choose another output folder",
			d.show(name), MarkerFile)
	}
	return nil
}

// Name returns the output sub-folder the stage becomes.
func (s *Stage) Name() string { return s.name }

// Path returns where the file called file is written while staging, for
// writers that need a file name rather than an io.Writer. file follows the
// same rules as a Stage name. Files written through Path are synced by
// Commit like the others.
func (s *Stage) Path(file string) (string, error) {
	if err := checkName(file); err != nil {
		return "", fmt.Errorf("stage %s: %w", s.d.show(s.name), err)
	}
	return filepath.Join(s.path, file), nil
}

// WriteFile writes the file called file in the staging folder through
// write, buffered (64 KiB). A write that fails removes the file, so a later
// Commit does not carry a partial one. It is not synced here; Commit syncs
// every staged file.
func (s *Stage) WriteFile(file string, write func(io.Writer) error) error {
	p, err := s.Path(file)
	if err != nil {
		return err
	}
	if err := s.live(); err != nil {
		return err
	}
	f, err := os.OpenFile(p, os.O_WRONLY|os.O_CREATE|os.O_TRUNC, 0o666)
	if err != nil {
		return fmt.Errorf("write %s: %w", s.d.show(s.name, file), err)
	}
	err = writeBuffered(f, write)
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		os.Remove(p)
		return fmt.Errorf("write %s: %w", s.d.show(s.name, file), err)
	}
	return nil
}

// live returns an error once the stage is committed or discarded, or its
// Dir closed.
func (s *Stage) live() error {
	s.d.mu.Lock()
	defer s.d.mu.Unlock()
	switch {
	case s.d.closed:
		return ErrClosed
	case s.done:
		return fmt.Errorf("stage %s: already committed or discarded", s.d.show(s.name))
	}
	return nil
}

// Commit replaces root/name with the staged folder as a whole. It writes the
// marker file, syncs the staged files and folder (unless NoSync), renames an
// existing root/name aside to a hidden .canalstep-old-N-name, renames the
// staged folder to root/name, syncs the root, and removes the old folder.
//
// It refuses to replace an entry that is not a folder, or a folder without
// the marker file. If renaming the old folder aside fails, nothing has
// changed. If renaming the staged folder in fails, the old folder is renamed
// back and the error says so; should that fail too, the error names where
// the old folder is, and the next Open puts it back. After
// a failed Commit the stage is still there to Discard. A failure to remove
// the old folder is not an error: the next Open removes it.
func (s *Stage) Commit() error {
	d := s.d
	if err := s.live(); err != nil {
		return err
	}
	if err := os.WriteFile(filepath.Join(s.path, MarkerFile), []byte(markerText), 0o666); err != nil {
		return fmt.Errorf("commit %s: %w", d.show(s.name), err)
	}
	if !d.noSync {
		if err := syncTree(s.path); err != nil {
			return fmt.Errorf("commit %s: sync: %w", d.show(s.name), err)
		}
	}
	old, err := s.swap()
	if err != nil {
		return err
	}
	if !d.noSync {
		if err := syncDir(d.root); err != nil {
			return fmt.Errorf("commit %s: the folder is in place but syncing %s failed: %w", d.show(s.name), d.show(), err)
		}
	}
	if old != "" {
		os.RemoveAll(old)
	}
	return nil
}

// swap does Commit's renames under the Dir's lock and returns where the
// replaced folder now is ("" when there was none).
func (s *Stage) swap() (old string, err error) {
	d := s.d
	d.mu.Lock()
	defer d.mu.Unlock()
	switch {
	case d.closed:
		return "", ErrClosed
	case s.done:
		return "", fmt.Errorf("stage %s: already committed or discarded", d.show(s.name))
	}
	final := filepath.Join(d.root, s.name)
	if err := d.replaceable(s.name); err != nil {
		return "", err
	}
	if _, err := os.Lstat(final); err == nil {
		d.seq++
		old = filepath.Join(d.root, oldEntry(d.seq, s.name))
		if err := d.rename(final, old); err != nil {
			return "", fmt.Errorf("commit %s: move the previous folder aside: %w (it is unchanged)", d.show(s.name), err)
		}
	}
	if err := d.rename(s.path, final); err != nil {
		if old == "" {
			return "", fmt.Errorf("commit %s: %w", d.show(s.name), err)
		}
		if err2 := d.rename(old, final); err2 != nil {
			return "", fmt.Errorf("commit %s: %w; putting the previous folder back failed too (%v): it is at %s, and the next run into this folder puts it back",
				d.show(s.name), err, err2, d.show(filepath.Base(old)))
		}
		return "", fmt.Errorf("commit %s: %w (the previous folder is unchanged)", d.show(s.name), err)
	}
	s.done = true
	delete(d.stages, s)
	for _, n := range d.written {
		if n == s.name {
			return old, nil
		}
	}
	d.written = append(d.written, s.name)
	return old, nil
}

// Discard removes the staging folder and everything in it. It does nothing
// after Commit or a previous Discard, so it can be deferred.
func (s *Stage) Discard() {
	d := s.d
	d.mu.Lock()
	if s.done || d.closed {
		d.mu.Unlock()
		return
	}
	s.done = true
	delete(d.stages, s)
	d.mu.Unlock()
	os.RemoveAll(s.path)
}

// syncTree fsyncs every regular file directly in dir, then dir itself.
func syncTree(dir string) error {
	entries, err := os.ReadDir(dir)
	if err != nil {
		return err
	}
	for _, e := range entries {
		if !e.Type().IsRegular() {
			continue
		}
		f, err := os.Open(filepath.Join(dir, e.Name()))
		if err != nil {
			return err
		}
		err = f.Sync()
		if cerr := f.Close(); err == nil {
			err = cerr
		}
		if err != nil {
			return fmt.Errorf("%s: %w", e.Name(), err)
		}
	}
	return syncDir(dir)
}
