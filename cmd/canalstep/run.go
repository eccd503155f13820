package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"runtime/debug"
	"strings"
	"syscall"

	flag "github.com/spf13/pflag"

	"canalstep/planner"
	"canalstep/planner/corridor"
	"canalstep/report/textsafe"
)

// command is one subcommand of canalstep.
type command struct {
	name    string
	summary string
	run     func(ctx context.Context, args []string, stdout, stderr io.Writer) error
}

// commands lists the subcommands in the order the help text shows them.
func commands() []command {
	return []command{
		// Each subcommand adds one line here.
		{"profile", "ground long section along each alignment (ground.csv, ground.png)", runProfile},
		{"section", "uniform flow, velocity-limited slopes and freeboard of one canal section", runSection},
		{"drop", "straight drop with stilling basin: Rand geometry, jump, basin, outlet check", runDrop},
		{"plan", "least-cost drop placement on the real ground, beside two hand methods, with every deliverable", runPlan},
		{"compare", "plan several drop-height sets and compare earthwork and cost", runCompare},
		{"batch", "many alignments x drop-height alternatives: isolated jobs, index, resume, shards", runBatch},
		{"merge", "combine the shard folders of one batch into one folder and index", runMerge},
		{"demo", "build the fictional demo scheme on generated terrain and run canalstep on it", runDemo},
	}
}

// run parses the subcommand and runs it. It never calls os.Exit and writes only
// to the writers it is given, so tests call it in-process. A panic below it
// is recovered as an internalError (exit status 3, one line, no stack).
func run(ctx context.Context, args []string, stdout, stderr io.Writer) (err error) {
	defer func() {
		if p := recover(); p != nil {
			err = internalError{fmt.Sprint(p)}
		}
	}()
	if len(args) == 0 || args[0] == "-h" || args[0] == "--help" || args[0] == "help" {
		usage(stdout)
		return nil
	}
	if args[0] == "--version" || args[0] == "version" {
		fmt.Fprintf(stdout, "canalstep %s\n", version())
		return nil
	}
	for _, c := range commands() {
		if c.name == args[0] {
			err = c.run(ctx, args[1:], stdout, stderr)
			if cause := context.Cause(ctx); err != nil && cause != nil && errors.Is(err, context.Canceled) {
				return cause // interrupted: the signal decides the exit status
			}
			return err
		}
	}
	return usagef("unknown command %q; run 'canalstep help' for the list", textsafe.Clip(args[0], 80))
}

// version is the module version of the binary, or "devel" for a build
// from a work tree.
func version() string {
	if bi, ok := debug.ReadBuildInfo(); ok && bi.Main.Version != "" && bi.Main.Version != "(devel)" {
		return bi.Main.Version
	}
	return "devel"
}

func usage(w io.Writer) {
	fmt.Fprintln(w, "canalstep: canal long sections with drop structures, from a DEM and GeoJSON alignments")
	fmt.Fprintln(w, "\nUsage: canalstep <command> [flags]\n\nCommands:")
	for _, c := range commands() {
		fmt.Fprintf(w, "  %-9s %s\n", c.name, c.summary)
	}
	fmt.Fprintln(w, "\nRun 'canalstep <command> --help' for the flags of one command.")
	fmt.Fprintf(w, "\n%s\n", exitCodeHelp)
}

// exitCodeHelp is the exit-code table, in every --help and the README.
const exitCodeHelp = `Exit status: 0 success; 1 a design or data failure (an infeasible plan, an alignment that failed);
2 bad usage or input (a flag, a file, a value out of range); 3 an internal error (please report it);
130, 143, 129 interrupted by SIGINT, SIGTERM, SIGHUP (finished folders are whole, nothing is half-written).`

// internalError is a recovered panic: a bug, never the user's fault.
type internalError struct{ what string }

func (e internalError) Error() string {
	return "internal error: " + textsafe.Clip(e.what, 200) + " (a bug in canalstep; please report it with the command line that caused it)"
}

// interrupted is the cause of a run stopped by a signal.
type interrupted struct{ sig syscall.Signal }

func (e interrupted) Error() string { return "interrupted by " + e.sig.String() }

// recoverJob turns a panic in one alignment's job, which runs on a worker
// goroutine that run's own recovery does not cover, into that job's
// internalError; deferred by every job.
func recoverJob(err *error) {
	if p := recover(); p != nil {
		*err = internalError{fmt.Sprint(p)}
	}
}

// runFailure is the error of a run in which some alignments failed (the
// others were written): one line naming the first failure and what was and
// was not written. Its exit status is the most severe of its causes'
// (exitCode looks through Unwrap): 3 for a bug, 2 for bad input, else 1.
type runFailure struct {
	failed, total int
	first         string // "NAME: what went wrong" of the first failure
	written       string // outdir.Dir.Report
	causes        []error
}

func (e *runFailure) Error() string {
	if e.failed == 1 {
		return e.first + "; " + e.written
	}
	return fmt.Sprintf("%d of %d alignments failed, the first %s; %s", e.failed, e.total, e.first, e.written)
}

func (e *runFailure) Unwrap() []error { return e.causes }

// add records that alignment name failed with err, worded as text.
func (e *runFailure) add(name, text string, err error) {
	if e.failed == 0 {
		e.first = textsafe.Terminal(name) + ": " + text
	}
	e.failed++
	e.causes = append(e.causes, err)
}

// usageError marks a mistake in the command line: exit status 2.
type usageError struct{ err error }

func (e usageError) Error() string { return e.err.Error() }
func (e usageError) Unwrap() error { return e.err }

// usagef returns a usageError with a formatted message.
func usagef(format string, a ...any) error {
	return usageError{fmt.Errorf(format, a...)}
}

// newFlagSet returns a pflag set for one subcommand that reports errors
// instead of exiting and prints its help to stdout.
func newFlagSet(name string, stdout io.Writer) *flag.FlagSet {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	fs.SetOutput(stdout)
	fs.SortFlags = false
	return fs
}

// parseFlags parses args into fs. Help is not an error; other parse problems
// become usage errors. It reports whether the command should go on.
func parseFlags(fs *flag.FlagSet, args []string) (bool, error) {
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return false, nil
		}
		return false, usagef("%s: %v (see 'canalstep %s --help')", fs.Name(), err, fs.Name())
	}
	if fs.NArg() > 0 {
		return false, usagef("%s: unexpected argument %q (see 'canalstep %s --help')", fs.Name(), fs.Arg(0), fs.Name())
	}
	return true, nil
}

// exitCode maps an error to the process exit status (exitCodeHelp).
func exitCode(err error) int {
	if err == nil {
		return 0
	}
	var (
		u   usageError
		ie  internalError
		sig interrupted
	)
	switch {
	case errors.As(err, &sig):
		return 128 + int(sig.sig)
	case errors.As(err, &ie):
		return 3
	case errors.As(err, &u), errors.Is(err, planner.ErrInput), errors.Is(err, corridor.ErrInput):
		return 2
	}
	return 1
}

// oneLine folds an error message onto a single line with no control or
// bidi characters; the lines of joined errors are separated by "; ".
func oneLine(err error) string {
	var parts []string
	for _, l := range strings.Split(err.Error(), "\n") {
		if f := strings.Fields(l); len(f) > 0 {
			parts = append(parts, strings.Join(f, " "))
		}
	}
	return textsafe.Clip(strings.Join(parts, "; "), 2000)
}
