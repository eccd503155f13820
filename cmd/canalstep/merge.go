package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	flag "github.com/spf13/pflag"

	"canalstep/report"
	"canalstep/report/index"
	"canalstep/report/outdir"
	"canalstep/report/textsafe"
)

// maxIndexBytes bounds a shard's index.json (about 600 bytes a job: far
// above any batch's, low enough to refuse a wrong file fast).
const maxIndexBytes = 256 << 20

// runMerge implements `canalstep merge --out MERGED DIR...`: the shard
// folders of one batch (canalstep batch --shard K/N) combined into one
// folder whose index and job folders equal, byte for byte, those of the
// batch run whole.
func runMerge(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("merge", stdout)
	out := fs.String("out", "", "the merged folder (required); it must not be one of the shard folders")
	wait := fs.Bool("wait", false, "wait for another run writing the same --out to finish, instead of refusing")
	fs.Usage = func() {
		fmt.Fprintln(stdout, "Usage: canalstep merge --out MERGED DIR...")
		fmt.Fprintln(stdout, `
Combines the output folders of the shards of one batch (canalstep batch --shard K/N --out DIR) into
MERGED: every job folder, hard-linked where the file system allows it and copied where not, and one
index.csv, index.html and index.json, the same byte for byte as a batch run whole would write.
Refuses folders of different batches and a job found in two folders. A job in none of the folders
(its shard did not run or did not finish) is indexed as missing, and the exit status is 1, as it is
when any job of any shard failed.

Flags:`)
		fs.PrintDefaults()
		fmt.Fprintf(stdout, "\n%s\n", exitCodeHelp)
	}
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return nil
		}
		return usagef("merge: %v (see 'canalstep merge --help')", err)
	}
	dirs := fs.Args()
	switch {
	case *out == "":
		return usagef("merge: --out is required: give the merged folder")
	case len(dirs) == 0:
		return usagef("merge: give the shard folders to merge after the flags")
	}
	parts := make([]index.Part, len(dirs))
	roots := make([]string, len(dirs))
	outAbs, _ := filepath.Abs(*out)
	for i, d := range dirs {
		p := filepath.Join(d, "index.json")
		data, err := readInput(p, "shard index", maxIndexBytes)
		if err != nil {
			return inputf("merge: %s has no readable index.json (%v): give folders that canalstep batch wrote", textsafe.Terminal(d), oneLine(err))
		}
		ix, err := index.ReadJSON(strings.NewReader(string(data)))
		if err != nil {
			return inputf("merge: %s: %v", textsafe.Terminal(p), err)
		}
		parts[i] = index.Part{Name: d, Index: ix}
		if roots[i], err = filepath.EvalSymlinks(d); err == nil {
			roots[i], err = filepath.Abs(roots[i])
		}
		if err != nil {
			return inputf("merge: %s: %v", textsafe.Terminal(d), err)
		}
		if real, err := filepath.EvalSymlinks(outAbs); (err == nil && real == roots[i]) || outAbs == roots[i] {
			return usagef("merge: --out %s is the shard folder %s; merge into a new folder", textsafe.Terminal(*out), textsafe.Terminal(d))
		}
	}
	merged, missing, err := index.Merge(parts)
	if err != nil {
		return inputf("merge: %v", err)
	}
	owner := map[int]int{} // job number -> the part that ran it
	for i, p := range parts {
		for _, r := range p.Index.Rows {
			if r.Status != index.OtherShard {
				owner[r.Job] = i
			}
		}
	}
	dir, err := openOut(ctx, *out, *wait, stderr)
	if err != nil {
		return err
	}
	defer closeDir(dir)
	dirsOut := newAlignDirs(dir)
	defer dirsOut.closeAll()
	copied := 0
	for _, r := range merged.Rows {
		if err := ctx.Err(); err != nil {
			return fmt.Errorf("merge interrupted after %d job folders: %w", copied, err)
		}
		if r.Folder == "" {
			continue
		}
		src := filepath.Join(roots[owner[r.Job]], filepath.FromSlash(r.Folder))
		if err := writeJob(dirsOut, r.Folder, func(st report.Stager) error { return copyFolder(st, src) }); err != nil {
			return fmt.Errorf("merge: job %d (%s): %w", r.Job, textsafe.Terminal(r.Folder), err)
		}
		copied++
	}
	if err := writeIndex(dir, merged); err != nil {
		return err
	}
	fmt.Fprintf(stdout, "merged %d folders: %s; %d job folders in %s; index: %s\n", len(dirs), merged.CountText(), copied,
		textsafe.Terminal(*out), textsafe.Terminal(filepath.Join(*out, "index.html")))
	var failed []string
	for _, r := range merged.Rows {
		if r.Status == index.Failed || r.Status == index.NotRun {
			failed = append(failed, fmt.Sprintf("%d", r.Job))
		}
	}
	switch {
	case len(missing) > 0:
		var nums []string
		for _, n := range missing {
			nums = append(nums, fmt.Sprint(n))
		}
		return fmt.Errorf("merge: %d jobs are in none of the folders given (jobs %s): run their shards and merge again", len(missing), listOf(nums, 20))
	case len(failed) > 0:
		return fmt.Errorf("merge: %d jobs failed or did not run in their shard (jobs %s); their reasons are in %s", len(failed), listOf(failed, 20),
			textsafe.Terminal(filepath.Join(*out, "index.csv")))
	}
	return nil
}

// copyFolder puts every file of the job folder src into st: a hard link
// where the file system allows it (the files are never written in place:
// a later run replaces a folder whole), else a copy. The marker file is
// left to the commit; anything but a regular file is refused.
func copyFolder(st report.Stager, src string) error {
	if fi, err := os.Lstat(filepath.Join(src, outdir.MarkerFile)); err != nil || !fi.Mode().IsRegular() {
		return fmt.Errorf("%s is not a job folder canalstep wrote (no %s in it)", textsafe.Terminal(src), outdir.MarkerFile)
	}
	entries, err := os.ReadDir(src)
	if err != nil {
		return err
	}
	for _, e := range entries {
		name := e.Name()
		if name == outdir.MarkerFile {
			continue
		}
		if !e.Type().IsRegular() {
			return fmt.Errorf("%s is not a regular file; a job folder holds files only", textsafe.Terminal(filepath.Join(src, name)))
		}
		dst, err := st.Path(name)
		if err != nil {
			return err
		}
		if os.Link(filepath.Join(src, name), dst) == nil {
			continue
		}
		if err := st.WriteFile(name, func(w io.Writer) error {
			f, err := os.Open(filepath.Join(src, name))
			if err != nil {
				return err
			}
			defer f.Close()
			_, err = io.Copy(w, f)
			return err
		}); err != nil {
			return err
		}
	}
	return nil
}
