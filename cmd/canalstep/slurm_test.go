package main

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"sort"
	"strings"
	"syscall"
	"testing"
	"time"

	"canalstep/report/index"
)

// TestSlurm runs the Slurm recipe of scripts/slurm/ on a real, one-node
// Slurm cluster (scripts/slurm-local.sh start, which installs slurm-wlm and
// munge when they are missing) with the canalstep binary built from this
// tree: a batch of demo head reaches × 3 drop-height alternatives submitted
// by scripts/slurm/submit.sh as a 3-task job array (batch-array.sbatch:
// SLURM_ARRAY_TASK_ID -> --shard K/3, one folder per shard) and the merge job
// (merge.sbatch, afterany). The merged folder must equal, byte for byte, the
// same batch run whole (every file of every job folder and the index; only
// run.log, the timings, is left out). A second batch with an alignment that
// leaves the DEM shows the failing shard: its jobs are failed in the merged
// index with the reason, the shard's array task and the merge job end FAILED
// with exit code 1, submit.sh --wait exits non-zero, and the good jobs are
// still all there and equal to the whole run. The cluster is stopped
// afterwards (also when the test fails), unless it was running before.
//
// It needs root (the daemons, and apt-get when Slurm is missing) and is
// skipped, saying so, when not root or when CANALSTEP_NO_SLURM=1. Anywhere
// else (CI runs as root) a cluster that does not start fails the test.
func TestSlurm(t *testing.T) {
	if os.Getenv("CANALSTEP_NO_SLURM") == "1" {
		t.Skip("CANALSTEP_NO_SLURM=1: the Slurm job-array test is skipped on request")
	}
	if os.Geteuid() != 0 {
		t.Skip("the Slurm job-array test needs root to start a local cluster (scripts/slurm-local.sh start); run go test as root, or set CANALSTEP_NO_SLURM=1 to skip it on purpose")
	}
	t.Parallel() // most of its time is Slurm's scheduling, not CPU
	repo, err := filepath.Abs(filepath.Join("..", ".."))
	if err != nil {
		t.Fatal(err)
	}
	t0 := time.Now()
	bin := buildCanalstep(t, t.TempDir())
	t.Logf("built %s in %.1f s", bin, time.Since(t0).Seconds())
	t1 := time.Now()
	env := startSlurm(t, repo)
	t.Logf("local cluster ready in %.1f s", time.Since(t1).Seconds())

	for _, tc := range []struct {
		name    string
		offDEM  bool // add an alignment that leaves the DEM: its jobs fail
		jobs    int
		failing int
	}{
		{"all good", false, 9, 0},
		{"failing shard", true, 12, 3},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			dir := t.TempDir()
			job := slurmFixture(t, dir, tc.offDEM)
			want := 0
			if tc.failing > 0 {
				want = 1
			}

			// The batch run whole, with the same binary and the same job file path
			// (the job folders record the command line, less --out and --shard).
			whole := filepath.Join(dir, "whole")
			out, code := runProcess(t, env, dir, 2*time.Minute, bin, "batch", "--quiet", "--out", whole, job)
			if code != want {
				t.Fatalf("unsharded batch: exit %d, want %d\n%s", code, want, out)
			}

			// The same batch through Slurm: 3 array tasks and the merge job.
			root := filepath.Join(dir, "slurm")
			ts := time.Now()
			out, code = runProcess(t, env, dir, 4*time.Minute, filepath.Join(repo, "scripts", "slurm", "submit.sh"),
				"--wait", "-n", "3", "-b", bin, job, root)
			t.Logf("submit.sh --wait: exit %d after %.1f s\n%s", code, time.Since(ts).Seconds(), out)
			defer func() {
				if t.Failed() {
					logSlurmLogs(t, filepath.Join(root, "logs"))
				}
			}()
			if code < 0 {
				q, _ := runProcess(t, env, dir, 30*time.Second, "squeue", "-o", "%i %T %r")
				n, _ := runProcess(t, env, dir, 30*time.Second, "sinfo")
				t.Logf("the cluster when submit.sh was killed:\n%s\n%s", q, n)
			}
			arrayID, mergeID := submittedIDs(t, out)
			if (code == 0) != (want == 0) {
				t.Errorf("submit.sh --wait exited %d; want %s", code, map[bool]string{true: "0", false: "non-zero: a job failed"}[want == 0])
			}

			// Each array task ran its own shard into its own folder, and every
			// job ran in exactly one shard.
			shardOfJob := map[string]int{}
			for k := 1; k <= 3; k++ {
				log := filepath.Join(root, "logs", fmt.Sprintf("batch-%s_%d.out", arrayID, k-1))
				b, err := os.ReadFile(log)
				if err != nil {
					t.Fatalf("array task %d left no log: %v", k-1, err)
				}
				line := fmt.Sprintf("%s batch --shard %d/3 --out %s %s", bin, k, filepath.Join(root, fmt.Sprintf("shard-%d", k)), job)
				if !strings.Contains(string(b), ": "+line+"\n") {
					t.Errorf("array task %d did not run %q; its log:\n%s", k-1, line, b)
				}
				for _, r := range indexRows(t, filepath.Join(root, fmt.Sprintf("shard-%d", k))) {
					if s, dup := shardOfJob[r["job"]]; dup {
						t.Errorf("job %s ran in shards %d and %d", r["job"], s, k)
					}
					shardOfJob[r["job"]] = k
				}
			}
			if len(shardOfJob) != tc.jobs {
				t.Errorf("the shards ran %d jobs, want %d", len(shardOfJob), tc.jobs)
			}

			// The merged index: every job, the failed ones with their reason.
			merged := filepath.Join(root, "merged")
			rows := indexRows(t, merged)
			if len(rows) != tc.jobs {
				t.Fatalf("merged index has %d rows, want %d", len(rows), tc.jobs)
			}
			failedShards := map[int]bool{}
			failed := 0
			for _, r := range rows {
				if r["alignment"] == "Off the map" {
					failed++
					if r["status"] != index.Failed || !strings.Contains(r["reason"], "leaves the DEM") {
						t.Errorf("merged index, job %s (Off the map): status %q, reason %q; want failed, leaves the DEM", r["job"], r["status"], r["reason"])
					}
					failedShards[shardOfJob[r["job"]]] = true
					continue
				}
				if r["status"] != index.OK && r["status"] != index.Infeasible {
					t.Errorf("merged index, job %s (%s): status %q (%s)", r["job"], r["alignment"], r["status"], r["reason"])
				}
				if _, err := os.Stat(filepath.Join(merged, filepath.FromSlash(r["folder"]), "summary.json")); err != nil {
					t.Errorf("merged job %s: %v", r["job"], err)
				}
			}
			if failed != tc.failing {
				t.Errorf("%d failed jobs in the merged index, want %d", failed, tc.failing)
			}

			// Byte for byte the whole run: index.csv/html/json and every file of
			// every job folder.
			a, b := treeHashes(t, whole), treeHashes(t, merged)
			sameTree(t, "merged Slurm shards and the unsharded run", a, b)
			t.Logf("merged folder: %d files, the same bytes as the unsharded run's", len(b))

			// Slurm's own record: the tasks with failed jobs and the merge FAILED
			// with exit code 1, the others COMPLETED.
			tasks := slurmStates(t, env, arrayID)
			for k := 1; k <= 3; k++ {
				st, want := tasks[fmt.Sprint(k-1)], "COMPLETED 0:0"
				if failedShards[k] {
					want = "FAILED 1:0"
				}
				if st != want {
					t.Errorf("array task %s_%d (shard %d/3): %q, want %q", arrayID, k-1, k, st, want)
				}
			}
			wantMerge := "COMPLETED 0:0"
			if tc.failing > 0 {
				wantMerge = "FAILED 1:0"
			}
			if st := slurmStates(t, env, mergeID)[""]; st != wantMerge {
				t.Errorf("merge job %s: %q, want %q", mergeID, st, wantMerge)
			}
			t.Logf("array %s tasks %v; merge job %s %s", arrayID, tasks, mergeID, wantMerge)
		})
	}
}

// slurmFixture writes dir/canals.geojson (the head reaches of the three
// demo branches, with "Off the map" after them when withBad) and
// dir/job.toml: the demo DEM, the demo's design values, three drop-height
// alternatives (1, 1.5 and 1 with 1.5 m). It returns the job file's path.
func slurmFixture(t *testing.T, dir string, withBad bool) string {
	t.Helper()
	fs := []map[string]any{
		batchLine(0, 2, "West head", nil),
		batchLine(1, 2, "Middle head", nil),
		batchLine(2, 2, "East head", nil),
	}
	if withBad {
		fs = append(fs, offDEM("Off the map")) // leaves the DEM by 500 m
	}
	writeBatchFile(t, filepath.Join(dir, "canals.geojson"), map[string]any{"type": "FeatureCollection", "features": fs})
	// batch_test.go's job file (the demo DEM and design values), with a
	// third alternative.
	p := batchJobFile(t, dir, "")
	job, err := os.ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	two, three := `alternatives = "1.0;1.0,1.5"`, `alternatives = "1.0;1.5;1.0,1.5"`
	if !bytes.Contains(job, []byte(two)) {
		t.Fatalf("batchJobFile's job file has no line %s; update slurmFixture", two)
	}
	if err := os.WriteFile(p, bytes.Replace(job, []byte(two), []byte(three), 1), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// buildCanalstep builds this package's command into dir, as a user would
// (without -race: the race detector makes a batch job ten times slower,
// and the batch's races are the in-process batch tests' to find), and
// returns the binary's path. scripts/test.sh runs go vet first, which
// leaves the packages this build needs compiled in the build cache.
func buildCanalstep(t *testing.T, dir string) string {
	t.Helper()
	goBin, err := exec.LookPath("go")
	if err != nil {
		t.Fatalf("go is not on PATH, needed to build canalstep for the Slurm test: %v", err)
	}
	bin := filepath.Join(dir, "canalstep")
	args := []string{"build", "-o", bin}
	out, code := runProcess(t, os.Environ(), ".", 5*time.Minute, goBin, append(args, ".")...)
	if code != 0 {
		t.Fatalf("go %s: exit %d\n%s", strings.Join(args, " "), code, out)
	}
	return bin
}

// startSlurm starts the local cluster with scripts/slurm-local.sh and
// registers its stop, and returns the environment for Slurm's commands
// (SLURM_CONF naming the script's configuration). A cluster that was
// already running is used and left running.
func startSlurm(t *testing.T, repo string) []string {
	t.Helper()
	script := filepath.Join(repo, "scripts", "slurm-local.sh")
	dir := os.Getenv("SLURM_LOCAL_DIR")
	if dir == "" {
		dir = "/var/lib/canalstep-slurm" // the script's default
	}
	lockSlurm(t, dir)
	env := append(os.Environ(), "SLURM_CONF="+filepath.Join(dir, "slurm.conf"),
		// A race-enabled canalstep would sleep 1 s at every exit.
		"GORACE="+strings.TrimSpace(os.Getenv("GORACE")+" atexit_sleep_ms=0"))
	_, status := runProcess(t, env, repo, 30*time.Second, script, "status")
	if status == 0 {
		t.Logf("a local cluster started by scripts/slurm-local.sh is running: using it, and leaving it running")
	} else {
		// Registered before start, so that the daemons a failed start left
		// running are stopped too.
		t.Cleanup(func() {
			out, code := runProcess(t, env, repo, 2*time.Minute, script, "stop")
			if code != 0 {
				t.Errorf("scripts/slurm-local.sh stop: exit %d\n%s", code, out)
			} else {
				t.Logf("scripts/slurm-local.sh stop:\n%s", out)
			}
		})
	}
	// start may install slurm-wlm and munge first: apt-get takes its time.
	out, code := runProcess(t, env, repo, 8*time.Minute, script, "start")
	if code != 0 {
		t.Fatalf("scripts/slurm-local.sh start: exit %d: the local Slurm cluster did not start (set CANALSTEP_NO_SLURM=1 to skip this test on purpose)\n%s", code, out)
	}
	t.Logf("scripts/slurm-local.sh start:\n%s", out)
	return env
}

// lockSlurm holds an exclusive lock on dir/test.lock until the test ends,
// waiting up to 10 minutes for it: test runs in other processes on this
// machine (other packages' go test, another checkout) must not stop the
// cluster under this one's jobs, nor this one under theirs.
func lockSlurm(t *testing.T, dir string) {
	t.Helper()
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	f, err := os.OpenFile(filepath.Join(dir, "test.lock"), os.O_CREATE|os.O_RDWR, 0o644)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { f.Close() }) // closing releases the lock; registered first, so it runs after the stop
	deadline := time.Now().Add(10 * time.Minute)
	for waited := false; ; waited = true {
		err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB)
		if err == nil {
			return
		}
		if err != syscall.EWOULDBLOCK {
			t.Fatalf("lock %s: %v", f.Name(), err)
		}
		if time.Now().After(deadline) {
			t.Fatalf("another test has held %s for 10 minutes: is a TestSlurm hanging?", f.Name())
		}
		if !waited {
			t.Logf("waiting for another test run that uses the local cluster (%s)", f.Name())
		}
		time.Sleep(500 * time.Millisecond)
	}
}

// runProcess runs name with args in dir with env, stdout and stderr
// together, and returns the output and the exit status (-1 when it could
// not run or was killed). After timeout the process and everything it
// started (its process group: sbatch --wait under submit.sh) are killed.
func runProcess(t *testing.T, env []string, dir string, timeout time.Duration, name string, args ...string) (string, int) {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), timeout)
	defer cancel()
	c := exec.CommandContext(ctx, name, args...)
	c.Dir, c.Env = dir, env
	var out bytes.Buffer // one writer for both: exec calls its Write from one goroutine
	c.Stdout, c.Stderr = &out, &out
	c.SysProcAttr = &syscall.SysProcAttr{Setpgid: true}
	c.Cancel = func() error { return syscall.Kill(-c.Process.Pid, syscall.SIGKILL) }
	c.WaitDelay = 10 * time.Second
	err := c.Run()
	if ctx.Err() != nil {
		t.Errorf("%s %s: killed after %s", name, strings.Join(args, " "), timeout)
		return out.String(), -1
	}
	if err != nil {
		if ee, ok := err.(*exec.ExitError); ok {
			return out.String(), ee.ExitCode()
		}
		return out.String() + err.Error(), -1
	}
	return out.String(), 0
}

// submittedIDs reads the job array's and the merge job's IDs from
// submit.sh's output.
func submittedIDs(t *testing.T, out string) (array, merge string) {
	t.Helper()
	a := regexp.MustCompile(`(?m)^submit: shards: job array ([0-9]+) `).FindStringSubmatch(out)
	m := regexp.MustCompile(`(?m)^submit: merge: job ([0-9]+) `).FindStringSubmatch(out)
	if a == nil || m == nil {
		t.Fatalf("submit.sh did not name the job array and the merge job:\n%s", out)
	}
	return a[1], m[1]
}

// slurmStates returns "JobState ExitCode" of job id as scontrol has it, by
// array task ID ("" for a job that is not an array).
func slurmStates(t *testing.T, env []string, id string) map[string]string {
	t.Helper()
	out, code := runProcess(t, env, ".", 30*time.Second, "scontrol", "-o", "show", "job", id)
	if code != 0 {
		t.Fatalf("scontrol show job %s: exit %d\n%s", id, code, out)
	}
	states := map[string]string{}
	for _, line := range strings.Split(strings.TrimSpace(out), "\n") {
		f := map[string]string{}
		for _, kv := range strings.Fields(line) {
			if k, v, ok := strings.Cut(kv, "="); ok {
				f[k] = v
			}
		}
		states[f["ArrayTaskId"]] = f["JobState"] + " " + f["ExitCode"]
	}
	return states
}

// logSlurmLogs puts the Slurm job logs in dir into the test's log.
func logSlurmLogs(t *testing.T, dir string) {
	t.Helper()
	names, _ := filepath.Glob(filepath.Join(dir, "*.out"))
	sort.Strings(names)
	for _, n := range names {
		b, _ := os.ReadFile(n)
		if len(b) > 4000 {
			b = append([]byte("…"), b[len(b)-4000:]...)
		}
		t.Logf("== %s\n%s", n, b)
	}
}
