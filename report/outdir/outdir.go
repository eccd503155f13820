// Package outdir writes an output folder so that a reader never finds a
// folder that mixes two runs, or one that a failed or killed run left half
// written.
//
// An output folder ROOT (the CLI's --out) holds:
//
//	ROOT/.canalstep.lock          the advisory lock of the run writing ROOT; "pid N host H" inside
//	ROOT/NAME/                    one folder per alignment, replaced as a whole by Stage and Commit
//	ROOT/NAME/.canalstep-folder   marker: written by canalstep, so the next run may replace it
//	ROOT/FILE                     top-level files (index.csv), each replaced atomically by Dir.WriteFile
//	ROOT/.canalstep-stage-*       staging folders of the run holding the lock
//	ROOT/.canalstep-old-N-NAME    folder NAME, moved aside by a commit until its removal
//	ROOT/.canalstep-tmp-*         a top-level file being written
//
// [Open] takes the lock: another run into ROOT waits for it or is refused
// with a [BusyError]. Holding the lock, Open clears every staging, old and
// temporary entry it finds, since only killed runs leave them (so do the
// ".NAME.tmp-DIGITS" entries of the staging code this package replaces): it
// puts a folder moved aside back if a kill between a commit's two renames
// left its place empty, and removes everything else.
//
// [Dir.Stage] makes a hidden staging folder for one output sub-folder; the
// caller writes its files there with [Stage.WriteFile] or [Stage.Path], then
// [Stage.Commit] renames the old folder aside, renames the staged one in and
// removes the old. If the second rename fails the old folder is put back, so
// ROOT/NAME always holds the files of one run. The window between the two
// renames, in which ROOT/NAME does not exist, lasts two rename calls.
//
// Commit refuses to replace a folder that lacks the marker file: a user who
// passes --out ~ must not lose ~/Documents to an alignment named "Documents".
// Folders written before the marker existed must be moved away once.
//
// Durability: unless [Options].NoSync is set, Commit fsyncs every file in the
// staging folder and the folder itself before renaming, and ROOT after, and
// Dir.WriteFile fsyncs the file before and ROOT after its rename; so after a
// crash or power loss ROOT/NAME holds the old or the new files, never empty
// ones (or, after a cut between the two renames, nothing until the next Open
// puts the old folder back).
//
// Platforms: the lock is flock(2) on Linux, macOS and the BSDs, held per open
// file, so two Opens in one process exclude each other too. It is released by
// the kernel when the process ends, even by SIGKILL. On NFS, Linux emulates
// flock with byte-range locks: it works across hosts when the server
// supports locking, but two Opens in one process no longer exclude each
// other. Elsewhere (Windows, Plan 9, wasm) Open fails with an error wrapping
// errors.ErrUnsupported.
//
// A Dir is safe for concurrent use by several goroutines, each staging its
// own folders; one Stage is meant for one goroutine at a time.
package outdir

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math/rand/v2"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"time"
	"unicode/utf8"

	"canalstep/report/textsafe"
)

// Names of the entries this package keeps in an output folder.
const (
	LockFile    = ".canalstep.lock"   // the advisory lock, kept after the run (removing it would let two runs lock different files)
	MarkerFile  = ".canalstep-folder" // in every committed folder
	stagePrefix = ".canalstep-stage-"
	oldPrefix   = ".canalstep-old-"
	tmpPrefix   = ".canalstep-tmp-"
)

// markerText is the content of MarkerFile: fixed, so committed folders stay
// byte-for-byte reproducible.
const markerText = "This folder was written by canalstep. The next canalstep run into the same\n" +
	"output folder replaces it as a whole; files added here by hand are lost then.\n"

// MaxNameLen is the longest folder or file name Stage and WriteFile accept,
// in bytes: alignment.SafeName names are at most 64, and every common file
// system allows 255.
const MaxNameLen = 128

// legacyTemp matches the staging folders and temporary files of the code
// this package replaces (os.MkdirTemp/CreateTemp with "."+name+".tmp-*").
var legacyTemp = regexp.MustCompile(`^\..+\.tmp-[0-9]+$`)

// bufSize is the write buffer of WriteFile, in bytes.
const bufSize = 64 << 10

// Errors Dir methods return, to test with errors.Is.
var (
	ErrClosed = errors.New("output folder already closed")
	ErrName   = errors.New("invalid output name")
)

// Options controls Open. The zero value refuses a busy folder at once and
// syncs every commit to disk.
type Options struct {
	// Wait makes Open block until the run holding the lock ends (or the
	// context is done) instead of returning a *BusyError at once. Open
	// polls the lock, at first every 10 ms and then every 250 ms, so a
	// cancelled context ends the wait within 250 ms.
	Wait bool
	// Waiting, when not nil, is called once if Open has to wait, with the
	// run that holds the lock, so the CLI can say what it is waiting for.
	Waiting func(Holder)
	// NoSync skips every fsync: for tests and throw-away runs, where a
	// power cut may leave committed files empty.
	NoSync bool
}

// Holder is the run that holds an output folder's lock, as it wrote itself
// into the lock file. PID is 0 when it could not be read.
type Holder struct {
	PID  int
	Host string
}

// String words the holder for a message: "pid 1234" or "pid 1234 on host
// node-7" when it runs on another host than this one.
func (h Holder) String() string {
	if h.PID <= 0 {
		return "pid unknown"
	}
	s := "pid " + strconv.Itoa(h.PID)
	if me, err := os.Hostname(); h.Host != "" && (err != nil || me != h.Host) {
		s += " on host " + textsafe.Clip(h.Host, 64)
	}
	return s
}

// BusyError is what Open returns without Options.Wait when another run holds
// the output folder's lock.
type BusyError struct {
	Root   string // the output folder as given to Open
	Holder Holder
}

func (e *BusyError) Error() string {
	return fmt.Sprintf("output folder %s is in use by another canalstep run (%s); wait for it, pass --wait, or choose another --out",
		textsafe.Terminal(e.Root), e.Holder)
}

// Dir is an output folder held under its lock. Create it with [Open] and
// release it with [Dir.Close].
type Dir struct {
	root     string // absolute, symbolic links resolved at Open
	display  string // the folder as given to Open, for messages
	noSync   bool
	lock     *os.File
	stale    []string // entries removed at Open
	restored []string // folders put back at Open

	// rename is os.Rename; tests replace it to make a commit fail.
	rename func(oldpath, newpath string) error

	mu      sync.Mutex // guards the fields below and serialises commits
	closed  bool
	stages  map[*Stage]struct{} // staged, neither committed nor discarded
	written []string            // folder names committed, in order, each once
	seq     int                 // numbers the .canalstep-old-* names
}

// Open takes the output folder root for one run. It creates root (and its
// parents) if missing; refuses a root that exists and is not a folder, or
// that is a symbolic link to something missing or not a folder (a link to a
// folder is followed once, here, and the resolved folder is used from then
// on, so re-pointing the link mid-run changes nothing); takes the lock, as
// [Options] says; and removes the stale entries killed runs left (see
// [Dir.Stale]). ctx bounds the wait for the lock. The returned Dir must be
// closed.
func Open(ctx context.Context, root string, o Options) (*Dir, error) {
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	real, err := resolveRoot(root)
	if err != nil {
		return nil, err
	}
	show := textsafe.Terminal(root)
	lockPath := filepath.Join(real, LockFile)
	f, err := openLock(lockPath)
	if err != nil {
		return nil, fmt.Errorf("lock output folder %s: %w", show, err)
	}
	if err := acquire(ctx, f, root, lockPath, o); err != nil {
		f.Close()
		return nil, err
	}
	d := &Dir{root: real, display: root, noSync: o.NoSync, lock: f, rename: os.Rename, stages: map[*Stage]struct{}{}}
	if err := d.writeHolder(); err != nil {
		f.Close()
		return nil, fmt.Errorf("lock output folder %s: %w", show, err)
	}
	if err := d.removeStale(); err != nil {
		f.Close()
		return nil, err
	}
	return d, nil
}

// resolveRoot returns the absolute, link-free path of the output folder,
// creating it when it does not exist.
func resolveRoot(root string) (string, error) {
	show := textsafe.Terminal(root)
	if root == "" {
		return "", errors.New("no output folder given")
	}
	if strings.IndexByte(root, 0) >= 0 {
		return "", fmt.Errorf("output folder %s: the name contains a NUL byte", show)
	}
	fi, err := os.Lstat(root)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		if err := os.MkdirAll(root, 0o777); err != nil {
			return "", fmt.Errorf("create output folder %s: %w", show, err)
		}
	case err != nil:
		return "", fmt.Errorf("output folder %s: %w", show, err)
	case fi.Mode()&fs.ModeSymlink != 0:
		target, err := filepath.EvalSymlinks(root)
		if err != nil {
			return "", fmt.Errorf("output folder %s is a symbolic link that leads nowhere; remove it or choose another output folder", show)
		}
		if fi, err := os.Stat(target); err != nil || !fi.IsDir() {
			return "", fmt.Errorf("output folder %s is a symbolic link to %s, which is not a folder; choose another output folder", show, textsafe.Terminal(target))
		}
	case !fi.IsDir():
		return "", fmt.Errorf("output folder %s exists and is not a folder; remove it or choose another output folder", show)
	}
	real, err := filepath.EvalSymlinks(root)
	if err == nil {
		real, err = filepath.Abs(real)
	}
	if err != nil {
		return "", fmt.Errorf("output folder %s: %w", show, err)
	}
	return real, nil
}

// acquire takes the lock on f as o says.
func acquire(ctx context.Context, f *os.File, root, lockPath string, o Options) error {
	const first, most = 10 * time.Millisecond, 250 * time.Millisecond
	delay, told := first, false
	for {
		busy, err := tryLock(f)
		if err != nil {
			return fmt.Errorf("lock output folder %s: %w", textsafe.Terminal(root), err)
		}
		if !busy {
			return nil
		}
		if !o.Wait {
			return &BusyError{Root: root, Holder: readHolder(lockPath)}
		}
		if !told && o.Waiting != nil {
			o.Waiting(readHolder(lockPath))
		}
		told = true
		t := time.NewTimer(delay)
		select {
		case <-ctx.Done():
			t.Stop()
			return fmt.Errorf("wait for output folder %s: %w", textsafe.Terminal(root), ctx.Err())
		case <-t.C:
		}
		delay = min(2*delay, most)
	}
}

// writeHolder records this process in the lock file for BusyError messages.
func (d *Dir) writeHolder() error {
	host, _ := os.Hostname()
	line := fmt.Sprintf("pid %d host %s\n", os.Getpid(), strings.Join(strings.Fields(host), "_"))
	if err := d.lock.Truncate(0); err != nil {
		return err
	}
	_, err := d.lock.WriteAt([]byte(line), 0)
	return err
}

// readHolder reads the lock file's "pid N host H" line, as far as it can.
func readHolder(lockPath string) Holder {
	var h Holder
	if fi, err := os.Lstat(lockPath); err != nil || !fi.Mode().IsRegular() {
		return h // never open a planted FIFO or device: it could block
	}
	f, err := os.Open(lockPath)
	if err != nil {
		return h
	}
	defer f.Close()
	buf := make([]byte, 512) // the line is short; never read a huge planted file
	n, _ := io.ReadFull(f, buf)
	return parseHolder(buf[:n])
}

// parseHolder reads "pid N host H" (in any order; unknown words skipped).
func parseHolder(b []byte) Holder {
	var h Holder
	fields := strings.Fields(string(b))
	for i := 0; i+1 < len(fields); i += 2 {
		switch fields[i] {
		case "pid":
			if pid, err := strconv.Atoi(fields[i+1]); err == nil && pid > 0 {
				h.PID = pid
			}
		case "host":
			h.Host = fields[i+1]
		}
	}
	return h
}

// removeStale clears what killed runs left in the root. A folder moved
// aside by a commit that was killed before renaming its stage in is put back
// when its place is empty; everything else is removed.
func (d *Dir) removeStale() error {
	entries, err := os.ReadDir(d.root)
	if err != nil {
		return fmt.Errorf("read output folder %s: %w", textsafe.Terminal(d.display), err)
	}
	for _, e := range entries {
		n := e.Name()
		if !strings.HasPrefix(n, stagePrefix) && !strings.HasPrefix(n, oldPrefix) &&
			!strings.HasPrefix(n, tmpPrefix) && !legacyTemp.MatchString(n) {
			continue
		}
		if name, ok := oldName(n); ok && e.IsDir() {
			final := filepath.Join(d.root, name)
			if _, err := os.Lstat(final); errors.Is(err, fs.ErrNotExist) {
				if err := os.Rename(filepath.Join(d.root, n), final); err != nil {
					return fmt.Errorf("put back %s, moved aside by an interrupted run: %w; rename %s to %s by hand",
						d.show(name), err, textsafe.Terminal(n), textsafe.Terminal(name))
				}
				d.restored = append(d.restored, name)
				continue
			}
		}
		if err := os.RemoveAll(filepath.Join(d.root, n)); err != nil {
			return fmt.Errorf("remove %s, left by an interrupted run: %w; remove it by hand", d.show(n), err)
		}
		d.stale = append(d.stale, n)
	}
	return nil
}

// oldName returns the folder name a .canalstep-old-SEQ-NAME entry was moved
// aside from.
func oldName(entry string) (string, bool) {
	rest, ok := strings.CutPrefix(entry, oldPrefix)
	if !ok {
		return "", false
	}
	seq, name, ok := strings.Cut(rest, "-")
	if !ok || seq == "" || strings.Trim(seq, "0123456789") != "" || checkName(name) != nil {
		return "", false
	}
	return name, true
}

// oldEntry is the name of the entry a commit moves folder name aside to.
func oldEntry(seq int, name string) string { return oldPrefix + strconv.Itoa(seq) + "-" + name }

// Root returns the absolute path of the output folder, symbolic links
// resolved.
func (d *Dir) Root() string { return d.root }

// Stale returns the names of the entries Open removed from the root: the
// staging folders, replaced folders and temporary files of killed runs.
func (d *Dir) Stale() []string { return append([]string(nil), d.stale...) }

// Restored returns the folders Open put back: a run killed between the two
// renames of a commit leaves the previous folder moved aside and its place
// empty, and Open renames it back.
func (d *Dir) Restored() []string { return append([]string(nil), d.restored...) }

// Written returns the names of the folders committed so far, in the order
// of their first commit, each once. Top-level files are not listed.
func (d *Dir) Written() []string {
	d.mu.Lock()
	defer d.mu.Unlock()
	return append([]string(nil), d.written...)
}

// maxListed is how many names Report lists on each side before it counts
// the rest, to keep the line readable in a run of thousands.
const maxListed = 10

// Report words the end of a run that failed or was interrupted, in one line:
// how many of the folders in all were committed and which were not, e.g.
//
//	interrupted: 2 of 3 alignment folders written to out: Main, East; not written: West
//
// Names are passed through textsafe.Terminal; at most 10 are listed on each
// side, then "and N more". Committed names not in all are not counted.
func (d *Dir) Report(all []string, interrupted bool) string {
	done := map[string]bool{}
	for _, n := range d.Written() {
		done[n] = true
	}
	var w, missing []string
	seen := map[string]bool{}
	for _, n := range all {
		if seen[n] {
			continue
		}
		seen[n] = true
		if done[n] {
			w = append(w, n)
		} else {
			missing = append(missing, n)
		}
	}
	var b strings.Builder
	if interrupted {
		b.WriteString("interrupted: ")
	}
	fmt.Fprintf(&b, "%d of %d alignment folders written to %s", len(w), len(w)+len(missing), textsafe.Terminal(d.display))
	if len(w) > 0 {
		b.WriteString(": ")
		b.WriteString(listNames(w))
	}
	if len(missing) > 0 {
		b.WriteString("; not written: ")
		b.WriteString(listNames(missing))
	}
	return b.String()
}

func listNames(names []string) string {
	shown := names[:min(len(names), maxListed)]
	out := make([]string, len(shown))
	for i, n := range shown {
		out[i] = textsafe.Terminal(n)
	}
	s := strings.Join(out, ", ")
	if rest := len(names) - len(shown); rest > 0 {
		s += fmt.Sprintf(" and %d more", rest)
	}
	return s
}

// Close discards every stage not yet committed and releases the lock.
// Later calls do nothing and return nil, so Close can be deferred and also
// called to check its error.
func (d *Dir) Close() error {
	d.mu.Lock()
	if d.closed {
		d.mu.Unlock()
		return nil
	}
	d.closed = true
	stages := d.stages
	d.stages = nil
	d.mu.Unlock()
	var errs []error
	for s := range stages {
		if err := os.RemoveAll(s.path); err != nil {
			errs = append(errs, err)
		}
	}
	if err := d.lock.Close(); err != nil { // closing the only descriptor releases the flock
		errs = append(errs, err)
	}
	if err := errors.Join(errs...); err != nil {
		return fmt.Errorf("close output folder %s: %w", textsafe.Terminal(d.display), err)
	}
	return nil
}

// checkName validates a folder or file name inside the output folder.
func checkName(name string) error {
	bad := func(why string) error {
		return fmt.Errorf("%w %q: %s", ErrName, textsafe.Terminal(name), why)
	}
	switch {
	case name == "":
		return fmt.Errorf("%w: empty name", ErrName)
	case len(name) > MaxNameLen:
		return bad(fmt.Sprintf("longer than %d bytes", MaxNameLen))
	case !utf8.ValidString(name):
		return bad("not valid UTF-8")
	case name[0] == '.':
		return bad("begins with a dot (hidden, . or ..)")
	case strings.ContainsAny(name, `/\`):
		return bad("contains a path separator; give one name, not a path")
	case textsafe.Clip(name, MaxNameLen) != name:
		return bad("contains control, format or invisible characters")
	}
	return nil
}

// show words a path inside the output folder for a message.
func (d *Dir) show(parts ...string) string {
	return textsafe.Terminal(filepath.Join(append([]string{d.display}, parts...)...))
}

// createUnique creates a new entry dir/prefix+random with create, retrying
// on a name that exists.
func createUnique(dir, prefix string, create func(path string) error) (string, error) {
	for range 1000 {
		p := filepath.Join(dir, prefix+strconv.FormatUint(uint64(rand.Uint32()), 10))
		err := create(p)
		if err == nil {
			return p, nil
		}
		if !errors.Is(err, fs.ErrExist) {
			return "", err
		}
	}
	return "", fmt.Errorf("create %s* in %s: no free name after 1000 tries", prefix, dir)
}

// buffers recycles WriteFile's write buffers across files.
var buffers = sync.Pool{New: func() any { return bufio.NewWriterSize(nil, bufSize) }}

// writeBuffered writes through write into f, buffered, and flushes.
func writeBuffered(f *os.File, write func(io.Writer) error) error {
	bw := buffers.Get().(*bufio.Writer)
	bw.Reset(f)
	defer func() {
		bw.Reset(nil) // drop f and any unflushed bytes of a failed write
		buffers.Put(bw)
	}()
	if err := write(bw); err != nil {
		return err
	}
	return bw.Flush()
}

// WriteFile writes the top-level file name in the output folder (index.csv)
// through write: into a temporary file beside it, synced unless NoSync, and
// renamed into place only when write and the flush succeed. Each file is
// replaced atomically; several such files are not replaced together (put
// files that must agree in one folder with Stage instead).
func (d *Dir) WriteFile(name string, write func(io.Writer) error) error {
	if err := checkName(name); err != nil {
		return err
	}
	if err := d.open(); err != nil {
		return err
	}
	final := filepath.Join(d.root, name)
	if fi, err := os.Lstat(final); err == nil && fi.IsDir() {
		return fmt.Errorf("write %s: it is a folder; rename the file or remove the folder", d.show(name))
	}
	var f *os.File
	tmp, err := createUnique(d.root, tmpPrefix, func(p string) (err error) {
		f, err = os.OpenFile(p, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o666)
		return err
	})
	if err != nil {
		return fmt.Errorf("write %s: %w", d.show(name), err)
	}
	err = writeBuffered(f, write)
	if err == nil && !d.noSync {
		err = f.Sync()
	}
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = d.renameLocked(tmp, final)
	}
	if err != nil {
		os.Remove(tmp)
		return fmt.Errorf("write %s: %w", d.show(name), err)
	}
	if !d.noSync {
		if err := syncDir(d.root); err != nil {
			return fmt.Errorf("write %s: sync %s: %w", d.show(name), d.show(), err)
		}
	}
	return nil
}

// renameLocked renames under the Dir's lock, refusing once it is closed.
func (d *Dir) renameLocked(oldpath, newpath string) error {
	d.mu.Lock()
	defer d.mu.Unlock()
	if d.closed {
		return ErrClosed
	}
	return d.rename(oldpath, newpath)
}

// open returns ErrClosed once the Dir is closed.
func (d *Dir) open() error {
	d.mu.Lock()
	defer d.mu.Unlock()
	if d.closed {
		return ErrClosed
	}
	return nil
}

// syncDir fsyncs a folder so that renames in it survive a power cut. File
// systems that cannot sync a folder (EINVAL) are let pass.
func syncDir(path string) error {
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	err = f.Sync()
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if errors.Is(err, syscall.EINVAL) {
		return nil
	}
	return err
}
