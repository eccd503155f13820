package outdir

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"sync"
	"testing"
	"time"
	"unicode"
	"unicode/utf8"
)

// Every check below follows from the requirements of the issue (whole-folder
// commits, a lock, stale staging removed, hostile names refused) and from
// rename(2) and flock(2) semantics (Linux man pages, from memory); none uses
// an outside number. "common practice, no source" applies throughout.

// outputFiles are the files of one alignment folder, named as the CLI
// writes them.
var outputFiles = []string{"stations.csv", "drops.csv", "summary.json"}

// mustOpen opens root and closes it when the test ends.
func mustOpen(tb testing.TB, root string, o Options) *Dir {
	tb.Helper()
	d, err := Open(context.Background(), root, o)
	if err != nil {
		tb.Fatalf("Open(%q): %v", root, err)
	}
	tb.Cleanup(func() { d.Close() })
	return d
}

// writeFolder commits folder name with files, each holding run id.
func writeFolder(d *Dir, name, run string, files []string) error {
	st, err := d.Stage(name)
	if err != nil {
		return err
	}
	defer st.Discard()
	for _, f := range files {
		if err := st.WriteFile(f, func(w io.Writer) error {
			_, err := fmt.Fprintf(w, "run=%s file=%s\n", run, f)
			return err
		}); err != nil {
			return err
		}
	}
	return st.Commit()
}

// folderRun returns the run id all visible files of root/name carry, and an
// error if they disagree, lack the marker, or the folder is missing.
func folderRun(root, name string) (string, []string, error) {
	dir := filepath.Join(root, name)
	entries, err := os.ReadDir(dir)
	if err != nil {
		return "", nil, err
	}
	run, files, marker := "", []string{}, false
	for _, e := range entries {
		if e.Name() == MarkerFile {
			marker = true
			continue
		}
		b, err := os.ReadFile(filepath.Join(dir, e.Name()))
		if err != nil {
			return "", nil, err
		}
		var r, f string
		if _, err := fmt.Sscanf(string(b), "run=%s file=%s\n", &r, &f); err != nil || f != e.Name() {
			return "", nil, fmt.Errorf("%s/%s holds %q", name, e.Name(), b)
		}
		if run != "" && r != run {
			return "", nil, fmt.Errorf("%s mixes runs %s and %s", name, run, r)
		}
		run = r
		files = append(files, e.Name())
	}
	if !marker {
		return "", nil, fmt.Errorf("%s has no %s", name, MarkerFile)
	}
	return run, files, nil
}

// checkTree checks that every folder in root holds the files of one run and
// that no staging, old or temporary entry is left.
func checkTree(root string, names []string) error {
	entries, err := os.ReadDir(root)
	if err != nil {
		return err
	}
	for _, e := range entries {
		if strings.HasPrefix(e.Name(), ".") && e.Name() != LockFile {
			return fmt.Errorf("left in %s: %s", root, e.Name())
		}
	}
	for _, n := range names {
		if _, _, err := folderRun(root, n); err != nil {
			return err
		}
	}
	return nil
}

func TestCommitReplacesWholeFolder(t *testing.T) {
	root := filepath.Join(t.TempDir(), "out")
	d := mustOpen(t, root, Options{})
	if err := writeFolder(d, "Main", "1", []string{"stations.csv", "drops.csv", "extra.csv"}); err != nil {
		t.Fatal(err)
	}
	if err := writeFolder(d, "Main", "2", outputFiles); err != nil {
		t.Fatal(err)
	}
	run, files, err := folderRun(root, "Main")
	if err != nil {
		t.Fatal(err)
	}
	slices.Sort(files)
	if want := []string{"drops.csv", "stations.csv", "summary.json"}; run != "2" || !slices.Equal(files, want) {
		t.Errorf("after the second commit Main holds run %s files %v, want run 2 files %v (no file of run 1 survives)", run, files, want)
	}
	if err := checkTree(root, []string{"Main"}); err != nil {
		t.Error(err)
	}
	if got := d.Written(); !slices.Equal(got, []string{"Main"}) {
		t.Errorf("Written() = %v, want [Main] (each name once)", got)
	}
}

func TestTwoGoroutinesNeverMix(t *testing.T) {
	root := filepath.Join(t.TempDir(), "out")
	names := []string{"Main", "East", "West"}
	var wg sync.WaitGroup
	errs := make(chan error, 2)
	for g := range 2 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for round := range 15 {
				run := fmt.Sprintf("g%d-%d", g, round)
				d, err := Open(context.Background(), root, Options{Wait: true, NoSync: true})
				if err != nil {
					errs <- err
					return
				}
				for _, n := range names {
					if err := writeFolder(d, n, run, outputFiles); err != nil {
						errs <- err
						d.Close()
						return
					}
				}
				// Still holding the lock, every folder is this run's.
				for _, n := range names {
					if got, _, err := folderRun(root, n); err != nil || got != run {
						errs <- fmt.Errorf("under the lock of run %s, %s holds run %s (%v)", run, n, got, err)
					}
				}
				d.Close()
			}
		}()
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		t.Error(err)
	}
	if err := checkTree(root, names); err != nil {
		t.Error(err)
	}
}

func TestLockRefusesAtOnce(t *testing.T) {
	root := filepath.Join(t.TempDir(), "out")
	mustOpen(t, root, Options{})
	_, err := Open(context.Background(), root, Options{})
	var busy *BusyError
	if !errors.As(err, &busy) {
		t.Fatalf("second Open without Wait: %v, want a *BusyError", err)
	}
	if busy.Holder.PID != os.Getpid() {
		t.Errorf("holder pid %d, want this process %d", busy.Holder.PID, os.Getpid())
	}
	want := fmt.Sprintf("output folder %s is in use by another canalstep run (pid %d); wait for it, pass --wait, or choose another --out", root, os.Getpid())
	if err.Error() != want {
		t.Errorf("message\n%s\nwant\n%s", err, want)
	}
}

func TestLockWaits(t *testing.T) {
	root := filepath.Join(t.TempDir(), "out")
	first := mustOpen(t, root, Options{NoSync: true})
	if err := writeFolder(first, "Main", "first", outputFiles); err != nil {
		t.Fatal(err)
	}
	waiting := make(chan Holder, 1)
	done := make(chan error, 1)
	go func() {
		d, err := Open(context.Background(), root, Options{Wait: true, NoSync: true, Waiting: func(h Holder) { waiting <- h }})
		if err == nil {
			err = writeFolder(d, "Main", "second", outputFiles)
			d.Close()
		}
		done <- err
	}()
	select {
	case h := <-waiting:
		if h.PID != os.Getpid() {
			t.Errorf("Waiting got pid %d, want %d", h.PID, os.Getpid())
		}
	case err := <-done:
		t.Fatalf("second Open returned (%v) while the first run held the lock", err)
	case <-time.After(time.Minute): // a deadline against a hang, not a timing assertion
		t.Fatal("Waiting was never called")
	}
	select {
	case err := <-done:
		t.Fatalf("second Open returned (%v) while the first run held the lock", err)
	default:
	}
	if got, _, _ := folderRun(root, "Main"); got != "first" {
		t.Errorf("Main holds run %q before the first run closed, want first", got)
	}
	first.Close()
	select {
	case err := <-done:
		if err != nil {
			t.Fatal(err)
		}
	case <-time.After(time.Minute):
		t.Fatal("second Open never got the lock after the first closed")
	}
	if got, _, _ := folderRun(root, "Main"); got != "second" {
		t.Errorf("Main holds run %q, want second", got)
	}
}

func TestLockWaitCancelled(t *testing.T) {
	root := filepath.Join(t.TempDir(), "out")
	mustOpen(t, root, Options{})
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	_, err := Open(ctx, root, Options{Wait: true, Waiting: func(Holder) { cancel() }})
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("Open after cancel: %v, want context.Canceled", err)
	}
	if _, err := Open(ctx, root, Options{}); !errors.Is(err, context.Canceled) {
		t.Errorf("Open with a done context: %v, want context.Canceled", err)
	}
}

func TestStaleEntriesRemoved(t *testing.T) {
	root := t.TempDir()
	mk := func(p string, dir bool) {
		t.Helper()
		p = filepath.Join(root, p)
		if dir {
			if err := os.MkdirAll(filepath.Join(p, "sub"), 0o755); err != nil {
				t.Fatal(err)
			}
			p = filepath.Join(p, "sub", "f")
		}
		if err := os.WriteFile(p, []byte("x"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	stale := []string{".Main.tmp-12345", ".canalstep-old-3", ".canalstep-stage-42", ".canalstep-tmp-7", ".index.csv.tmp-99"}
	for _, n := range stale {
		mk(n, !strings.Contains(n, "tmp-7") && !strings.Contains(n, "csv"))
	}
	keep := []string{".keep", ".Main.tmp-x", "notes.txt"}
	for _, n := range keep {
		mk(n, false)
	}
	d := mustOpen(t, root, Options{})
	got := d.Stale()
	slices.Sort(got)
	if !slices.Equal(got, stale) {
		t.Errorf("Stale() = %v, want %v", got, stale)
	}
	for _, n := range stale {
		if _, err := os.Lstat(filepath.Join(root, n)); !errors.Is(err, os.ErrNotExist) {
			t.Errorf("%s not removed: %v", n, err)
		}
	}
	for _, n := range keep {
		if _, err := os.Lstat(filepath.Join(root, n)); err != nil {
			t.Errorf("%s, not ours, was touched: %v", n, err)
		}
	}
}

// failRename makes d's renames fail where fail says so.
func failRename(d *Dir, fail func(oldpath, newpath string) bool) {
	d.rename = func(oldpath, newpath string) error {
		if fail(oldpath, newpath) {
			return &os.LinkError{Op: "rename", Old: oldpath, New: newpath, Err: errors.New("injected failure")}
		}
		return os.Rename(oldpath, newpath)
	}
}

func TestCommitRenameFailures(t *testing.T) {
	isStage := func(p string) bool { return strings.HasPrefix(filepath.Base(p), stagePrefix) }
	isOld := func(p string) bool { return strings.HasPrefix(filepath.Base(p), oldPrefix) }
	tests := []struct {
		name     string
		fail     func(oldpath, newpath string) bool
		wantMsg  string
		oldAside bool // the previous folder is left at .canalstep-old-1-Main
	}{
		{"moving the old folder aside fails", func(o, n string) bool { return isOld(n) }, "(it is unchanged)", false},
		{"renaming the stage in fails", func(o, n string) bool { return isStage(o) }, "(the previous folder is unchanged)", false},
		{"renaming in and putting back fail", func(o, n string) bool { return isStage(o) || isOld(o) }, "it is at ", true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			root := t.TempDir()
			d := mustOpen(t, root, Options{})
			if err := writeFolder(d, "Main", "old", outputFiles); err != nil {
				t.Fatal(err)
			}
			failRename(d, tt.fail)
			st, err := d.Stage("Main")
			if err != nil {
				t.Fatal(err)
			}
			if err := st.WriteFile("drops.csv", func(w io.Writer) error { _, err := io.WriteString(w, "run=new file=drops.csv\n"); return err }); err != nil {
				t.Fatal(err)
			}
			err = st.Commit()
			if err == nil || !strings.Contains(err.Error(), tt.wantMsg) || !strings.Contains(err.Error(), "injected failure") {
				t.Fatalf("Commit: %v, want an error with %q", err, tt.wantMsg)
			}
			st.Discard()
			if tt.oldAside {
				if run, _, err := folderRun(root, ".canalstep-old-1-Main"); err != nil || run != "old" {
					t.Errorf("previous folder aside: run %q, %v; want run old", run, err)
				}
				// As the message says, the next run puts it back.
				d.Close()
				d = mustOpen(t, root, Options{})
				if got := d.Restored(); !slices.Equal(got, []string{"Main"}) {
					t.Errorf("Restored() = %v, want [Main]", got)
				}
			}
			run, files, err := folderRun(root, "Main")
			if err != nil || run != "old" || len(files) != len(outputFiles) {
				t.Errorf("Main after the failed commit: run %q files %v (%v), want the old run's %d files", run, files, err, len(outputFiles))
			}
			if err := checkTree(root, []string{"Main"}); err != nil {
				t.Error(err)
			}
		})
	}
}

// TestKillBetweenRenames lays out what a run killed inside Commit leaves (a
// kill cannot be timed to land between two rename calls, so the state is
// built by hand) and checks that the next Open restores one run's folder.
func TestKillBetweenRenames(t *testing.T) {
	tests := []struct {
		name        string
		mainExists  bool // killed after renaming the stage in, before removing the old
		wantRun     string
		wantRestore []string
	}{
		{"killed between the renames", false, "old", []string{"Main"}},
		{"killed before removing the old", true, "new", nil},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			root := t.TempDir()
			d := mustOpen(t, root, Options{NoSync: true})
			if err := writeFolder(d, "Main", "old", outputFiles); err != nil {
				t.Fatal(err)
			}
			if err := writeFolder(d, "Next", "new", outputFiles); err != nil {
				t.Fatal(err)
			}
			d.Close()
			// Commit of Next as Main: the old Main moved aside, then (or not) Next renamed in.
			if err := os.Rename(filepath.Join(root, "Main"), filepath.Join(root, oldEntry(7, "Main"))); err != nil {
				t.Fatal(err)
			}
			next := filepath.Join(root, "Next")
			if tt.mainExists {
				if err := os.Rename(next, filepath.Join(root, "Main")); err != nil {
					t.Fatal(err)
				}
			} else if err := os.Rename(next, filepath.Join(root, stagePrefix+"2")); err != nil {
				t.Fatal(err)
			}
			for _, junk := range []string{stagePrefix + "1", oldPrefix + "x-Main", oldPrefix + "3-..", oldPrefix + "4-.hidden", oldPrefix + "5"} {
				if err := os.MkdirAll(filepath.Join(root, junk), 0o755); err != nil {
					t.Fatal(err)
				}
			}
			d = mustOpen(t, root, Options{})
			if got := d.Restored(); !slices.Equal(got, tt.wantRestore) {
				t.Errorf("Restored() = %v, want %v", got, tt.wantRestore)
			}
			if run, _, err := folderRun(root, "Main"); err != nil || run != tt.wantRun {
				t.Errorf("Main holds run %q (%v), want %s", run, err, tt.wantRun)
			}
			if err := checkTree(root, []string{"Main"}); err != nil {
				t.Error(err)
			}
		})
	}
}

func TestHostileNames(t *testing.T) {
	names := []struct{ name, why string }{
		{"", "empty"},
		{".", "dot"},
		{"..", "parent"},
		{"../x", "escapes the root"},
		{"a/../../x", "path"},
		{"/abs", "absolute"},
		{`..\x`, "Windows separator"},
		{".hidden", "hidden"},
		{LockFile, "our lock file"},
		{"a\x00b", "NUL"},
		{"a\x1b[2Jb", "ESC"},
		{"a\u202eb", "bidi override"},
		{"a\nb", "newline"},
		{"\xff\xfe", "invalid UTF-8"},
		{strings.Repeat("a", MaxNameLen+1), "too long"},
		{strings.Repeat("é", MaxNameLen/2+1), "too long in bytes"},
	}
	parent := t.TempDir()
	root := filepath.Join(parent, "out")
	d := mustOpen(t, root, Options{NoSync: true})
	ok, err := d.Stage("Main")
	if err != nil {
		t.Fatal(err)
	}
	defer ok.Discard()
	for _, tt := range names {
		errs := map[string]error{}
		_, errs["Stage"] = d.Stage(tt.name)
		errs["Dir.WriteFile"] = d.WriteFile(tt.name, func(w io.Writer) error { return nil })
		_, errs["Stage.Path"] = ok.Path(tt.name)
		errs["Stage.WriteFile"] = ok.WriteFile(tt.name, func(w io.Writer) error { return nil })
		for call, err := range errs {
			if !errors.Is(err, ErrName) {
				t.Errorf("%s(%q) (%s): %v, want ErrName", call, tt.name, tt.why, err)
				continue
			}
			msg := err.Error()
			for _, r := range msg {
				if unicode.IsControl(r) || unicode.Is(unicode.Cf, r) {
					t.Errorf("%s(%q): message %q carries %U raw", call, tt.name, msg, r)
				}
			}
			if n := utf8.RuneCountInString(msg); n > 200 {
				t.Errorf("%s(%q): message of %d characters, want a short line", call, tt.name, n)
			}
		}
	}
	for _, n := range []string{"Main", "Main canal", "Kanal-Süd_2", "主干渠", "CON", "-x"} {
		if _, err := d.Stage(n); err != nil {
			t.Errorf("Stage(%q): %v, want it accepted", n, err)
		}
	}
	entries, _ := os.ReadDir(parent)
	if len(entries) != 1 || entries[0].Name() != "out" {
		t.Errorf("entries beside the output folder: %v, want only out", entries)
	}
}

func TestRefusesForeignEntries(t *testing.T) {
	root := t.TempDir()
	if err := os.MkdirAll(filepath.Join(root, "Documents"), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(root, "Documents", "thesis.txt"), []byte("mine"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(root, "plain"), []byte("mine"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink(filepath.Join(root, "Documents"), filepath.Join(root, "link")); err != nil {
		t.Fatal(err)
	}
	d := mustOpen(t, root, Options{NoSync: true})
	for name, want := range map[string]string{
		"Documents": "was not written by canalstep", "plain": "is not a folder", "link": "is not a folder",
	} {
		if _, err := d.Stage(name); err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("Stage(%q): %v, want %q", name, err, want)
		}
	}
	// A folder that appears between Stage and Commit is refused too.
	st, err := d.Stage("Later")
	if err != nil {
		t.Fatal(err)
	}
	defer st.Discard()
	if err := os.Mkdir(filepath.Join(root, "Later"), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := st.Commit(); err == nil || !strings.Contains(err.Error(), "was not written by canalstep") {
		t.Errorf("Commit over a foreign folder: %v", err)
	}
	if b, err := os.ReadFile(filepath.Join(root, "Documents", "thesis.txt")); err != nil || string(b) != "mine" {
		t.Errorf("the user's file: %q, %v", b, err)
	}
	if err := d.WriteFile("Documents", func(w io.Writer) error { return nil }); err == nil || !strings.Contains(err.Error(), "it is a folder") {
		t.Errorf("WriteFile over a folder: %v", err)
	}
}

func TestRootChecks(t *testing.T) {
	base := t.TempDir()
	file := filepath.Join(base, "file")
	if err := os.WriteFile(file, []byte("x"), 0o644); err != nil {
		t.Fatal(err)
	}
	real := filepath.Join(base, "real")
	if err := os.Mkdir(real, 0o755); err != nil {
		t.Fatal(err)
	}
	links := map[string]string{"dangling": filepath.Join(base, "missing"), "tofile": file, "todir": real}
	for name, target := range links {
		if err := os.Symlink(target, filepath.Join(base, name)); err != nil {
			t.Fatal(err)
		}
	}
	for root, want := range map[string]string{
		"":                                 "no output folder given",
		file:                               "exists and is not a folder",
		filepath.Join(base, "dangling"):    "symbolic link that leads nowhere",
		filepath.Join(base, "tofile"):      "which is not a folder",
		filepath.Join(file, "sub"):         "not a directory",
		filepath.Join(base, "nul\x00name"): `contains a NUL byte`,
	} {
		if d, err := Open(context.Background(), root, Options{}); err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("Open(%q): %v, want %q", root, err, want)
			if d != nil {
				d.Close()
			}
		}
	}
	d := mustOpen(t, filepath.Join(base, "todir"), Options{})
	if d.Root() != real {
		t.Errorf("Root() = %q, want the link's target %q", d.Root(), real)
	}
	d.Close()
	deep := filepath.Join(base, "a", "b", "c")
	mustOpen(t, deep, Options{}).Close()
	if fi, err := os.Stat(deep); err != nil || !fi.IsDir() {
		t.Errorf("Open did not create %s: %v", deep, err)
	}
}

func TestLockFileSymlinkRefused(t *testing.T) {
	root := t.TempDir()
	victim := filepath.Join(t.TempDir(), "victim")
	if err := os.WriteFile(victim, []byte("precious"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink(victim, filepath.Join(root, LockFile)); err != nil {
		t.Fatal(err)
	}
	if _, err := Open(context.Background(), root, Options{}); err == nil || !strings.Contains(err.Error(), "is a symbolic link") {
		t.Errorf("Open with a planted lock link: %v", err)
	}
	if b, _ := os.ReadFile(victim); string(b) != "precious" {
		t.Errorf("the link's target was written: %q", b)
	}
}

func TestCloseDiscardsAndIsIdempotent(t *testing.T) {
	root := t.TempDir()
	d, err := Open(context.Background(), root, Options{})
	if err != nil {
		t.Fatal(err)
	}
	st, err := d.Stage("Main")
	if err != nil {
		t.Fatal(err)
	}
	if err := st.WriteFile("drops.csv", func(w io.Writer) error { return nil }); err != nil {
		t.Fatal(err)
	}
	if err := d.Close(); err != nil {
		t.Fatal(err)
	}
	if err := d.Close(); err != nil {
		t.Errorf("second Close: %v", err)
	}
	if err := checkTree(root, nil); err != nil {
		t.Errorf("after Close: %v", err)
	}
	if _, err := os.Lstat(filepath.Join(root, "Main")); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("an uncommitted stage reached Main: %v", err)
	}
	if err := st.Commit(); !errors.Is(err, ErrClosed) {
		t.Errorf("Commit after Close: %v, want ErrClosed", err)
	}
	if _, err := d.Stage("East"); !errors.Is(err, ErrClosed) {
		t.Errorf("Stage after Close: %v, want ErrClosed", err)
	}
	if err := d.WriteFile("index.csv", func(w io.Writer) error { return nil }); !errors.Is(err, ErrClosed) {
		t.Errorf("WriteFile after Close: %v, want ErrClosed", err)
	}
	st.Discard() // harmless
	mustOpen(t, root, Options{})
}

func TestStageCommitTwice(t *testing.T) {
	d := mustOpen(t, t.TempDir(), Options{NoSync: true})
	st, err := d.Stage("Main")
	if err != nil {
		t.Fatal(err)
	}
	if err := st.Commit(); err != nil {
		t.Fatal(err)
	}
	if err := st.Commit(); err == nil || !strings.Contains(err.Error(), "already committed") {
		t.Errorf("second Commit: %v", err)
	}
	if err := st.WriteFile("x.csv", func(w io.Writer) error { return nil }); err == nil {
		t.Error("WriteFile after Commit succeeded")
	}
}

func TestFailedWritesLeaveNothing(t *testing.T) {
	root := t.TempDir()
	d := mustOpen(t, root, Options{})
	boom := errors.New("encoder failed")
	half := func(w io.Writer) error { io.WriteString(w, "half"); return boom }
	full := func(w io.Writer) error { _, err := io.WriteString(w, "full\n"); return err }

	if err := d.WriteFile("index.csv", full); err != nil {
		t.Fatal(err)
	}
	if err := d.WriteFile("index.csv", half); !errors.Is(err, boom) {
		t.Errorf("WriteFile with a failing encoder: %v", err)
	}
	if b, _ := os.ReadFile(filepath.Join(root, "index.csv")); string(b) != "full\n" {
		t.Errorf("index.csv after a failed rewrite: %q, want the old content", b)
	}

	st, err := d.Stage("Main")
	if err != nil {
		t.Fatal(err)
	}
	if err := st.WriteFile("drops.csv", half); !errors.Is(err, boom) {
		t.Errorf("Stage.WriteFile with a failing encoder: %v", err)
	}
	if err := st.WriteFile("stations.csv", full); err != nil {
		t.Fatal(err)
	}
	if err := st.Commit(); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(filepath.Join(root, "Main", "drops.csv")); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("a half-written drops.csv was committed: %v", err)
	}
	if err := checkTree(root, nil); err != nil {
		t.Error(err)
	}
	// A file written through Path is committed like the others.
	st, err = d.Stage("East")
	if err != nil {
		t.Fatal(err)
	}
	p, err := st.Path("profile.svg")
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(p, []byte("<svg/>"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := st.Commit(); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(filepath.Join(root, "East", "profile.svg")); string(b) != "<svg/>" {
		t.Errorf("East/profile.svg = %q", b)
	}
}

func TestReport(t *testing.T) {
	root := filepath.Join(t.TempDir(), "out")
	d := mustOpen(t, root, Options{NoSync: true})
	for _, n := range []string{"Main", "East"} {
		if err := writeFolder(d, n, "1", outputFiles); err != nil {
			t.Fatal(err)
		}
	}
	many := []string{"Main", "East"}
	for i := range 14 {
		many = append(many, fmt.Sprintf("B%02d", i))
	}
	tests := []struct {
		all         []string
		interrupted bool
		want        string
	}{
		{[]string{"Main", "East", "West"}, false, "2 of 3 alignment folders written to " + root + ": Main, East; not written: West"},
		{[]string{"Main", "East", "West"}, true, "interrupted: 2 of 3 alignment folders written to " + root + ": Main, East; not written: West"},
		{[]string{"Main", "East"}, false, "2 of 2 alignment folders written to " + root + ": Main, East"},
		{[]string{"West", "North"}, true, "interrupted: 0 of 2 alignment folders written to " + root + "; not written: West, North"},
		{[]string{"Main", "Main", "bad\x1b[31m"}, false, "1 of 2 alignment folders written to " + root + `: Main; not written: bad\x1b[31m`},
		{nil, true, "interrupted: 0 of 0 alignment folders written to " + root},
		{many, false, "2 of 16 alignment folders written to " + root + ": Main, East; not written: B00, B01, B02, B03, B04, B05, B06, B07, B08, B09 and 4 more"},
	}
	for _, tt := range tests {
		if got := d.Report(tt.all, tt.interrupted); got != tt.want {
			t.Errorf("Report(%q, %v) =\n%s\nwant\n%s", tt.all, tt.interrupted, got, tt.want)
		}
	}
}

func TestHolderString(t *testing.T) {
	me, _ := os.Hostname()
	for _, tt := range []struct {
		h    Holder
		want string
	}{
		{Holder{}, "pid unknown"},
		{Holder{PID: 42, Host: me}, "pid 42"},
		{Holder{PID: 42}, "pid 42"},
		{Holder{PID: 42, Host: "node-7.invalid"}, "pid 42 on host node-7.invalid"},
		{Holder{PID: 42, Host: "evil\x1b]0;x\a"}, `pid 42 on host evil\x1b]0;x\a`},
	} {
		if got := tt.h.String(); got != tt.want {
			t.Errorf("%+v.String() = %q, want %q", tt.h, got, tt.want)
		}
	}
	// A planted, huge or garbled lock file yields "pid unknown", never a panic.
	path := filepath.Join(t.TempDir(), LockFile)
	for _, content := range []string{"", "pid", "pid -3", "pid 99999999999999999999", strings.Repeat("x", 1<<20), "host h pid 7"} {
		os.WriteFile(path, []byte(content), 0o644)
		h := readHolder(path)
		if content == "host h pid 7" {
			if h != (Holder{PID: 7, Host: "h"}) {
				t.Errorf("readHolder(%q) = %+v", content, h)
			}
		} else if h.PID != 0 {
			t.Errorf("readHolder(%.20q) = %+v, want pid 0", content, h)
		}
	}
}
