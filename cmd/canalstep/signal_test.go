package main

import (
	"bytes"
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"canalstep/report/outdir"
)

// Issue 8: signals, killed runs and concurrent runs, through the real
// process (the test binary running main, see asMainEnv).

// laterals writes dir/file, an alignment file of n short laterals (the
// first segments of the demo branches in turn, 40 to 60 stations each)
// named "Lateral 1" to "Lateral n", and returns its path and folder names.
func laterals(t testing.TB, dir, file string, n int) (string, []string) {
	t.Helper()
	var fs []feature
	var names []string
	for i := 1; i <= n; i++ {
		name := "Lateral " + strconv.Itoa(i)
		fs = append(fs, demoLine((i-1)%3, 2, name, nil))
		names = append(names, "Lateral_"+strconv.Itoa(i))
	}
	return writeGeoJSON(t, dir, file, fs...), names
}

// child is canalstep started as a child process.
type child struct {
	cmd            *exec.Cmd
	stdout, stderr syncBuffer
	done           chan struct{}
	code           int
}

// syncBuffer is a bytes.Buffer that the test reads while the child's
// output is copied into it.
type syncBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (l *syncBuffer) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.Write(p)
}

func (l *syncBuffer) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.String()
}

func start(t testing.TB, args ...string) *child {
	t.Helper()
	c := &child{cmd: childCommand(context.Background(), args...), done: make(chan struct{})}
	c.cmd.Stdout, c.cmd.Stderr = &c.stdout, &c.stderr
	if err := c.cmd.Start(); err != nil {
		t.Fatal(err)
	}
	go func() {
		err := c.cmd.Wait()
		c.code = c.cmd.ProcessState.ExitCode()
		if ws, ok := c.cmd.ProcessState.Sys().(syscall.WaitStatus); ok && ws.Signaled() {
			c.code = 128 + int(ws.Signal())
		}
		_ = err
		close(c.done)
	}()
	return c
}

// wait waits for the child to end, at most a minute.
func (c *child) wait(t testing.TB) int {
	t.Helper()
	select {
	case <-c.done:
		return c.code
	case <-time.After(time.Minute):
		c.cmd.Process.Kill()
		<-c.done
		t.Fatalf("canalstep did not end within a minute\n%s\n%s", c.stdout.String(), c.stderr.String())
		return -1
	}
}

func (c *child) running() bool {
	select {
	case <-c.done:
		return false
	default:
		return true
	}
}

// await polls every 5 ms, for at most a minute, until cond holds; it fails
// the test when the child ends first.
func (c *child) await(t testing.TB, what string, cond func() bool) {
	t.Helper()
	deadline := time.Now().Add(time.Minute)
	for !cond() {
		if !c.running() || time.Now().After(deadline) {
			t.Fatalf("canalstep ended or a minute passed before %s (exit %d)\n%s\n%s", what, c.code, c.stdout.String(), c.stderr.String())
		}
		time.Sleep(5 * time.Millisecond)
	}
}

// committed returns the folders of out holding the marker a commit writes.
func committed(out string) []string {
	var names []string
	entries, _ := os.ReadDir(out)
	for _, e := range entries {
		if _, err := os.Stat(filepath.Join(out, e.Name(), outdir.MarkerFile)); err == nil && e.IsDir() && !strings.HasPrefix(e.Name(), ".") {
			names = append(names, e.Name())
		}
	}
	return names
}

// staging returns the hidden staging, set-aside and temporary entries of
// out (report/outdir's names).
func staging(out string) []string {
	var names []string
	entries, _ := os.ReadDir(out)
	for _, e := range entries {
		if strings.HasPrefix(e.Name(), ".") && e.Name() != outdir.LockFile {
			names = append(names, e.Name())
		}
	}
	return names
}

var interruptedLine = regexp.MustCompile(`^interrupted: (\d+) of (\d+) alignment folders written to `)

// TestSignals interrupts plan (SIGINT) and profile (SIGTERM, SIGHUP) once
// the first alignment folder is committed: the run stops between
// alignments and exits 128 + the signal's number (130, 143, 129: POSIX
// signal numbers on Linux, signal(7)); its last stdout line counts the
// folders written; every committed folder is whole; nothing is staged;
// stderr is one line.
func TestSignals(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	aln, names := laterals(t, dir, "laterals.geojson", 8)
	for _, c := range []struct {
		sig   syscall.Signal
		code  int
		cmd   string
		files []string
	}{
		{syscall.SIGINT, 130, "plan", planFiles},
		{syscall.SIGTERM, 143, "profile", []string{"ground.csv", "ground.png", outdir.MarkerFile}},
		{syscall.SIGHUP, 129, "profile", []string{"ground.csv", "ground.png", outdir.MarkerFile}},
	} {
		t.Run(c.sig.String(), func(t *testing.T) {
			t.Parallel()
			out := filepath.Join(t.TempDir(), "out")
			args := []string{c.cmd, "--dem", demoDEM(t), "--alignment", aln, "--jobs", "1", "--out", out}
			if c.cmd == "plan" {
				args = append(args, designArgs...)
			} else {
				args = append(args, "--alignment-crs", "EPSG:32634")
			}
			ch := start(t, args...)
			ch.await(t, "the first folder was committed", func() bool { return len(committed(out)) > 0 })
			if err := ch.cmd.Process.Signal(c.sig); err != nil {
				t.Fatal(err)
			}
			code := ch.wait(t)
			stdout, stderr := ch.stdout.String(), ch.stderr.String()
			if code != c.code {
				t.Fatalf("exit status %d, want %d\n%s\n%s", code, c.code, stdout, stderr)
			}
			checkOneLine(t, stderr, "interrupted by ")
			lines := strings.Split(strings.TrimRight(stdout, "\n"), "\n")
			m := interruptedLine.FindStringSubmatch(lines[len(lines)-1])
			if m == nil {
				t.Fatalf("last stdout line %q is not the interruption count", lines[len(lines)-1])
			}
			done := committed(out)
			if n, _ := strconv.Atoi(m[1]); n != len(done) || m[2] != strconv.Itoa(len(names)) {
				t.Errorf("last line %q, but %d of %d folders are committed", lines[len(lines)-1], len(done), len(names))
			}
			if len(done) == len(names) {
				t.Errorf("all %d folders written: the signal came too late to test an interruption", len(names))
			}
			var folders []string
			for _, f := range done {
				checkFolder(t, filepath.Join(out, f), c.files)
				folders = append(folders, filepath.Join(out, f))
			}
			sameFiles(t, folders...)
			checkNoPartial(t, out, done...)
			if n := strings.Count(stdout+stderr, "context canceled"); n > 0 {
				t.Errorf("the output says \"context canceled\" %d times", n)
			}
		})
	}
}

// TestKilledRunCleared kills a plan with SIGKILL while it stages a
// folder, which no handler can catch: the next run into the same --out
// clears what the killed run left staged, and the folders it committed
// are whole.
func TestKilledRunCleared(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	aln, _ := laterals(t, dir, "laterals.geojson", 6)
	out := filepath.Join(dir, "out")
	ch := start(t, append([]string{"plan", "--dem", demoDEM(t), "--alignment", aln, "--jobs", "1", "--out", out}, designArgs...)...)
	ch.await(t, "a folder was staged", func() bool { return len(staging(out)) > 0 })
	if err := ch.cmd.Process.Kill(); err != nil {
		t.Fatal(err)
	}
	if code := ch.wait(t); code != 128+int(syscall.SIGKILL) {
		t.Fatalf("exit status %d after SIGKILL", code)
	}
	left := staging(out)
	t.Logf("the killed run left %q", left)
	done := committed(out)
	one := writeGeoJSON(t, dir, "one.geojson", demoLine(east, 2, "", nil))
	_, stderr, code := runBinary(t, "profile", "--dem", demoDEM(t), "--alignment", one, "--alignment-crs", "EPSG:32634", "--out", out)
	if code != 0 {
		t.Fatalf("the next run: exit %d: %s", code, stderr)
	}
	if s := staging(out); len(s) > 0 {
		t.Errorf("after the next run %s still holds %q", out, s)
	}
	for _, f := range done {
		checkFolder(t, filepath.Join(out, f), planFiles)
	}
	checkNoPartial(t, out, append(done, "East_Branch")...)
}

// TestBusyOutput holds the lock of an --out folder as another run would:
// a run into it without --wait is refused at once (exit 2, one line naming
// the holder), one with --wait waits, says so, and writes its folder once
// the lock is released.
func TestBusyOutput(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	aln := writeGeoJSON(t, dir, "one.geojson", demoLine(east, 2, "", nil))
	out := filepath.Join(dir, "out")
	held, err := outdir.Open(context.Background(), out, outdir.Options{NoSync: true})
	if err != nil {
		t.Fatal(err)
	}
	defer held.Close()
	args := []string{"profile", "--dem", demoDEM(t), "--alignment", aln, "--alignment-crs", "EPSG:32634", "--out", out}
	_, stderr, code := runBinary(t, args...)
	if code != 2 {
		t.Errorf("a run into a busy folder: exit %d, want 2", code)
	}
	checkOneLine(t, stderr, "is in use by another canalstep run (pid "+strconv.Itoa(os.Getpid())+")")
	checkNoPartial(t, out)

	ch := start(t, append(args, "--wait")...)
	ch.await(t, "it said it waits", func() bool { return strings.Contains(ch.stderr.String(), "waiting for the run of pid") })
	time.Sleep(200 * time.Millisecond)
	if !ch.running() || len(committed(out)) > 0 {
		t.Fatalf("the waiting run did not wait\n%s\n%s", ch.stdout.String(), ch.stderr.String())
	}
	if err := held.Close(); err != nil {
		t.Fatal(err)
	}
	if code := ch.wait(t); code != 0 {
		t.Fatalf("the waiting run: exit %d\n%s", code, ch.stderr.String())
	}
	checkFolder(t, filepath.Join(out, "East_Branch"), []string{"ground.csv", "ground.png", outdir.MarkerFile})
	checkNoPartial(t, out, "East_Branch")
}

// TestConcurrentRuns runs two plans with different flows into one --out,
// the second with --wait started while the first is writing: the second
// waits; every folder both write ends as the second run alone writes it
// (compared byte for byte with a run of its own, the output path aside);
// the folders only the first writes are whole. No folder mixes the files
// of two runs.
func TestConcurrentRuns(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	many, _ := laterals(t, dir, "many.geojson", 4) // the first run's: it is still writing when the second starts
	two, _ := laterals(t, dir, "two.geojson", 2)
	args := func(aln, out, flow string) []string {
		a := []string{"plan", "--dem", demoDEM(t), "--alignment", aln, "--jobs", "1", "--wait", "--out", out}
		a = append(a, designArgs...)
		return append(a, "--flow", flow)
	}
	shared, alone := filepath.Join(dir, "shared"), filepath.Join(dir, "alone")
	first := start(t, args(many, shared, "2.2")...)
	first.await(t, "its first folder was committed", func() bool { return len(committed(shared)) > 0 })
	second := start(t, args(two, shared, "2.5")...)
	if code := first.wait(t); code != 0 {
		t.Fatalf("first run: exit %d\n%s", code, first.stderr.String())
	}
	if code := second.wait(t); code != 0 {
		t.Fatalf("second run: exit %d\n%s", code, second.stderr.String())
	}
	if !strings.Contains(second.stderr.String(), "waiting for the run of pid "+strconv.Itoa(first.cmd.Process.Pid)) {
		t.Errorf("the second run did not wait for the first: %q", second.stderr.String())
	}
	if _, stderr, code := runBinary(t, args(two, alone, "2.5")...); code != 0 {
		t.Fatalf("reference run: exit %d: %s", code, stderr)
	}
	got, want := readTree(t, shared), readTree(t, alone)
	for name, b := range want {
		b = bytes.ReplaceAll(b, []byte(alone), []byte("OUT"))
		if g := bytes.ReplaceAll(got[name], []byte(shared), []byte("OUT")); !bytes.Equal(g, b) {
			t.Errorf("%s differs from the second run's own", name)
		}
	}
	done := committed(shared)
	if len(done) != 4 {
		t.Fatalf("%d folders in the shared --out, want 4", len(done))
	}
	var folders []string
	for _, f := range done {
		folders = append(folders, filepath.Join(shared, f))
		checkFolder(t, folders[len(folders)-1], planFiles)
	}
	sameFiles(t, folders...)
	checkNoPartial(t, shared, done...)
}
