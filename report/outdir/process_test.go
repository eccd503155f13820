package outdir

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
)

// helperEnv selects what TestHelperProcess does when the test binary is run
// again as a child process (the os/exec tests' pattern).
const helperEnv = "CANALSTEP_OUTDIR_HELPER"

// helper starts this test binary as a child running mode with args.
func helper(t *testing.T, mode string, args ...string) *exec.Cmd {
	t.Helper()
	cmd := exec.Command(os.Args[0], append([]string{"-test.run=^TestHelperProcess$", "--", mode}, args...)...)
	cmd.Env = append(os.Environ(), helperEnv+"=1")
	return cmd
}

// TestHelperProcess is the child side of the tests below; run alone it skips.
func TestHelperProcess(t *testing.T) {
	if os.Getenv(helperEnv) == "" {
		t.Skip("child process for TestTwoProcesses and TestKilledRun")
	}
	args := os.Args
	for len(args) > 0 && args[0] != "--" {
		args = args[1:]
	}
	if len(args) < 3 {
		fmt.Fprintln(os.Stderr, "helper: no mode")
		os.Exit(2)
	}
	mode, root := args[1], args[2]
	switch mode {
	case "run": // run ROOT ID ROUNDS: commit Main, East, West ROUNDS times
		rounds, _ := strconv.Atoi(args[4])
		names := []string{"Main", "East", "West"}
		for r := range rounds {
			run := fmt.Sprintf("%s-%d", args[3], r)
			d, err := Open(context.Background(), root, Options{Wait: true, NoSync: true})
			if err != nil {
				fmt.Fprintln(os.Stderr, err)
				os.Exit(1)
			}
			for _, n := range names {
				if err := writeFolder(d, n, run, outputFiles); err != nil {
					fmt.Fprintln(os.Stderr, err)
					os.Exit(1)
				}
			}
			for _, n := range names {
				if got, _, err := folderRun(root, n); err != nil || got != run {
					fmt.Fprintf(os.Stderr, "under the lock of run %s, %s holds run %s (%v)\n", run, n, got, err)
					os.Exit(1)
				}
			}
			d.Close()
		}
		os.Exit(0)
	case "hold": // hold ROOT: stage Main half-way, say so, and wait to be killed
		d, err := Open(context.Background(), root, Options{})
		if err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
		st, err := d.Stage("Main")
		if err == nil {
			err = st.WriteFile("drops.csv", func(w io.Writer) error { _, err := io.WriteString(w, "run=killed file=drops.csv\n"); return err })
		}
		if err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
		fmt.Printf("staged %s\n", st.path)
		io.Copy(io.Discard, os.Stdin) // blocks until killed (stdin is a pipe the parent keeps open)
		os.Exit(0)
	}
	os.Exit(2)
}

func TestTwoProcesses(t *testing.T) {
	if testing.Short() {
		t.Skip("starts child processes")
	}
	root := filepath.Join(t.TempDir(), "out")
	var cmds []*exec.Cmd
	var outs []*strings.Builder
	for _, id := range []string{"p1", "p2"} {
		cmd := helper(t, "run", root, id, "10")
		var out strings.Builder
		cmd.Stdout, cmd.Stderr = &out, &out
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		cmds, outs = append(cmds, cmd), append(outs, &out)
	}
	for i, cmd := range cmds {
		if err := cmd.Wait(); err != nil {
			t.Errorf("child %d: %v\n%s", i+1, err, outs[i])
		}
	}
	names := []string{"Main", "East", "West"}
	if err := checkTree(root, names); err != nil {
		t.Fatal(err)
	}
	// All three folders come from the last round of one of the runs.
	run, _, _ := folderRun(root, "Main")
	for _, n := range names {
		if got, _, _ := folderRun(root, n); got != run || !strings.HasSuffix(got, "-9") {
			t.Errorf("%s holds run %s, Main run %s; want one run's last round", n, got, run)
		}
	}
}

func TestKilledRun(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a child process")
	}
	root := filepath.Join(t.TempDir(), "out")
	// An earlier, complete run.
	d := mustOpen(t, root, Options{NoSync: true})
	if err := writeFolder(d, "Main", "earlier", outputFiles); err != nil {
		t.Fatal(err)
	}
	d.Close()

	cmd := helper(t, "hold", root)
	stdin, err := cmd.StdinPipe()
	if err != nil {
		t.Fatal(err)
	}
	defer stdin.Close()
	stdout, err := cmd.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	var stderr strings.Builder
	cmd.Stderr = &stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	line, err := bufio.NewReader(stdout).ReadString('\n')
	stage, ok := strings.CutPrefix(strings.TrimSpace(line), "staged ")
	if err != nil || !ok {
		cmd.Process.Kill()
		cmd.Wait()
		t.Fatalf("child said %q (%v): %s", line, err, stderr.String())
	}

	// While the child lives, its lock keeps this process out.
	_, err = Open(context.Background(), root, Options{})
	var busy *BusyError
	if !errors.As(err, &busy) || busy.Holder.PID != cmd.Process.Pid {
		t.Errorf("Open beside a live run: %v, want a *BusyError naming pid %d", err, cmd.Process.Pid)
	}

	if err := cmd.Process.Signal(syscall.SIGKILL); err != nil {
		t.Fatal(err)
	}
	cmd.Wait()
	if _, err := os.Stat(stage); err != nil {
		t.Fatalf("the killed run's staging folder is not there to clean: %v", err)
	}

	d = mustOpen(t, root, Options{})
	if got := d.Stale(); len(got) != 1 || got[0] != filepath.Base(stage) {
		t.Errorf("Stale() = %v, want [%s]", got, filepath.Base(stage))
	}
	if _, err := os.Stat(stage); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("staging folder %s still there: %v", stage, err)
	}
	if run, _, err := folderRun(root, "Main"); err != nil || run != "earlier" {
		t.Errorf("Main after the killed run: run %q, %v; want the earlier run's", run, err)
	}
	if err := checkTree(root, []string{"Main"}); err != nil {
		t.Error(err)
	}
}
