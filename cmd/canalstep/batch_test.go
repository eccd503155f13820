package main

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"canalstep/report/index"
	"canalstep/report/outdir"
	"canalstep/terrain"
)

// The batch tests run on the demo DEM (terrain.SyntheticFan(7), demoDEM) with the
// head reaches of the demo branches (their first two vertices: 50 to 60
// stations at 10 m), so that each batch stays short under -race. The
// design values are the demo's (demo.go), not a reference case: these
// tests check the batch's mechanics (isolation, reproducibility, shards,
// resume, interrupt), not hydraulics, which the planner's tests check.

func init() { outNoSync = true } // the tests check bytes, not durability on power loss

// batchLine is demo branch which cut to its first n vertices, as a GeoJSON
// feature in EPSG:32634 named name with extra properties.
func batchLine(which, n int, name string, props map[string]any) map[string]any {
	v := terrain.DemoAlignments()[which].Vertices[:n]
	p := map[string]any{"name": name}
	for k, x := range props {
		p[k] = x
	}
	return map[string]any{"type": "Feature", "properties": p, "geometry": map[string]any{"type": "LineString", "coordinates": v}}
}

// offDEM is a line that leaves the demo DEM by its west edge (easting
// 538000 m, terrain/synthetic.go): from 300 m inside to 500 m outside.
func offDEM(name string) map[string]any {
	return map[string]any{"type": "Feature", "properties": map[string]any{"name": name},
		"geometry": map[string]any{"type": "LineString", "coordinates": [][2]float64{{538300, 4624000}, {537500, 4623950}}}}
}

func writeBatchFile(t testing.TB, path string, v any) {
	t.Helper()
	b, err := json.Marshal(v)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, b, 0o644); err != nil {
		t.Fatal(err)
	}
}

// batchFixture writes a batch into dir: an alignment file with two head
// reaches (two routes of corridor "Lateral L"; 4 jobs) and extra features,
// and the job file (batchJobFile) on the shared demo DEM. It returns the
// job file. SOURCE_DATE_EPOCH fixes the inputs' date the job folders
// record, which would otherwise be the day the demo DEM was written.
func batchFixture(t testing.TB, dir string, extra []map[string]any, tables string) string {
	t.Helper()
	t.Setenv("SOURCE_DATE_EPOCH", "1714564800") // 2024-05-01 12:00 UTC
	fs := []map[string]any{
		batchLine(0, 2, "West head", map[string]any{"corridor": "Lateral L"}),
		batchLine(1, 2, "Middle head", map[string]any{"corridor": "Lateral L"}),
	}
	writeBatchFile(t, filepath.Join(dir, "canals.geojson"), map[string]any{"type": "FeatureCollection", "features": append(fs, extra...)})
	return batchJobFile(t, dir, tables)
}

// batchJobFile writes dir/job.toml: the demo design inline, two
// alternatives, and tables (more job-file text).
func batchJobFile(t testing.TB, dir, tables string) string {
	t.Helper()
	job := `# test batch
dem = ` + strconv.Quote(demoDEM(t)) + `
alignments = ["canals.geojson"]
alternatives = "1.0;1.0,1.5"

[design]
flow = 2.5
bottom_width = 2.0
side_slope = 1.5
roughness = 0.025
max_velocity = 0.9
min_velocity = 0.45
alignment_crs = "EPSG:32634"
ground = "level"
max_fill = 2.5
` + tables
	p := filepath.Join(dir, "job.toml")
	if err := os.WriteFile(p, []byte(job), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// runBatchCmd runs canalstep in-process with ctx and returns stdout,
// stderr and the exit status main would give.
func runBatchCmd(ctx context.Context, args ...string) (string, string, int) {
	var out, errb bytes.Buffer
	err := run(ctx, args, &out, &errb)
	if err != nil {
		fmt.Fprintf(&errb, "canalstep: %s\n", oneLine(err))
	}
	return out.String(), errb.String(), exitCode(err)
}

// lastLine is the last non-empty line of s.
func lastLine(s string) string {
	lines := strings.Split(strings.TrimRight(s, "\n"), "\n")
	return lines[len(lines)-1]
}

// indexRows reads DIR/index.csv as maps from column to value.
func indexRows(t testing.TB, dir string) []map[string]string {
	t.Helper()
	f, err := os.Open(filepath.Join(dir, "index.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var out []map[string]string
	for _, r := range recs[1:] {
		m := map[string]string{}
		for i, h := range recs[0] {
			m[h] = r[i]
		}
		out = append(out, m)
	}
	return out
}

// treeHashes returns the SHA-256 of every file below dir but run.log (the
// timings), by path relative to dir; any staging, set-aside or temporary
// entry of the output folders fails the test.
func treeHashes(t testing.TB, dir string) map[string]string {
	t.Helper()
	out := map[string]string{}
	err := filepath.WalkDir(dir, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(dir, p)
		if n := d.Name(); strings.HasPrefix(n, ".canalstep-stage-") || strings.HasPrefix(n, ".canalstep-old-") || strings.HasPrefix(n, ".canalstep-tmp-") {
			t.Errorf("%s left in the output", rel)
		}
		if d.IsDir() || rel == "run.log" {
			return nil
		}
		b, err := os.ReadFile(p)
		if err != nil {
			return err
		}
		sum := sha256.Sum256(b)
		out[rel] = hex.EncodeToString(sum[:])
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// sameTree fails unless a and b hold the same files with the same bytes.
func sameTree(t testing.TB, what string, a, b map[string]string) {
	t.Helper()
	var diff []string
	for p, h := range a {
		if b[p] != h {
			diff = append(diff, p)
		}
	}
	for p := range b {
		if _, ok := a[p]; !ok {
			diff = append(diff, p)
		}
	}
	sort.Strings(diff)
	if len(diff) > 0 {
		t.Errorf("%s: %d files differ or are missing on one side: %s", what, len(diff), strings.Join(diff[:min(len(diff), 12)], ", "))
	}
}

// TestBatchReproducible runs a batch with an alignment that leaves the DEM
// among good ones, with 1 and with 2 workers and as shards 1/3, 2/3 and
// 3/3, then merges the shards. Every run exits 1; the good alignments are
// all planned and written, the bad one's jobs indexed as failed with the
// reason; the last line counts what was written; 1 and 2 workers write the
// same bytes, and the merged shards equal the whole run byte for byte
// (every job's files and the index); each job ran in exactly one shard. A
// shard given twice is refused (exit 2, nothing merged), a missing shard
// merges the others and indexes its jobs as missing (exit 1), and merging
// into a shard folder is refused.
func TestBatchReproducible(t *testing.T) {
	dir := t.TempDir()
	job := batchFixture(t, dir, []map[string]any{offDEM("Off the map")}, "")
	ctx := context.Background()
	whole := map[string]map[string]string{}
	for _, w := range []string{"1", "2"} {
		out := filepath.Join(dir, "w"+w)
		stdout, stderr, code := runBatchCmd(ctx, "batch", "--quiet", "--workers", w, "--out", out, job)
		if code != 1 {
			t.Fatalf("workers %s: exit %d, want 1\n%s\n%s", w, code, stdout, stderr)
		}
		if want := "4 of 6 jobs written to " + out + "; 2 failed (see " + filepath.Join(out, "index.csv") + ")"; lastLine(stdout) != want {
			t.Errorf("last line %q, want %q", lastLine(stdout), want)
		}
		whole[w] = treeHashes(t, out)
	}
	checkBadAlignment(t, filepath.Join(dir, "w1"))
	sameTree(t, "1 and 2 workers", whole["1"], whole["2"])

	var shards []string
	ran := map[string]int{}
	for k := 1; k <= 3; k++ {
		out := filepath.Join(dir, fmt.Sprintf("shard-%d", k))
		stdout, stderr, code := runBatchCmd(ctx, "batch", "--quiet", "--shard", fmt.Sprintf("%d/3", k), "--out", out, job)
		if code != 0 && code != 1 {
			t.Fatalf("shard %d: exit %d\n%s\n%s", k, code, stdout, stderr)
		}
		for _, r := range indexRows(t, out) {
			ran[r["job"]]++
		}
		shards = append(shards, out)
	}
	for j := 1; j <= 6; j++ {
		if n := ran[fmt.Sprint(j)]; n != 1 {
			t.Errorf("job %d ran in %d shards", j, n)
		}
	}
	merged := filepath.Join(dir, "merged")
	if stdout, stderr, code := runBatchCmd(ctx, append([]string{"merge", "--out", merged}, shards...)...); code != 1 || !strings.Contains(stderr, "2 jobs failed") {
		t.Fatalf("merge: exit %d, want 1 for the failed jobs\n%s\n%s", code, stdout, stderr)
	}
	sameTree(t, "shards merged and the whole run", whole["1"], treeHashes(t, merged))

	refused := filepath.Join(dir, "refused")
	if _, stderr, code := runBatchCmd(ctx, "merge", "--out", refused, shards[0], shards[1], shards[0]); code != 2 || !strings.Contains(stderr, "is in both") {
		t.Errorf("overlap: exit %d, %s", code, stderr)
	}
	if _, err := os.Stat(refused); !os.IsNotExist(err) {
		t.Errorf("a refused merge made its folder (%v)", err)
	}
	part := filepath.Join(dir, "part")
	if stdout, stderr, code := runBatchCmd(ctx, "merge", "--out", part, shards[1], shards[2]); code != 1 || !strings.Contains(stderr, "in none of the folders given") {
		t.Errorf("missing shard: exit %d, %s\n%s", code, stderr, stdout)
	}
	missing := 0
	for _, r := range indexRows(t, part) {
		if r["status"] == index.Missing {
			missing++
		}
	}
	if n := len(indexRows(t, shards[0])); missing != n {
		t.Errorf("%d jobs indexed missing, want shard 1's %d", missing, n)
	}
	if _, stderr, code := runBatchCmd(ctx, "merge", "--out", shards[0], shards[0], shards[1]); code != 2 || !strings.Contains(stderr, "is the shard folder") {
		t.Errorf("merge into a shard: exit %d, %s", code, stderr)
	}
}

// checkBadAlignment checks the index of the batch with a bad alignment:
// rows in file order, then alternative order; the good jobs planned with
// their folders; the bad one's failed with the reason and no folder; the
// page linking a job's report and showing the reason.
func checkBadAlignment(t *testing.T, out string) {
	t.Helper()
	rows := indexRows(t, out)
	if len(rows) != 6 {
		t.Fatalf("%d index rows, want 6 (3 alignments × 2 alternatives)", len(rows))
	}
	good := 0
	for i, r := range rows {
		if want := fmt.Sprint(i + 1); r["job"] != want {
			t.Errorf("row %d is job %s: want file order, then alternative order", i+1, r["job"])
		}
		if r["alignment"] == "Off the map" {
			if r["status"] != index.Failed || !strings.Contains(r["reason"], "leaves the DEM") || r["folder"] != "" {
				t.Errorf("bad alignment's row: %v", r)
			}
			continue
		}
		if r["status"] != index.OK && r["status"] != index.Infeasible {
			t.Errorf("good alignment's job %s: status %s (%s)", r["job"], r["status"], r["reason"])
			continue
		}
		good++
		for _, f := range []string{"summary.json", "report.html", "ground.csv", "job.json", outdir.MarkerFile} {
			if _, err := os.Stat(filepath.Join(out, filepath.FromSlash(r["folder"]), f)); err != nil {
				t.Errorf("job %s: %v", r["job"], err)
			}
		}
	}
	if good != 4 {
		t.Errorf("%d good jobs planned, want 4", good)
	}
	page, err := os.ReadFile(filepath.Join(out, "index.html"))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(page), `href="West_head/h1/report.html"`) || !strings.Contains(string(page), "leaves the DEM") {
		t.Errorf("index.html lacks a job's report link or the failure's reason")
	}
	if _, err := os.Stat(filepath.Join(out, "Off_the_map")); !os.IsNotExist(err) {
		t.Errorf("the failed alignment has a folder (%v)", err)
	}
}

// TestShardOf: a job's shard depends on its key and the shard count only,
// lies in 1..N, and 600 keys spread over 3 shards within 150 of the even
// 200 (a binomial spread is about 12; common practice, no source).
func TestShardOf(t *testing.T) {
	count := map[int]int{}
	for i := range 600 {
		k := shardOf(fmt.Sprintf("Lateral %d\x000.5", i), 3)
		if k < 1 || k > 3 || shardOf(fmt.Sprintf("Lateral %d\x000.5", i), 3) != k {
			t.Fatalf("shard %d", k)
		}
		count[k]++
	}
	for k := 1; k <= 3; k++ {
		if count[k] < 50 || count[k] > 350 {
			t.Errorf("shard %d holds %d of 600 jobs", k, count[k])
		}
	}
}

// modTimes returns the modification time of every job's summary.json.
func modTimes(t testing.TB, out string) map[string]time.Time {
	t.Helper()
	m := map[string]time.Time{}
	for _, r := range indexRows(t, out) {
		fi, err := os.Stat(filepath.Join(out, filepath.FromSlash(r["folder"]), "summary.json"))
		if err != nil {
			t.Fatal(err)
		}
		m[r["folder"]] = fi.ModTime()
	}
	return m
}

// TestBatchResume: --resume skips every job that is done (their files keep
// their modification times and the output is byte for byte the same);
// after a change of one alignment's design only its jobs run again, and
// the folder then equals a fresh run's.
func TestBatchResume(t *testing.T) {
	dir := t.TempDir()
	job := batchFixture(t, dir, nil, "")
	out := filepath.Join(dir, "out")
	mustBatch := func(out string, args ...string) string {
		t.Helper()
		stdout, stderr, code := runBatchCmd(context.Background(), append([]string{"batch", "--quiet", "--out", out}, args...)...)
		if code != 0 {
			t.Fatalf("exit %d\n%s\n%s", code, stdout, stderr)
		}
		return stdout
	}
	skipped := func(stdout string) int { return strings.Count(stdout, "(up to date, skipped)") }
	mustBatch(out, job)
	first, before := treeHashes(t, out), modTimes(t, out)
	time.Sleep(20 * time.Millisecond) // a rewrite must get a later mtime

	stdout := mustBatch(out, "--resume", job)
	if n := skipped(stdout); n != 4 {
		t.Errorf("%d jobs skipped, want 4:\n%s", n, stdout)
	}
	if want := "0 of 4 jobs written to " + out + " (4 more up to date, skipped)"; lastLine(stdout) != want {
		t.Errorf("last line %q, want %q", lastLine(stdout), want)
	}
	for f, m := range modTimes(t, out) {
		if !m.Equal(before[f]) {
			t.Errorf("%s rewritten by a resume with nothing to do", f)
		}
	}
	sameTree(t, "resumed with nothing to do", first, treeHashes(t, out))

	// One alignment's design changes: its two jobs run again.
	job = batchJobFile(t, dir, "\n[alignment.\"Middle head\"]\nmax_fill = 3.0\n")
	stdout = mustBatch(out, "--resume", job)
	if n := skipped(stdout); n != 2 {
		t.Errorf("%d jobs skipped after Middle head's design changed, want 2:\n%s", n, stdout)
	}
	for f, m := range modTimes(t, out) {
		if rerun := strings.HasPrefix(f, "Middle_head/"); rerun == m.Equal(before[f]) {
			t.Errorf("%s: rewritten %v, want %v", f, !m.Equal(before[f]), rerun)
		}
	}
	fresh := filepath.Join(dir, "fresh")
	mustBatch(fresh, job)
	sameTree(t, "resumed after a design change, and a fresh run", treeHashes(t, fresh), treeHashes(t, out))
}

// TestBatchInterrupt: a batch interrupted after its first job exits 130
// (128 + SIGINT), leaves the finished job whole and nothing half-written,
// indexes the others as not run, says so in its last line; --resume then
// finishes the batch without running the finished job again.
func TestBatchInterrupt(t *testing.T) {
	dir := t.TempDir()
	job := batchFixture(t, dir, nil, "")
	out := filepath.Join(dir, "out")
	ctx, cancel := context.WithCancelCause(context.Background())
	defer cancel(nil)
	batchJobDone = func() { cancel(interrupted{syscall.SIGINT}) }
	stdout, stderr, code := runBatchCmd(ctx, "batch", "--quiet", "--workers", "1", "--out", out, job)
	batchJobDone = nil
	if code != 130 {
		t.Fatalf("exit %d, want 130\n%s\n%s", code, stdout, stderr)
	}
	if want := "interrupted: 1 of 4 jobs written to " + out + "; run the batch again with --resume to finish the others"; lastLine(stdout) != want {
		t.Errorf("last line %q, want %q", lastLine(stdout), want)
	}
	treeHashes(t, out) // fails on staging or temporary entries
	statuses := map[string]int{}
	for _, r := range indexRows(t, out) {
		statuses[r["status"]]++
		if r["status"] != index.NotRun {
			if _, err := os.Stat(filepath.Join(out, filepath.FromSlash(r["folder"]), outdir.MarkerFile)); err != nil {
				t.Errorf("finished job %s is not whole: %v", r["job"], err)
			}
		}
	}
	if statuses[index.NotRun] != 3 {
		t.Errorf("statuses %v, want 3 not run", statuses)
	}
	stdout, stderr, code = runBatchCmd(context.Background(), "batch", "--quiet", "--resume", "--out", out, job)
	if code != 0 {
		t.Fatalf("resume: exit %d\n%s\n%s", code, stdout, stderr)
	}
	if n := strings.Count(stdout, "(up to date, skipped)"); n != 1 {
		t.Errorf("resume skipped %d jobs, want the 1 finished", n)
	}
	if want := "3 of 4 jobs written to " + out + " (1 more up to date, skipped)"; lastLine(stdout) != want {
		t.Errorf("last line %q, want %q", lastLine(stdout), want)
	}
}

// TestBatchJobFile: the commented example parses; bad job files are
// refused with one line saying what is wrong (exit 2).
func TestBatchJobFile(t *testing.T) {
	ex, err := readJobFile(filepath.Join("..", "..", "testdata", "batch", "job.toml"))
	if err != nil {
		t.Fatalf("the example job file: %v", err)
	}
	if len(ex.dems) == 0 || len(ex.alignments) == 0 || ex.design == nil || ex.alternatives == "" || len(ex.tables) == 0 {
		t.Errorf("the example job file lacks a part: %+v", ex)
	}
	dir := t.TempDir()
	for _, tc := range []struct{ name, body, want string }{
		{"unknown key", "dem = \"d.tif\"\nalignment = \"a.geojson\"\nworkers = 3\n", "unknown key \"workers\""},
		{"dem type", "dem = 3\nalignment = \"a.geojson\"\n", "dem: give a path or a list of paths"},
		{"two alignment keys", "alignment = \"a.geojson\"\nalignments = [\"b.geojson\"]\n", "give the alignment files once"},
		{"alternatives", "alternatives = [true]\n", "alternatives:"},
		{"not toml", "dem = [\n", "job file"},
		{"design type", "design = 5\n", "design must be the path of a design file or a [design] table"},
		{"table value", "alignments = [\"a.geojson\"]\n[alignment]\nMain = 3\n", "must be a table of design keys"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			p := filepath.Join(dir, strings.ReplaceAll(tc.name, " ", "_")+".toml")
			if err := os.WriteFile(p, []byte(tc.body), 0o644); err != nil {
				t.Fatal(err)
			}
			_, stderr, code := runBatchCmd(context.Background(), "batch", "--out", filepath.Join(dir, "out"), p)
			if code != 2 || !strings.Contains(stderr, tc.want) || strings.Count(stderr, "\n") != 1 {
				t.Errorf("exit %d, stderr %q; want 2 and one line with %q", code, stderr, tc.want)
			}
		})
	}
	job := batchFixture(t, dir, nil, "")
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"--alternatives", "1.0;1"}, "drop heights 1 twice"},
		{[]string{"--shard", "4/3"}, "--shard \"4/3\""},
		{[]string{"--drop-heights", "1.0"}, "--drop-heights and alternatives both given"},
	} {
		_, stderr, code := runBatchCmd(context.Background(), append(append([]string{"batch", "--out", filepath.Join(dir, "out")}, tc.args...), job)...)
		if code != 2 || !strings.Contains(stderr, tc.want) {
			t.Errorf("%v: exit %d, %q; want 2 and %q", tc.args, code, stderr, tc.want)
		}
	}
}

// FuzzReadJobFile: no job file makes the reader panic.
func FuzzReadJobFile(f *testing.F) {
	f.Add([]byte("dem = \"d.tif\"\nalignment = [\"a.geojson\", \"b.geojson\"]\nalternatives = [0.5, [1, 1.5], \"2\"]\n[design]\nflow = 1\n[design.alignment.\"A\"]\nflow = 2\n"))
	f.Add([]byte("alignments = \"a\"\n[alignment.\"X\"]\nflow = 1\n"))
	dir := f.TempDir()
	f.Fuzz(func(t *testing.T, data []byte) {
		p := filepath.Join(dir, "job.toml")
		if err := os.WriteFile(p, data, 0o644); err != nil {
			t.Fatal(err)
		}
		_, _ = readJobFile(p)
	})
}
