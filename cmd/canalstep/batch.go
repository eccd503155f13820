package main

import (
	"context"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"maps"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"syscall"
	"time"

	"github.com/BurntSushi/toml"
	flag "github.com/spf13/pflag"
	"golang.org/x/term"

	"canalstep/alignment"
	"canalstep/planner"
	"canalstep/planner/corridor"
	"canalstep/report"
	"canalstep/report/html"
	"canalstep/report/index"
	"canalstep/report/outdir"
	"canalstep/report/runner"
	"canalstep/report/textsafe"
	"canalstep/report/units"
	"canalstep/terrain"
)

// A batch is many jobs in one run: every alignment of the alignment files,
// each planned once per drop-height alternative. One job is one alignment
// × one alternative, pure: its outputs depend on its inputs only, never on
// the other jobs, the worker count or the shard split.
//
// Layout of the output folder DIR:
//
//	DIR/index.csv, index.html, index.json   the batch's index (report/index)
//	DIR/run.log                             timings of this run (never in the other files)
//	DIR/<alignment>/<alternative>/          one folder per job, e.g. Main_canal/h0.5_1:
//	                                        report.WritePlan's files and job.json
//
// <alignment> is alignment.SafeName of its name; <alternative> is "h" and
// the drop heights in the user's length unit joined by "_". Jobs always
// get their own folder below their alignment's, also with one alternative,
// so adding an alternative later (with --resume) keeps the folders that
// are there.

// jobRecordFile is the record each job folder holds: what the job was run
// on (its input hash) and its index row, so that --resume can skip it and
// still index it.
const jobRecordFile = "job.json"

// jobRecordFormat is jobRecord's format member.
const jobRecordFormat = "canalstep-job/1"

// batchOnly are the flags that may not be set from a design (file or
// table): they belong to the job file or the command line.
var batchOnly = []string{"dem", "alignment", "out", "design", "alternatives", "workers", "jobs", "shard", "resume", "quiet", "wait"}

// batchSetup is the configuration of `canalstep batch`: plan's flags and
// design, the job file's inputs and the batch's own flags.
type batchSetup struct {
	*planSetup
	dems, files  []string    // DEM paths; alignment files
	sets         [][]float64 // drop-height alternatives, m; nil: each alignment's design heights
	alternatives string      // --alternatives
	workers      int
	shard        shard
	shardFlag    string
	resume       bool
	quiet        bool
	cmdArgs      []string // the command line after "batch", for the provenance
	designPath   string   // the design file read, "" for none or an inline design
}

// shard is one part of a split batch: K of N (1-based), or the whole
// batch (N = 0).
type shard struct{ k, n int }

func (s shard) String() string {
	if s.n == 0 {
		return ""
	}
	return fmt.Sprintf("%d/%d", s.k, s.n)
}

// maxShards bounds --shard's N (common practice, no source: far above any
// cluster array a batch is split over).
const maxShards = 100000

func parseShard(v string) (shard, error) {
	if v == "" {
		return shard{}, nil
	}
	ks, ns, ok := strings.Cut(v, "/")
	k, err1 := strconv.Atoi(strings.TrimSpace(ks))
	n, err2 := strconv.Atoi(strings.TrimSpace(ns))
	if !ok || err1 != nil || err2 != nil || n < 1 || n > maxShards || k < 1 || k > n {
		return shard{}, usagef("--shard %q: write K/N with 1 <= K <= N <= %d, e.g. 2/8 for the second of eight shards", textsafe.Clip(v, 40), maxShards)
	}
	return shard{k, n}, nil
}

// of returns the shard (1-based) of n that the job with key belongs to: a
// hash of the key, so the assignment depends on the job alone, not on its
// place in the files or on the other jobs.
func shardOf(key string, n int) int {
	sum := sha256.Sum256([]byte(key))
	return int(binary.BigEndian.Uint64(sum[:8])%uint64(n)) + 1
}

func newBatchSetup(args []string, stdout io.Writer) (*batchSetup, error) {
	s, err := newPlanSetup("batch", args, stdout)
	if err != nil {
		return nil, err
	}
	b := &batchSetup{planSetup: s}
	s.fs.StringVar(&b.alternatives, "alternatives", "", "drop-height sets, ';' between sets and ',' within a set, e.g. \"0.5;1.0;0.5,1.0\" (default: the job file's, else each alignment's --drop-heights)")
	s.fs.IntVar(&b.workers, "workers", 0, "jobs run at once, each worker with its own DEM handle; 0: one per CPU")
	s.fs.StringVar(&b.shardFlag, "shard", "", "K/N: run only shard K (1-based) of N, chosen by a hash of each job's alignment name and drop heights; merge the shards' folders with 'canalstep merge'")
	s.fs.BoolVar(&b.resume, "resume", false, "skip the jobs whose folder holds their outputs and whose recorded inputs (DEM, alignment, design, canalstep version) are unchanged")
	s.fs.BoolVar(&b.quiet, "quiet", false, "no progress on stderr")
	_ = s.fs.MarkHidden("jobs") // --workers under its batch name; --jobs still works
	return b, nil
}

// runBatch implements `canalstep batch`.
func runBatch(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	b, err := configureBatch(args, stdout)
	if b == nil || err != nil {
		return err
	}
	return b.run(ctx, stdout, stderr)
}

// configureBatch reads the command line and the job file; it returns nil
// (and no error) after --help.
func configureBatch(args []string, stdout io.Writer) (*batchSetup, error) {
	first, err := newBatchSetup(args, stdout)
	if err != nil {
		return nil, err
	}
	first.fs.Usage = func() { batchUsage(stdout, first.fs) }
	// A first pass finds the job file among the arguments; the flags are
	// read for real once its unit system and design are known.
	if err := first.fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return nil, nil
		}
		return nil, usagef("batch: %v (see 'canalstep batch --help')", err)
	}
	var job *jobFile
	rest := args
	switch first.fs.NArg() {
	case 0:
	case 1:
		rest = withoutArg(args, first.fs.Arg(0))
		if job, err = readJobFile(first.fs.Arg(0)); err != nil {
			return nil, err
		}
	default:
		return nil, usagef("batch: give one job file, not %d arguments (see 'canalstep batch --help')", first.fs.NArg())
	}
	b, err := newBatchSetup(rest, stdout)
	if err != nil {
		return nil, err
	}
	b.fs.Usage = first.fs.Usage
	b.cmdArgs = args
	if b.file != nil {
		b.designPath = b.file.path // --design
	}
	if job != nil {
		if err := b.useJob(job, rest); err != nil {
			return nil, err
		}
	}
	if b.file != nil {
		if err := refuseBatchKeys(b.file); err != nil {
			return nil, err
		}
	}
	if ok, err := b.parse(rest); !ok {
		return nil, err
	}
	return b, b.settle(job)
}

// withoutArg returns args without the positional argument arg: the
// occurrence that, removed, leaves no positional argument (arg may also be
// a flag's value, as in --out job.toml job.toml).
func withoutArg(args []string, arg string) []string {
	for i := len(args) - 1; i >= 0; i-- {
		if args[i] != arg {
			continue
		}
		cand := append(append([]string(nil), args[:i]...), args[i+1:]...)
		t, err := newBatchSetup(cand, io.Discard)
		if err != nil {
			continue
		}
		t.fs.SetOutput(io.Discard)
		if t.fs.Parse(cand) == nil && t.fs.NArg() == 0 {
			return cand
		}
	}
	return args
}

// refuseBatchKeys refuses a design that sets what belongs to the job file
// or the command line.
func refuseBatchKeys(d *designFile) error {
	for _, k := range slices.Sorted(maps.Keys(d.root)) {
		if contains(batchOnly, strings.ReplaceAll(k, "_", "-")) {
			return inputf("design %s: %q is not a design key: give it in the job file's top level or on the command line", textsafe.Terminal(d.path), textsafe.Clip(k, 40))
		}
	}
	return nil
}

// useJob takes the job file's unit system and design (before the flags
// are read, which need the unit system).
func (b *batchSetup) useJob(job *jobFile, args []string) error {
	if job.design != nil && b.file != nil {
		return usagef("batch: the job file %s names a design and --design gives another; give one", textsafe.Terminal(job.path))
	}
	if job.design != nil {
		b.file = job.design
		if job.design.path != job.path {
			b.designPath = job.design.path
		}
	}
	if len(job.tables) > 0 {
		if b.file == nil {
			b.file = &designFile{path: job.path, root: map[string]any{}, tables: map[string]map[string]any{}}
		}
		b.file = withTables(b.file, job)
	}
	if flagGiven(args, "units") {
		return nil
	}
	u := job.units
	if u == "" && b.file != nil {
		if v, ok := b.file.root["units"]; ok {
			u = fmt.Sprint(v)
		}
	}
	if u != "" {
		sys, err := units.Parse(u)
		if err != nil {
			return inputf("job file %s: %v", textsafe.Terminal(job.path), err)
		}
		b.sys = sys
	}
	return nil
}

// withTables returns the design d with the job file's [alignment."NAME"]
// tables added: a key in both is the job file's.
func withTables(d *designFile, job *jobFile) *designFile {
	out := &designFile{path: d.path, root: d.root, tables: map[string]map[string]any{}}
	for name, t := range d.tables {
		out.tables[name] = t
	}
	for name, t := range job.tables {
		m := map[string]any{}
		for k, v := range out.tables[name] {
			m[k] = v
		}
		for k, v := range t {
			m[k] = v
		}
		out.tables[name] = m
	}
	if d.path != job.path {
		out.path = d.path + " (with the tables of " + job.path + ")"
	}
	return out
}

// settle puts the job file and the flags together: the command line wins.
func (b *batchSetup) settle(job *jobFile) error {
	changed := b.fs.Changed
	switch {
	case changed("dem") || job == nil || len(job.dems) == 0:
		if b.ground.dem != "" {
			b.dems = []string{b.ground.dem}
		}
	default:
		b.dems = job.dems
		b.ground.dem = job.dems[0]
	}
	if len(b.dems) == 0 {
		return usagef("batch: no DEM: give dem in the job file or --dem")
	}
	switch {
	case changed("alignment") || job == nil || len(job.alignments) == 0:
		if b.ground.alignment != "" {
			b.files = []string{b.ground.alignment}
		}
	default:
		b.files = job.alignments
	}
	if len(b.files) == 0 {
		return usagef("batch: no alignment file: give alignment in the job file or --alignment")
	}
	if !changed("out") && job != nil && job.out != "" {
		b.out = job.out
	}
	alts := b.alternatives
	if !changed("alternatives") && job != nil {
		alts = job.alternatives
	}
	if alts != "" {
		if flagGiven(b.cmdArgs, "drop-heights") {
			return usagef("batch: --drop-heights and alternatives both given; give the drop-height sets as alternatives only")
		}
		sets, err := b.parseAlternatives(alts)
		if err != nil {
			return err
		}
		seen := map[string]bool{}
		for _, hs := range sets {
			l := report.AlternativeLabel(hs, b.sys)
			if seen[l] {
				return usagef("batch: the alternatives list drop heights %s twice; give each set once", l)
			}
			seen[l] = true
		}
		b.sets = sets
	}
	if !changed("workers") && changed("jobs") {
		b.workers = b.jobs
	}
	if b.workers < 0 || b.workers > 1024 {
		return usagef("--workers must be between 0 (one per CPU) and 1024")
	}
	var err error
	b.shard, err = parseShard(b.shardFlag)
	return err
}

// batchUsage prints `canalstep batch --help`.
func batchUsage(w io.Writer, fs *flag.FlagSet) {
	fmt.Fprintln(w, "Usage: canalstep batch [flags] JOB.toml")
	fmt.Fprintln(w, "   or: canalstep batch --dem DEM --alignment FILE --design DESIGN.toml --alternatives \"0.5;1.0;0.5,1.0\" [flags]")
	fmt.Fprintln(w, `
Plans every alignment of the alignment files once per drop-height alternative, each job (one
alignment with one alternative) on its own: a job that fails is indexed with its reason and the
others go on. Writes DIR/<alignment>/<alternative>/ per job (the files of 'canalstep plan' and
job.json), and DIR/index.csv, index.html and index.json over all jobs; timings go to stderr and
DIR/run.log only, so the other files are the same byte for byte whatever --workers or --shard.

The job file (TOML; unknown keys are errors; paths relative to the job file's folder):
  dem = "dem.tif"                    one DEM, a VRT mosaic, a /vsicurl/ or /vsis3/ path, or a list:
                                     each alignment is sampled on the first DEM that holds it whole
  alignment = "canals.geojson"       one file or a list (or: alignments = [...])
  design = "design.toml"             a design file as --design takes, or an inline [design] table
  alternatives = "0.5;1.0;0.5,1.0"   or [0.5, 1.0, [0.5, 1.0]]; default: each alignment's drop_heights
  units = "si"                       or "us"
  out = "batch-out"                  the output folder (--out wins)
  [alignment."NAME"]                 one alignment's (or corridor's) own design keys, as in a
                                     design file (with alignments = [...] for the files)
See testdata/batch/job.toml for a commented example. The command line wins over the job file.
Features sharing a "corridor" property are routes of one canal: the index ranks them.

Flags:`)
	fs.PrintDefaults()
	fmt.Fprintf(w, "\n%s\n", exitCodeHelp)
	fmt.Fprintln(w, "An infeasible alternative is a result (indexed, exit 0 when nothing failed); a failed job gives exit 1.")
}

// jobFile is a batch job file.
type jobFile struct {
	path         string
	units        string
	dems         []string
	alignments   []string
	design       *designFile               // nil: none
	tables       map[string]map[string]any // [alignment."NAME"] at the top level
	alternatives string                    // as --alternatives writes them
	out          string
}

// jobKeys are the keys of a job file.
var jobKeys = []string{"units", "dem", "alignment", "alignments", "design", "alternatives", "out"}

// readJobFile reads and checks a job file (at most maxDesignBytes).
func readJobFile(path string) (*jobFile, error) {
	data, err := readInput(path, "job file", maxDesignBytes)
	if err != nil {
		return nil, err
	}
	show := textsafe.Terminal(path)
	var raw map[string]any
	if _, err := toml.Decode(string(data), &raw); err != nil {
		return nil, inputf("job file %s: %v", show, oneLineError(err))
	}
	job := &jobFile{path: path}
	dir := filepath.Dir(path)
	bad := func(format string, a ...any) error {
		return inputf("job file %s: %s", show, fmt.Sprintf(format, a...))
	}
	for _, k := range slices.Sorted(maps.Keys(raw)) {
		v := raw[k]
		switch k {
		case "units", "out":
			s, ok := v.(string)
			if !ok || s == "" {
				return nil, bad("%s must be a non-empty string", k)
			}
			if k == "units" {
				job.units = s
			} else {
				job.out = relativeTo(dir, s)
			}
		case "dem":
			if job.dems, err = pathList(v, dir); err != nil {
				return nil, bad("dem: %v", err)
			}
		case "alignments":
			if len(job.alignments) > 0 {
				return nil, bad("give the alignment files once, as alignment or as alignments")
			}
			if job.alignments, err = pathList(v, dir); err != nil {
				return nil, bad("alignments: %v", err)
			}
		case "alignment":
			if t, ok := v.(map[string]any); ok {
				if job.tables, err = alignmentTables(t); err != nil {
					return nil, bad("%v", err)
				}
				continue
			}
			if len(job.alignments) > 0 {
				return nil, bad("give the alignment files once, as alignment or as alignments")
			}
			if job.alignments, err = pathList(v, dir); err != nil {
				return nil, bad("alignment: %v", err)
			}
		case "design":
			switch d := v.(type) {
			case string:
				if job.design, err = readDesignFile(relativeTo(dir, d)); err != nil {
					return nil, err
				}
			case map[string]any:
				job.design = &designFile{path: path, root: map[string]any{}}
				for dk, dv := range d {
					if dk != "alignment" {
						job.design.root[dk] = dv
					}
				}
				t, _ := d["alignment"].(map[string]any)
				if _, ok := d["alignment"]; ok && t == nil {
					return nil, bad("design.alignment must be a table of [design.alignment.\"NAME\"] tables")
				}
				if job.design.tables, err = alignmentTables(t); err != nil {
					return nil, bad("design: %v", err)
				}
			default:
				return nil, bad("design must be the path of a design file or a [design] table")
			}
		case "alternatives":
			if job.alternatives, err = alternativesText(v); err != nil {
				return nil, bad("alternatives: %v", err)
			}
		default:
			return nil, bad("unknown key %q (the keys are %s; design keys go in the design or an [alignment.\"NAME\"] table)",
				textsafe.Clip(k, 60), strings.Join(jobKeys, ", "))
		}
	}
	return job, nil
}

// alignmentTables checks a table of [alignment."NAME"] tables.
func alignmentTables(t map[string]any) (map[string]map[string]any, error) {
	out := map[string]map[string]any{}
	for name, v := range t {
		m, ok := v.(map[string]any)
		if !ok {
			return nil, fmt.Errorf("alignment.%s must be a table of design keys", textsafe.Clip(strconv.Quote(name), 80))
		}
		out[name] = m
	}
	return out, nil
}

// pathList reads a path or a list of paths, relative to dir.
func pathList(v any, dir string) ([]string, error) {
	var items []any
	switch x := v.(type) {
	case string:
		items = []any{x}
	case []any:
		items = x
	default:
		return nil, errors.New("give a path or a list of paths")
	}
	if len(items) == 0 || len(items) > 4096 {
		return nil, errors.New("give from 1 to 4096 paths")
	}
	var out []string
	for _, it := range items {
		s, ok := it.(string)
		if !ok || s == "" || strings.IndexByte(s, 0) >= 0 {
			return nil, errors.New("every path must be a non-empty string")
		}
		out = append(out, relativeTo(dir, s))
	}
	return out, nil
}

// relativeTo resolves a job file's path against the job file's folder;
// absolute and /vsi… paths stay as they are.
func relativeTo(dir, p string) string {
	if filepath.IsAbs(p) {
		return p
	}
	return filepath.Join(dir, p)
}

// alternativesText turns the job file's alternatives into --alternatives
// text: a string as it is; a list of sets, each a number, a list of
// numbers or a string of comma-separated numbers.
func alternativesText(v any) (string, error) {
	num := func(x any) (string, bool) {
		switch n := x.(type) {
		case int64:
			return strconv.FormatInt(n, 10), true
		case float64:
			return strconv.FormatFloat(n, 'g', -1, 64), true
		}
		return "", false
	}
	switch x := v.(type) {
	case string:
		return x, nil
	case []any:
		var sets []string
		for _, set := range x {
			if s, ok := num(set); ok {
				sets = append(sets, s)
				continue
			}
			switch hs := set.(type) {
			case string:
				sets = append(sets, hs)
			case []any:
				var parts []string
				for _, h := range hs {
					s, ok := num(h)
					if !ok {
						return "", errors.New("a drop height must be a number")
					}
					parts = append(parts, s)
				}
				sets = append(sets, strings.Join(parts, ","))
			default:
				return "", errors.New("each alternative is a number, a list of numbers or a string such as \"0.5,1.0\"")
			}
		}
		if len(sets) == 0 {
			return "", errors.New("the list is empty")
		}
		return strings.Join(sets, ";"), nil
	}
	return "", errors.New("give a string such as \"0.5;1.0;0.5,1.0\" or a list such as [0.5, 1.0, [0.5, 1.0]]")
}

// batchJob is one job of a batch and, once run, its outcome.
type batchJob struct {
	n       int       // 0-based position in the batch
	align   int       // index into the batch's alignments
	heights []float64 // the drop-height set, m
	label   string    // the set in the user's length unit, "0.5,1"
	folder  string    // "Main_canal/h0.5_1"
	key     string    // the shard key: alignment name and the set in metres
	content string    // SHA-256 of what defines the job, the input files' bytes aside
	input   string    // SHA-256 of content and the provenance (job.json's input hash)

	run     bool // this run plans it: in its shard, not skipped as up to date
	done    bool // ran to its end, or was skipped as up to date
	skipped bool
	written bool // its folder was committed by this run
	row     index.Row
	took    time.Duration // planning and writing, this job alone
}

// expandJobs lists the jobs: every alignment in order, each with every
// set of sets (nil: the alignment's own drop heights).
func expandJobs(aligns []*job, sets [][]float64, u units.System) []*batchJob {
	var out []*batchJob
	for a, j := range aligns {
		own := sets
		if own == nil {
			own = [][]float64{j.design.DropHeights}
		}
		for _, hs := range own {
			label := report.AlternativeLabel(hs, u)
			out = append(out, &batchJob{n: len(out), align: a, heights: hs, label: label,
				folder: alignment.SafeName(j.a.Name) + "/" + alternativeFolder(label),
				key:    j.a.Name + "\x00" + report.AlternativeLabel(hs, units.SI)})
		}
	}
	return out
}

// alternativeFolder is the folder name of a drop-height set's label.
func alternativeFolder(label string) string {
	return alignment.SafeName("h" + strings.ReplaceAll(label, ",", "_"))
}

// demSource is one DEM of the batch.
type demSource struct {
	path string
	desc corridor.DEM
}

// demSet is one worker's DEM handles, one per DEM of the batch, opened on
// first use (GDAL handles are not shared between threads).
type demSet struct {
	open func(i int) (*terrain.DEM, error)
	h    []*terrain.DEM
	errs []error
}

func (d *demSet) get(i int) (*terrain.DEM, error) {
	if d.h[i] == nil && d.errs[i] == nil {
		d.h[i], d.errs[i] = d.open(i)
	}
	return d.h[i], d.errs[i]
}

func (d *demSet) Close() error {
	var errs []error
	for _, h := range d.h {
		if h != nil {
			errs = append(errs, h.Close())
		}
	}
	return errors.Join(errs...)
}

// engineOptions are the settings of runJobs besides the jobs.
type engineOptions struct {
	dir      *outdir.Dir
	prov     report.Provenance // recorded in every job folder
	dems     []demSource
	first    *demSet // the first worker's handles
	open     func(i int) (*terrain.DEM, error)
	workers  int
	progress *runner.Progress
	// jobDone, when set, is called after every job that ran (tests use it
	// to interrupt a batch part way).
	jobDone func()
	// panicked counts the jobs that panicked (bugs: exit status 3).
	panicked *atomic.Int32
}

// runJobs runs the jobs marked run, in the worker pool: per alignment one
// task samples the corridor (once, on the worker's own DEM handle) and
// hands on its jobs, each of which plans one alternative and commits its
// folder. Outcomes land in the jobs; nothing depends on the order the
// workers take them. It returns ctx's error when interrupted (the jobs
// that finished are whole; the others are not done).
//
// plan and compare can run on it too: one job per alignment (compare: per
// alternative), with their own folder names.
func runJobs(ctx context.Context, s *planSetup, aligns []*job, jobs []*batchJob, o engineOptions) error {
	byAlign := make([][]*batchJob, len(aligns))
	var seeds []int
	for _, jb := range jobs {
		if jb.run {
			if byAlign[jb.align] == nil {
				seeds = append(seeds, jb.align)
			}
			byAlign[jb.align] = append(byAlign[jb.align], jb)
		}
	}
	dirs := newAlignDirs(o.dir)
	for a, js := range byAlign {
		if len(js) > 0 {
			dirs.expect(alignment.SafeName(aligns[a].a.Name), len(js))
		}
	}
	defer dirs.closeAll()
	left := make([]atomic.Int32, len(aligns))
	// A task is an alignment to sample (alt < 0) or one of its jobs.
	type task struct{ align, alt int }
	tasks := make([]task, len(seeds))
	for i, a := range seeds {
		tasks[i] = task{a, -1}
		left[a].Store(int32(len(byAlign[a])))
	}
	workers := min(runner.Workers(o.workers), max(1, len(jobs)))
	return runner.Tasks(ctx, workers, o.first, func() (*demSet, error) {
		return &demSet{open: o.open, h: make([]*terrain.DEM, len(o.dems)), errs: make([]error, len(o.dems))}, nil
	}, tasks, func(t task, r *demSet, push func(task)) {
		j := aligns[t.align]
		fail := func(jb *batchJob, reason string) {
			jb.row = baseRow(jb, j)
			jb.row.Status, jb.row.Reason = index.Failed, reason
			jb.done = true
			dirs.release(alignment.SafeName(j.a.Name))
			o.progress.Add(1)
		}
		if t.alt < 0 {
			var err error
			func() {
				defer recoverBatchJob(&err, o.panicked)
				err = sampleOn(s, j, o.dems, r)
			}()
			if err != nil {
				for _, jb := range byAlign[t.align] {
					fail(jb, reasonText(err, s.sys))
				}
				return
			}
			for k := len(byAlign[t.align]) - 1; k >= 0; k-- {
				push(task{t.align, k}) // pushed last runs first: job order
			}
			return
		}
		jb := byAlign[t.align][t.alt]
		start := time.Now()
		var err error
		func() {
			defer recoverBatchJob(&err, o.panicked)
			planJob(s, j, jb, dirs, o.prov)
		}()
		if left[t.align].Add(-1) == 0 {
			j.c = nil // the last job of the alignment: let its corridor go
		}
		if err != nil {
			fail(jb, err.Error())
			return
		}
		jb.took = time.Since(start)
		jb.done = true
		dirs.release(alignment.SafeName(j.a.Name))
		o.progress.Add(1)
		if o.jobDone != nil {
			o.jobDone()
		}
	})
}

// recoverBatchJob turns a panic in a job (on a worker goroutine, which run's
// own recovery does not cover) into the job's internalError, and counts it.
func recoverBatchJob(err *error, panicked *atomic.Int32) {
	if p := recover(); p != nil {
		*err = internalError{fmt.Sprint(p)}
		panicked.Add(1)
	}
}

// sampleOn builds the alignment's corridor on the first DEM that holds it.
func sampleOn(s *planSetup, j *job, dems []demSource, r *demSet) error {
	var msgs []string
	var last error
	for i, src := range dems {
		g, err := r.get(i)
		if err == nil {
			err = s.sample(j, src.desc, g)
		}
		if err == nil {
			return nil
		}
		last = err
		msgs = append(msgs, fmt.Sprintf("on %s: %s", textsafe.Terminal(src.path), oneLine(err)))
	}
	if len(dems) == 1 {
		return last
	}
	return fmt.Errorf("no DEM of the batch holds the whole alignment (a mosaic, gdalbuildvrt, joins tiles it crosses): %s", strings.Join(msgs, "; "))
}

// baseRow is a job's index row before its outcome.
func baseRow(jb *batchJob, j *job) index.Row {
	return index.Row{Job: jb.n + 1, Alignment: j.a.Name, Corridor: j.a.Overrides.Corridor, Alternative: jb.label, DropHeights: jb.heights}
}

// reasonText words why a job did not plan, on one line in the user's units.
func reasonText(err error, u units.System) string {
	text := strings.Join(strings.Fields(report.ErrorText(err, u)), " ")
	for _, kind := range []error{corridor.ErrInput, planner.ErrInput} {
		text = strings.TrimPrefix(text, kind.Error()+": ") // the kind is the status's to say
	}
	return textsafe.Clip(text, 2000)
}

// planJob plans one alternative of a sampled alignment and commits its
// folder (an infeasible plan's folder holds its findings; a plan that
// could not be made writes nothing).
func planJob(s *planSetup, j *job, jb *batchJob, dirs *alignDirs, prov report.Provenance) {
	p := planner.Problem{Stations: j.c.Profile.Stations, Design: j.design}
	p.Design.DropHeights = append([]float64(nil), jb.heights...)
	res, err := planner.Optimize(p)
	jb.row = baseRow(jb, j)
	st := j.c.Profile.Stations
	jb.row.Length = st[len(st)-1].Chainage - st[0].Chainage
	switch {
	case res == nil:
		jb.row.Status, jb.row.Reason = index.Failed, reasonText(err, s.sys)
		return
	case err != nil:
		jb.row.Status, jb.row.Reason = index.Infeasible, reasonText(err, s.sys)
	default:
		t := res.Totals
		f := &index.Figures{Drops: t.DropCount, CutVolume: t.CutVolume, FillVolume: t.FillVolume, TotalCost: t.TotalCost, CommandShare: t.CommandShare}
		if amount, _, b, ok := res.Saving(); ok {
			f.Saving, f.SavingAgainst = &amount, b.Method
		}
		jb.row.Status, jb.row.Plan = index.OK, f
	}
	rec := newJobRecord(jb)
	jb.row.Folder = jb.folder
	if werr := writeJob(dirs, jb.folder, func(stg report.Stager) error {
		f := report.Folder{Corridor: j.c, Result: res, PlanErr: err, Units: s.sys, Provenance: prov}
		if err := report.WriteFolder(stg, f); err != nil {
			return err
		}
		return stg.WriteFile(jobRecordFile, func(w io.Writer) error { return writeJSON(w, rec) })
	}); werr != nil {
		jb.row.Status, jb.row.Reason, jb.row.Plan, jb.row.Folder = index.Failed, "writing its folder failed: "+oneLine(werr), nil, ""
		return
	}
	jb.written = true
}

// writeJob stages and commits the job folder "ALIGNMENT/ALTERNATIVE".
func writeJob(dirs *alignDirs, folder string, write func(report.Stager) error) error {
	aln, alt, _ := strings.Cut(folder, "/")
	d, err := dirs.get(aln)
	if err != nil {
		return err
	}
	return writeFolder(d, alt, write)
}

// jobRecord is job.json: the job's input hash and canalstep version, and
// its index row but for the job number (which depends on the other jobs).
type jobRecord struct {
	Format      string         `json:"format"`
	Version     string         `json:"canalstep_version"`
	Input       string         `json:"input_sha256"`
	Alignment   string         `json:"alignment"`
	Corridor    string         `json:"corridor"`
	Alternative string         `json:"alternative"`
	DropHeights []float64      `json:"drop_heights"`
	Status      string         `json:"status"`
	Reason      string         `json:"reason"`
	Length      float64        `json:"length"`
	Plan        *index.Figures `json:"plan"`
}

func newJobRecord(jb *batchJob) jobRecord {
	r := jb.row
	return jobRecord{Format: jobRecordFormat, Version: version(), Input: jb.input, Alignment: r.Alignment, Corridor: r.Corridor,
		Alternative: r.Alternative, DropHeights: r.DropHeights, Status: r.Status, Reason: r.Reason, Length: r.Length, Plan: r.Plan}
}

// upToDate returns the job's row from its folder's record when --resume
// may skip it: the folder is canalstep's, holds the record and the
// outputs its status implies, and the record's input hash is the job's.
func upToDate(root string, jb *batchJob) (index.Row, bool) {
	dir := filepath.Join(root, filepath.FromSlash(jb.folder))
	data, err := readInput(filepath.Join(dir, jobRecordFile), "job record", maxDesignBytes)
	if err != nil {
		return index.Row{}, false
	}
	dec := json.NewDecoder(strings.NewReader(string(data)))
	dec.DisallowUnknownFields()
	var rec jobRecord
	if dec.Decode(&rec) != nil || rec.Format != jobRecordFormat || rec.Input != jb.input || rec.Version != version() {
		return index.Row{}, false
	}
	need := []string{outdir.MarkerFile, "summary.json", report.ReportFile, "ground.csv"}
	switch rec.Status {
	case index.OK:
		need = append(need, "stations.csv", "drops.csv", "profile.svg", "plan.geojson", "plan.xml")
	case index.Infeasible:
	default:
		return index.Row{}, false
	}
	for _, f := range need {
		if fi, err := os.Lstat(filepath.Join(dir, f)); err != nil || !fi.Mode().IsRegular() {
			return index.Row{}, false
		}
	}
	if (rec.Status == index.OK) != (rec.Plan != nil) {
		return index.Row{}, false
	}
	return index.Row{Job: jb.n + 1, Alignment: rec.Alignment, Corridor: rec.Corridor, Alternative: rec.Alternative,
		DropHeights: rec.DropHeights, Status: rec.Status, Reason: rec.Reason, Length: rec.Length, Plan: rec.Plan, Folder: jb.folder}, true
}

// alignDirs are the alignment folders of a batch, each an output folder of
// its own (outdir stages one path element; a job folder is the second),
// opened when a job first writes there and closed after its last job.
type alignDirs struct {
	root *outdir.Dir
	mu   sync.Mutex
	dirs map[string]*alignDir
}

type alignDir struct {
	d    *outdir.Dir
	err  error
	left int // jobs of this run still to end
}

func newAlignDirs(root *outdir.Dir) *alignDirs {
	return &alignDirs{root: root, dirs: map[string]*alignDir{}}
}

// expect records that n jobs of this run write below folder.
func (a *alignDirs) expect(folder string, n int) {
	a.dirs[folder] = &alignDir{left: n}
}

// get returns the output folder of the alignment folder, opening it once.
func (a *alignDirs) get(folder string) (*outdir.Dir, error) {
	a.mu.Lock()
	defer a.mu.Unlock()
	ad := a.dirs[folder]
	if ad == nil {
		ad = &alignDir{left: 1}
		a.dirs[folder] = ad
	}
	if ad.d == nil && ad.err == nil {
		if fi, err := os.Lstat(filepath.Join(a.root.Root(), folder)); err == nil && !fi.IsDir() {
			ad.err = fmt.Errorf("cannot write below %s: it exists and is not a folder; move it away", textsafe.Terminal(filepath.Join(a.root.Root(), folder)))
		} else {
			ad.d, ad.err = outdir.Open(context.Background(), filepath.Join(a.root.Root(), folder), outdir.Options{NoSync: outNoSync})
		}
	}
	return ad.d, ad.err
}

// release ends one job below folder; after the last, the folder closes.
func (a *alignDirs) release(folder string) {
	a.mu.Lock()
	defer a.mu.Unlock()
	ad := a.dirs[folder]
	if ad == nil {
		return
	}
	ad.left--
	if ad.left <= 0 && ad.d != nil {
		closeDir(ad.d)
		ad.d, ad.err = nil, outdir.ErrClosed
	}
}

func (a *alignDirs) closeAll() {
	a.mu.Lock()
	defer a.mu.Unlock()
	for _, ad := range a.dirs {
		if ad.d != nil {
			closeDir(ad.d)
			ad.d = nil
		}
	}
}

// closeDir closes an output folder after emptying its lock file, which
// holds the writer's process id (for the message of a run that finds the
// folder busy): so a finished folder's bytes do not depend on the process
// that wrote it. The lock is held until Close, so no other run is in the
// file meanwhile.
func closeDir(d *outdir.Dir) error {
	if f, err := os.OpenFile(filepath.Join(d.Root(), outdir.LockFile), os.O_WRONLY|syscall.O_NOFOLLOW, 0); err == nil {
		_ = f.Truncate(0)
		f.Close()
	}
	return d.Close()
}

// outNoSync skips the fsyncs of batch and merge output folders: only the
// tests set it (they check the bytes written, not their durability).
var outNoSync bool

// openOut takes the output folder for one run, waiting for another run
// with wait; a busy folder is a usage error (exit status 2).
func openOut(ctx context.Context, out string, wait bool, stderr io.Writer) (*outdir.Dir, error) {
	dir, err := outdir.Open(ctx, out, outdir.Options{Wait: wait, NoSync: outNoSync, Waiting: func(h outdir.Holder) {
		fmt.Fprintf(stderr, "canalstep: waiting for the run of %s to finish writing %s\n", h, textsafe.Terminal(out))
	}})
	var busy *outdir.BusyError
	if errors.As(err, &busy) {
		return nil, usageError{err}
	}
	return dir, err
}

// readSchemes reads the alignment files into one scheme, in file order.
// Names must be unique across the files (each alignment's folder is its
// name); an offtake that names no alignment in a file of one alignment
// serves that alignment.
func readSchemes(files []string) (scheme, error) {
	var all scheme
	from := map[string]string{} // folder key -> file
	for _, f := range files {
		data, err := readInput(f, "alignment file", maxAlignmentBytes)
		if err != nil {
			return all, err
		}
		sc, err := alignment.ReadScheme(data)
		if err != nil {
			return all, inputf("alignment file %s: %v", textsafe.Terminal(f), err)
		}
		for _, a := range sc.Alignments {
			key := strings.ToLower(alignment.SafeName(a.Name))
			if other, ok := from[key]; ok {
				return all, inputf("alignment %q of %s has the folder name of one in %s; give alignments of one batch distinct names",
					textsafe.Terminal(a.Name), textsafe.Terminal(f), textsafe.Terminal(other))
			}
			from[key] = f
		}
		for _, o := range sc.Offtakes {
			if o.Alignment == "" && len(sc.Alignments) == 1 {
				o.Alignment = sc.Alignments[0].Name
			}
			all.Offtakes = append(all.Offtakes, o)
		}
		all.Alignments = append(all.Alignments, sc.Alignments...)
		all.Ignored = append(all.Ignored, sc.Ignored...)
	}
	sort.Strings(all.Ignored)
	all.Ignored = compactStrings(all.Ignored)
	return all, nil
}

func compactStrings(s []string) []string {
	out := s[:0]
	for i, v := range s {
		if i == 0 || v != s[i-1] {
			out = append(out, v)
		}
	}
	return out
}

// run runs the batch.
func (b *batchSetup) run(ctx context.Context, stdout, stderr io.Writer) error {
	sc, err := readSchemes(b.files)
	if err != nil {
		return err
	}
	if len(sc.Ignored) > 0 {
		var q []string
		for _, n := range sc.Ignored {
			q = append(q, strconv.Quote(textsafe.Clip(n, 40)))
		}
		fmt.Fprintf(stdout, "ignored GeoJSON properties (not design controls): %s\n", strings.Join(q, ", "))
	}
	b.ground.alignment = strings.Join(b.files, ", ") // for messages
	aligns, err := b.designs(sc)
	if err != nil {
		return err
	}
	jobs := expandJobs(aligns, b.sets, b.sys)

	// Every DEM is opened once here: a bad one stops the batch before any
	// job (exit 2); the handles are the first worker's.
	first := &demSet{open: b.openDEMAt, h: make([]*terrain.DEM, len(b.dems)), errs: make([]error, len(b.dems))}
	dems := make([]demSource, len(b.dems))
	for i, p := range b.dems {
		h, err := b.openDEMAt(i)
		if err != nil {
			first.Close()
			return err
		}
		first.h[i] = h
		d := describeDEM(h.Info())
		dems[i] = demSource{path: p, desc: d}
	}
	prov, err := b.provenance(b.cmdArgs, first.h[0].Info())
	if err != nil {
		first.Close()
		return err
	}
	report.SetPDFDate(inputsDay(prov))
	batchID := b.hashJobs(aligns, jobs, prov)

	dir, err := openOut(ctx, b.out, b.wait, stderr)
	if err != nil {
		first.Close()
		return err
	}
	defer closeDir(dir)

	toRun := 0
	for _, jb := range jobs {
		if b.shard.n > 0 && shardOf(jb.key, b.shard.n) != b.shard.k {
			jb.row = baseRow(jb, aligns[jb.align])
			jb.row.Status = index.OtherShard
			continue
		}
		if b.resume {
			if row, ok := upToDate(dir.Root(), jb); ok {
				jb.row, jb.done, jb.skipped = row, true, true
				continue
			}
		}
		jb.run = true
		toRun++
	}
	display := runner.Lines
	if b.quiet {
		display = runner.Off
	} else if f, ok := stderr.(*os.File); ok && term.IsTerminal(int(f.Fd())) {
		display = runner.Bar
	}
	prog := runner.NewProgress(stderr, toRun, "jobs", display)
	var panicked atomic.Int32
	runErr := runJobs(ctx, b.planSetup, aligns, jobs, engineOptions{dir: dir, dems: dems, first: first, open: b.openDEMAt,
		workers: b.workers, progress: prog, jobDone: batchJobDone, prov: prov, panicked: &panicked})
	elapsed := prog.Finish()

	rows := make([]index.Row, len(jobs))
	for i, jb := range jobs {
		if jb.run && !jb.done {
			jb.row = baseRow(jb, aligns[jb.align])
			jb.row.Status, jb.row.Reason = index.NotRun, "the batch was interrupted before this job ran: run it again with --resume"
		}
		rows[i] = jb.row
	}
	ix := index.New(b.sys, batchID, b.shard.String(), rows)
	if err := writeIndex(dir, ix); err != nil {
		return err
	}
	if err := dir.WriteFile("run.log", func(w io.Writer) error { return writeRunLog(w, b, jobs, toRun, elapsed) }); err != nil {
		return err
	}
	err = b.report(stdout, dir, jobs, ix, runErr)
	if n := panicked.Load(); n > 0 && runErr == nil {
		return internalError{fmt.Sprintf("%d jobs panicked (their reasons are in %s)", n, filepath.Join(b.out, "index.csv"))}
	}
	return err
}

// inputsDay is the provenance's inputs date as a time (midnight UTC).
func inputsDay(p report.Provenance) time.Time {
	t, _ := time.Parse("2006-01-02", p.InputsDate)
	return t
}

// batchJobDone is called after each job that ran; tests set it.
var batchJobDone func()

// openDEMAt opens DEM i of the batch with the ground flags' options.
func (b *batchSetup) openDEMAt(i int) (*terrain.DEM, error) {
	g := *b.ground
	g.dem = b.dems[i]
	return g.openDEM()
}

// writeIndex writes index.json, index.csv and index.html into dir, the
// page linking each job's report.html, else its summary.json.
func writeIndex(dir *outdir.Dir, ix *index.Index) error {
	root := dir.Root()
	link := func(r index.Row) string {
		if r.Folder == "" {
			return ""
		}
		for _, f := range []string{"report.html", "summary.json"} {
			if fi, err := os.Lstat(filepath.Join(root, filepath.FromSlash(r.Folder), f)); err == nil && fi.Mode().IsRegular() {
				return r.Folder + "/" + f
			}
		}
		return ""
	}
	for _, f := range []struct {
		name  string
		write func(io.Writer) error
	}{
		{"index.json", func(w io.Writer) error { return index.WriteJSON(w, ix) }},
		{"index.csv", func(w io.Writer) error { return index.WriteCSV(w, ix) }},
		{"index.html", func(w io.Writer) error { return index.WriteHTML(w, index.Page{Index: ix, Link: link}) }},
	} {
		if err := dir.WriteFile(f.name, f.write); err != nil {
			return err
		}
	}
	return nil
}

// writeRunLog writes run.log: this run's timings, job by job.
func writeRunLog(w io.Writer, b *batchSetup, jobs []*batchJob, ran int, elapsed time.Duration) error {
	workers := min(runner.Workers(b.workers), max(1, ran))
	fmt.Fprintf(w, "canalstep %s batch: %d jobs", version(), len(jobs))
	if b.shard.n > 0 {
		fmt.Fprintf(w, " (shard %s)", b.shard)
	}
	fmt.Fprintf(w, ", %d run with %d workers in %.3f s", ran, workers, elapsed.Seconds())
	if ran > 0 && elapsed > 0 {
		fmt.Fprintf(w, ": %.3f jobs/s", float64(ran)/elapsed.Seconds())
	}
	fmt.Fprintln(w)
	for _, jb := range jobs {
		switch {
		case jb.skipped:
			fmt.Fprintf(w, "job %d %s: up to date, skipped\n", jb.n+1, jb.folder)
		case jb.run && jb.done:
			fmt.Fprintf(w, "job %d %s: %s, planned and written in %.3f s\n", jb.n+1, jb.folder, jb.row.Status, jb.took.Seconds())
		case jb.run:
			fmt.Fprintf(w, "job %d %s: not run (interrupted)\n", jb.n+1, jb.folder)
		}
	}
	_, err := fmt.Fprintf(w, "elapsed %s\n", elapsed.Round(time.Millisecond))
	return err
}

// report prints the jobs, the index and the batch's last line, and returns
// the batch's error: interrupted (ctx's), or some jobs failed (exit 1).
func (b *batchSetup) report(w io.Writer, dir *outdir.Dir, jobs []*batchJob, ix *index.Index, runErr error) error {
	u := b.sys
	var written, skipped, failed, inShard int
	for _, jb := range jobs {
		r := jb.row
		if r.Status == index.OtherShard {
			continue
		}
		inShard++
		what := textsafe.Terminal(r.Alignment) + ", drop heights " + r.Alternative + " " + u.LengthUnit()
		switch {
		case jb.skipped:
			skipped++
			fmt.Fprintf(w, "%4d %s: %s (up to date, skipped)\n", r.Job, what, r.Status)
			continue
		case r.Status == index.NotRun:
			failed++
			continue
		case r.Status == index.Failed:
			failed++
			fmt.Fprintf(w, "%4d %s: FAILED: %s\n", r.Job, what, textsafe.Clip(r.Reason, 400))
			continue
		}
		if jb.written {
			written++
		}
		folder := textsafe.Terminal(filepath.Join(b.out, filepath.FromSlash(r.Folder)))
		if r.Status == index.Infeasible {
			fmt.Fprintf(w, "%4d %s: infeasible: %s -> %s\n", r.Job, what, textsafe.Clip(r.Reason, 300), folder)
			continue
		}
		p := r.Plan
		fmt.Fprintf(w, "%4d %s: %d drops, cut %.0f %s, fill %.0f %s, total cost %.0f -> %s\n", r.Job, what, p.Drops,
			u.Volume(p.CutVolume), u.VolumeUnit(), u.Volume(p.FillVolume), u.VolumeUnit(), p.TotalCost, folder)
	}
	show := textsafe.Terminal(b.out)
	fmt.Fprintf(w, "\n%s; index: %s\n", ix.CountText(), textsafe.Terminal(filepath.Join(b.out, "index.html")))
	fmt.Fprintf(w, "\n%s\n\n", report.SafetyNotice)
	kept := ""
	if skipped > 0 {
		kept = fmt.Sprintf(" (%d more up to date, skipped)", skipped)
	}
	if runErr != nil {
		fmt.Fprintf(w, "interrupted: %d of %d jobs written to %s%s; run the batch again with --resume to finish the others\n", written, inShard, show, kept)
		return fmt.Errorf("batch interrupted: %w", runErr)
	}
	if failed > 0 {
		fmt.Fprintf(w, "%d of %d jobs written to %s%s; %d failed (see %s)\n", written, inShard, show, kept, failed,
			textsafe.Terminal(filepath.Join(b.out, "index.csv")))
		return fmt.Errorf("%d of %d jobs failed; each failed job's reason is in %s", failed, inShard, textsafe.Terminal(filepath.Join(b.out, "index.csv")))
	}
	fmt.Fprintf(w, "%d of %d jobs written to %s%s\n", written, inShard, show, kept)
	return nil
}

// runFlags are the flags that steer a batch run without changing any job's
// outputs: the command line recorded in the job folders leaves them out,
// so that the folders are the same whatever the worker count or shard.
var runFlags = map[string]bool{"workers": true, "jobs": true, "shard": true, "out": true, "resume": true, "quiet": true, "wait": true}

// recordedArgs returns args without the run flags (and their values).
func recordedArgs(args []string, fs *flag.FlagSet) []string {
	var out []string
	for i := 0; i < len(args); i++ {
		a := args[i]
		if a == "--" {
			return append(out, args[i:]...)
		}
		name, _, hasValue := strings.Cut(strings.TrimPrefix(a, "--"), "=")
		if !strings.HasPrefix(a, "--") || !runFlags[name] {
			out = append(out, a)
			continue
		}
		if fl := fs.Lookup(name); !hasValue && fl != nil && fl.NoOptDefVal == "" {
			i++ // the flag's value is the next argument
		}
	}
	return out
}

// provenance records where the batch's numbers come from, the same for
// every job and shard of one batch: canalstep's version, the command line
// without the run flags, every input file with its SHA-256 (each DEM,
// alignment file and design file read whole once per run; a /vsi… path is
// recorded without a hash), the first DEM's CRS and cell size, and the
// inputs' date: the newest input file's modification date, or
// SOURCE_DATE_EPOCH when set; never the clock.
func (b *batchSetup) provenance(args []string, info terrain.Info) (report.Provenance, error) {
	p := report.Provenance{Version: version(), CommandLine: "canalstep batch " + quoteArgs(recordedArgs(args, b.fs)),
		DEMCRS: info.CRSWKT, DEMCellSize: describeDEM(info).CellSize}
	if info.EPSG > 0 {
		p.DEMCRS = "EPSG:" + strconv.Itoa(info.EPSG)
	}
	var inputs []struct{ role, path string }
	for _, d := range b.dems {
		inputs = append(inputs, struct{ role, path string }{"dem", d})
	}
	for _, f := range b.files {
		inputs = append(inputs, struct{ role, path string }{"alignment", f})
	}
	if b.designPath != "" {
		inputs = append(inputs, struct{ role, path string }{"design", b.designPath})
	}
	var newest time.Time
	for _, in := range inputs {
		f, err := os.Open(in.path)
		if err != nil {
			if strings.HasPrefix(in.path, "/vsi") {
				p.Inputs = append(p.Inputs, report.InputFile{Role: in.role, Path: in.path})
				continue
			}
			return p, inputf("cannot read the %s file %s: %v", in.role, textsafe.Terminal(in.path), err)
		}
		st, err := f.Stat()
		var rec report.InputFile
		if err == nil {
			rec, err = html.NewInputFile(in.role, in.path, f)
		}
		f.Close()
		if err != nil {
			return p, inputf("cannot read the %s file %s: %v", in.role, textsafe.Terminal(in.path), err)
		}
		p.Inputs = append(p.Inputs, rec)
		if st.ModTime().After(newest) {
			newest = st.ModTime()
		}
	}
	if sde := os.Getenv("SOURCE_DATE_EPOCH"); sde != "" {
		if sec, err := strconv.ParseInt(sde, 10, 64); err == nil {
			newest = time.Unix(sec, 0)
		}
	}
	p.InputsDate = newest.UTC().Format("2006-01-02")
	return p, nil
}

// jobKey is what defines a job, the DEM's bytes aside; its hash is the
// job's content hash.
type jobKey struct {
	Version string
	Units   string
	DEMs    []string // as named
	Ground  struct {
		AlignmentCRS, ZUnits, Interp, Model string
		Spacing, Start, MinZ, MaxZ, Curve   float64
	}
	Alignment struct {
		Name, CRS  string
		Line       [][2]float64
		Properties map[string]any
		Overrides  alignment.Overrides
	}
	Offtakes []alignment.Offtake // Index and Feature (places in the file) zeroed
	Design   planner.Design
}

// hashJobs sets every job's content hash (what defines the job) and input
// hash (that and the provenance its folder records, so the input files'
// bytes and date) and returns the batch's identity: a hash over every job's
// key and content hash, the same in every shard of one batch.
func (b *batchSetup) hashJobs(aligns []*job, jobs []*batchJob, prov report.Provenance) string {
	recorded := hashOf(prov)
	batch := sha256.New()
	for _, jb := range jobs {
		j := aligns[jb.align]
		var k jobKey
		k.Version, k.Units, k.DEMs = version(), b.sys.String(), b.dems
		g := b.ground
		k.Ground.AlignmentCRS, k.Ground.ZUnits, k.Ground.Interp, k.Ground.Model = g.alignmentCRS, g.zUnits, g.interp, b.model
		k.Ground.Spacing, k.Ground.Start, k.Ground.MinZ, k.Ground.MaxZ, k.Ground.Curve = g.spacing, g.startChainage, g.minZ, g.maxZ, g.curveRadius
		k.Alignment.Name, k.Alignment.CRS, k.Alignment.Properties, k.Alignment.Overrides = j.a.Name, j.a.CRS, j.a.Properties, j.a.Overrides
		for _, p := range j.a.Line {
			k.Alignment.Line = append(k.Alignment.Line, [2]float64(p))
		}
		for _, o := range j.offs {
			o.Index, o.Feature = 0, 0
			k.Offtakes = append(k.Offtakes, o)
		}
		k.Design = j.design
		k.Design.DropHeights = jb.heights
		jb.content = hashOf(k)
		sum := sha256.Sum256([]byte(jb.content + " " + recorded))
		jb.input = hex.EncodeToString(sum[:])
		fmt.Fprintf(batch, "%q %s\n", jb.key, jb.content)
	}
	return hex.EncodeToString(batch.Sum(nil))
}

// hashOf returns the hex SHA-256 of v's canonical encoding (see canonical).
func hashOf(v any) string {
	h := sha256.New()
	canonical(h, v)
	return hex.EncodeToString(h.Sum(nil))
}

// canonical writes v to w so that equal values write equal bytes and
// unequal ones (almost surely) not: every value with its kind, strings and
// lists with their length, floats as their bits, pointers as nil or what
// they point to, maps in key order, interfaces with their dynamic type,
// funcs as set or nil (their code is not hashed). Unexported fields count.
func canonical(w io.Writer, v any) {
	var buf []byte
	var walk func(x reflect.Value)
	walk = func(x reflect.Value) {
		buf = append(buf, byte(x.Kind()))
		switch x.Kind() {
		case reflect.Invalid:
		case reflect.Bool:
			if x.Bool() {
				buf = append(buf, 1)
			} else {
				buf = append(buf, 0)
			}
		case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
			buf = binary.BigEndian.AppendUint64(buf, uint64(x.Int()))
		case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64, reflect.Uintptr:
			buf = binary.BigEndian.AppendUint64(buf, x.Uint())
		case reflect.Float32, reflect.Float64:
			buf = binary.BigEndian.AppendUint64(buf, math.Float64bits(x.Float()))
		case reflect.String:
			buf = binary.BigEndian.AppendUint64(buf, uint64(x.Len()))
			buf = append(buf, x.String()...)
		case reflect.Slice, reflect.Array:
			buf = binary.BigEndian.AppendUint64(buf, uint64(x.Len()))
			for i := range x.Len() {
				walk(x.Index(i))
			}
		case reflect.Struct:
			t := x.Type()
			for i := range x.NumField() {
				buf = append(buf, t.Field(i).Name...)
				walk(x.Field(i))
			}
		case reflect.Pointer, reflect.Interface:
			if x.IsNil() {
				buf = append(buf, 0)
				return
			}
			buf = append(buf, 1)
			if x.Kind() == reflect.Interface {
				buf = append(buf, x.Elem().Type().String()...)
			}
			walk(x.Elem())
		case reflect.Map:
			keys := x.MapKeys()
			sort.Slice(keys, func(i, j int) bool { return fmt.Sprint(keys[i]) < fmt.Sprint(keys[j]) })
			buf = binary.BigEndian.AppendUint64(buf, uint64(len(keys)))
			for _, k := range keys {
				walk(k)
				walk(x.MapIndex(k))
			}
		case reflect.Func, reflect.Chan, reflect.UnsafePointer:
			if x.IsNil() {
				buf = append(buf, 0)
			} else {
				buf = append(buf, 1)
			}
		default:
			panic("canonical: kind " + x.Kind().String())
		}
		if len(buf) > 1<<16 {
			w.Write(buf)
			buf = buf[:0]
		}
	}
	walk(reflect.ValueOf(v))
	w.Write(buf)
}
