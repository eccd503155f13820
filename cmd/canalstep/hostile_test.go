package main

import (
	"bytes"
	"context"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"unicode/utf8"

	"canalstep/planner"
)

// Issue 8: hostile input through the real process (the test binary running
// main, see asMainEnv): each case ends in the documented exit status, one
// line on stderr and nothing half-written in --out.

// TestHostileInputs runs canalstep as a child process over a table of
// hostile inputs. Every case fails before a plan is made, so the table is
// quick; the bounded-work case is refused before the optimiser allocates.
func TestHostileInputs(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	aln := writeGeoJSON(t, dir, "east.geojson", demoLine(east, 2, "", nil))
	big := filepath.Join(dir, "big.geojson")
	// A sparse file one byte over the 512 MiB cap: no disk is written and
	// nothing may read it.
	bigFile(t, big, maxAlignmentBytes+1)
	bigTOML := filepath.Join(dir, "big.toml")
	bigFile(t, bigTOML, maxDesignBytes+1)
	fifo := filepath.Join(dir, "fifo")
	if err := syscall.Mkfifo(fifo, 0o600); err != nil {
		t.Fatal(err)
	}
	zeroLink := filepath.Join(dir, "zero.geojson")
	if err := os.Symlink("/dev/zero", zeroLink); err != nil {
		t.Fatal(err)
	}
	syntax := writeFile(t, dir, "syntax.toml", "flow = 2.5\n[alignment.\"East Branch\"\n")
	unknown := writeFile(t, dir, "unknown.toml", "flow = 2.5\ndrop_hieghts = [1.0]\n")
	absurd := writeFile(t, dir, "absurd.toml", "bank_top_width = 1e300\n")
	long := strings.Repeat("9", 10000) + "x"
	outFile := writeFile(t, dir, "out-is-a-file", "not a folder\n")

	dem := demoDEM(t)
	plan := func(extra ...string) []string {
		return append([]string{"plan", "--dem", dem, "--alignment", aln}, append(append([]string{}, designArgs...), extra...)...)
	}
	cases := []struct {
		name string
		args []string
		code int
		want string // in the stderr line
	}{
		{"/dev/zero as the alignment", []string{"plan", "--dem", dem, "--alignment", "/dev/zero"}, 2, "not a regular file"},
		{"/dev/zero behind a link", []string{"plan", "--dem", dem, "--alignment", zeroLink}, 2, "not a regular file"},
		{"/dev/zero as the design", plan("--design", "/dev/zero"), 2, "the design file /dev/zero is not a regular file"},
		{"a FIFO as the alignment", []string{"profile", "--dem", dem, "--alignment", fifo}, 2, "not a regular file"},
		{"a FIFO as the DEM", []string{"profile", "--dem", fifo, "--alignment", aln}, 2, "not a raster file"},
		{"a directory as the DEM", []string{"profile", "--dem", dir, "--alignment", aln}, 2, "is a directory"},
		{"/dev/zero as the DEM", []string{"profile", "--dem", "/dev/zero", "--alignment", aln}, 2, "not a raster"},
		{"a directory as the alignment", []string{"profile", "--dem", dem, "--alignment", dir}, 2, "not a regular file"},
		{"GeoJSON over the size cap", []string{"profile", "--dem", dem, "--alignment", big}, 2, "is 536870913 bytes, more than the 536870912 allowed"},
		{"TOML over the size cap", plan("--design", bigTOML), 2, "is 1048577 bytes, more than the 1048576 allowed"},
		{"a step of 1e-9 m", plan("--step", "1e-9"), 2, "1e-9 is outside [0.0001, 1] m"},
		{"a 1e300 m bed", plan("--bottom-width", "1e300"), 2, "1e300 is outside [0, 500] m"},
		{"a 1e300 price", plan("--cost-cut", "1e300"), 2, "1e300 is outside [0, 1e+09] per m³"},
		{"a 1e300 flow", plan("--flow", "1e300"), 2, "1e300 is outside (0, 10000] m³/s"},
		{"a 1e300 flow in cfs", plan("--units", "us", "--flow", "1e300"), 2, "1e300 is outside (0, 353147] cfs"},
		{"an infinite flow", plan("--flow", "+Inf"), 2, "not a finite number"},
		{"a NaN margin", plan("--command-margin", "NaN"), 2, "not a finite number"},
		{"a 1e300 bank in the design file", plan("--design", absurd), 2, "bank_top_width = 1e+300: invalid argument \"1e+300\" for \"--bank-top-width\" flag: 1e+300 is outside [0, 100] m"},
		{"a 1e300 drop height", plan("--drop-heights", "1e300"), 2, "1e+300 is outside (0, 20] m"},
		{"a 1e300 chainage", plan("--fixed-invert", "1e300:450"), 2, "CHAINAGE:LEVEL"},
		{"a TOML syntax error", plan("--design", syntax), 2, "design file"},
		{"an unknown TOML key", plan("--design", unknown), 2, `unknown key "drop_hieghts"`},
		{"a second fixed invert at one station", plan("--fixed-invert", "200:455", "--fixed-invert", "200:454"), 2, "both stand at chainage 200"},
		{"a 1e300 m drop", withArgs(t42Args, "--height", "1e300"), 2, "1e300 is outside (0, 20] m"},
		{"a 1e300 m drop as JSON", withArgs(t42Args, "--height", "1e300", "--json"), 2, "1e300 is outside (0, 20] m"},
		{"more states than --max-memory", plan("--max-memory", "1MB", "--step", "0.001"), 2, "raise --max-memory"},
		{"--out is a file", plan("--out", outFile), 2, "out-is-a-file"},
		{"a long bad value is clipped", plan("--drop-heights", long), 2, "is not a number"},
		{"an unknown command", []string{"plan\x1b[2J\x07"}, 2, `unknown command "plan\\x1b[2J\\a"`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			out := filepath.Join(t.TempDir(), "out")
			args := c.args
			if !containsArg(args, "--out") && args[0] != "drop" {
				args = append(args, "--out", out)
			}
			stdout, stderr, code := runBinary(t, args...)
			t.Log(stderr)
			if code != c.code {
				t.Errorf("exit status %d, want %d; stdout:\n%s", code, c.code, stdout)
			}
			checkOneLine(t, stderr, c.want)
			if len(stderr) > 2500 {
				t.Errorf("stderr is %d bytes: a bad value is echoed in full", len(stderr))
			}
			checkNoPartial(t, out)
			checkNoControls(t, "stdout", stdout)
			checkNoControls(t, "stderr", stderr)
		})
	}
}

// bigFile makes a sparse file of size bytes (nothing is written to disk).
func bigFile(t testing.TB, path string, size int64) {
	t.Helper()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Truncate(size); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
}

func containsArg(args []string, a string) bool {
	for _, x := range args {
		if x == a {
			return true
		}
	}
	return false
}

// checkNoControls fails when s, printed on a terminal, holds a control
// character other than newline and tab, or a character that reorders or
// hides text (bidi controls, zero-width characters): names must reach the
// terminal escaped (issue 8). The list of characters is Unicode's (bidi
// controls U+202A–U+202E and U+2066–U+2069, marks U+200E and U+200F:
// Unicode UAX #9; zero-width U+200B–U+200D and U+FEFF), from memory.
func checkNoControls(t testing.TB, what, s string) {
	t.Helper()
	if !utf8.ValidString(s) {
		t.Errorf("%s is not valid UTF-8: %q", what, s)
	}
	for _, r := range s {
		switch {
		case r == '\n' || r == '\t':
		case r < 0x20 || r == 0x7f || (r >= 0x80 && r < 0xa0),
			r >= 0x202a && r <= 0x202e, r >= 0x2066 && r <= 0x2069, r == 0x200e, r == 0x200f,
			r >= 0x200b && r <= 0x200d, r == 0xfeff:
			t.Errorf("%s holds the raw character %U: %q", what, r, s)
			return
		}
	}
}

// TestHostileNames plans an alignment whose name carries ESC, BEL, CR, NUL
// and bidi controls, beside one that fails (it leaves the DEM) so that its
// name reaches stderr: no raw control character reaches stdout or stderr,
// the folders are named safely and committed whole, and every XML output
// (profile.svg, the LandXML plan.xml) stays well-formed for encoding/xml.
func TestHostileNames(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	aln := writeGeoJSON(t, dir, "names.geojson",
		demoLine(east, 2, "Main\x1b[31m canal\x07\r\x00 \u202eevil\u2066", map[string]any{"\x1b[2Jcolour\u202e": "red"}),
		feature(offDEM("Off\x1b]0;pwned\x07 DEM\u202e")))
	out := filepath.Join(dir, "out")
	stdout, stderr, code := runBinary(t, append([]string{"plan", "--dem", demoDEM(t), "--alignment", aln, "--out", out}, designArgs...)...)
	t.Log(stderr)
	if code != 2 { // the third leaves the DEM: bad input
		t.Errorf("exit status %d, want 2\n%s", code, stdout)
	}
	checkOneLine(t, stderr, "leaves the DEM")
	checkNoControls(t, "stdout", stdout)
	checkNoControls(t, "stderr", stderr)
	if !strings.Contains(stdout, `\x1b[31m`) || !strings.Contains(stderr, `\x1b]0;pwned`) {
		t.Errorf("the names are not shown escaped:\n%s\n%s", stdout, stderr)
	}
	entries, err := os.ReadDir(out)
	if err != nil {
		t.Fatal(err)
	}
	var folders []string
	for _, e := range entries {
		if e.IsDir() {
			folders = append(folders, e.Name())
		}
	}
	if len(folders) != 1 {
		t.Fatalf("folders %q, want the planned alignment's", folders)
	}
	checkNoPartial(t, out, folders...)
	for _, f := range folders {
		checkNoControls(t, "folder name", f)
		checkFolder(t, filepath.Join(out, f), planFiles)
		for _, x := range []string{"profile.svg", "plan.xml"} {
			checkXML(t, filepath.Join(out, f, x))
		}
	}
}

// checkXML parses path to its end with encoding/xml in strict mode.
func checkXML(t testing.TB, path string) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	d := xml.NewDecoder(bytes.NewReader(b))
	d.Strict = true
	for {
		_, err := d.Token()
		if err == io.EOF {
			return
		}
		if err != nil {
			t.Errorf("%s is not well-formed XML: %v", path, err)
			return
		}
	}
}

// panicWriter panics on every write, as a bug below run would.
type panicWriter struct{}

func (panicWriter) Write([]byte) (int, error) { panic("write to a broken writer") }

// TestInternalError: a panic below run is recovered: exit status 3 and one
// line on stderr that says it is a bug, with no stack trace (issue 8).
func TestInternalError(t *testing.T) {
	var stderr bytes.Buffer
	code := runMain(context.Background(), []string{"--version"}, panicWriter{}, &stderr)
	if code != 3 {
		t.Errorf("exit status %d, want 3", code)
	}
	checkOneLine(t, stderr.String(), "internal error: write to a broken writer (a bug in canalstep; please report it")
	for _, stack := range []string{"goroutine ", ".go:", "panic("} {
		if strings.Contains(stderr.String(), stack) {
			t.Errorf("stderr shows a stack trace (%q): %s", stack, stderr.String())
		}
	}
	// A panic in an alignment's job runs on a worker goroutine: recoverJob
	// turns it into that job's internal error.
	err := func() (err error) {
		defer recoverJob(&err)
		var m map[string]int
		m["x"]++ // a nil-map write: a runtime panic
		return nil
	}()
	if exitCode(err) != 3 || !strings.Contains(err.Error(), "internal error: assignment to entry in nil map") {
		t.Errorf("recovered job error %v has exit status %d, want 3", err, exitCode(err))
	}
}

// TestExitCodes checks exitCode against the table of --help: the most
// severe cause of a run with failed alignments decides.
func TestExitCodes(t *testing.T) {
	input := fmt.Errorf("alignment: %w", planner.ErrInput)
	infeasible := fmt.Errorf("plan: %w", planner.ErrInfeasible)
	bug := internalError{"index out of range"}
	fail := func(causes ...error) error { return &runFailure{failed: len(causes), total: 3, causes: causes} }
	for _, c := range []struct {
		err  error
		want int
	}{
		{nil, 0},
		{infeasible, 1},
		{errors.New("disk full"), 1},
		{input, 2},
		{usagef("--flow is missing"), 2},
		{bug, 3},
		{fail(infeasible), 1},
		{fail(infeasible, input), 2},
		{fail(input, bug, infeasible), 3},
		{interrupted{syscall.SIGINT}, 130},
		{interrupted{syscall.SIGTERM}, 143},
		{interrupted{syscall.SIGHUP}, 129},
	} {
		if got := exitCode(c.err); got != c.want {
			t.Errorf("exitCode(%v) = %d, want %d", c.err, got, c.want)
		}
	}
}
