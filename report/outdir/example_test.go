package outdir_test

import (
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"canalstep/report/outdir"
)

// One run writes each alignment's files into a staging folder and commits
// the folder as a whole; a failed or interrupted run ends with a line that
// says which folders were written.
func Example() {
	tmp, _ := os.MkdirTemp("", "outdir-example")
	defer os.RemoveAll(tmp)
	root := filepath.Join(tmp, "out")

	d, err := outdir.Open(context.Background(), root, outdir.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	defer d.Close()
	alignments := []string{"Main", "East", "West"}
	for _, name := range alignments[:2] { // West fails before it is written
		st, err := d.Stage(name)
		if err != nil {
			fmt.Println(err)
			return
		}
		err = st.WriteFile("drops.csv", func(w io.Writer) error {
			_, err := fmt.Fprintln(w, "station,drop_m")
			return err
		})
		if err == nil {
			err = st.Commit()
		}
		st.Discard() // after Commit it does nothing
		if err != nil {
			fmt.Println(err)
			return
		}
	}
	// A second run into the same folder is refused while this one holds it.
	_, err = outdir.Open(context.Background(), root, outdir.Options{})
	fmt.Println(err != nil)

	entries, _ := os.ReadDir(filepath.Join(root, "Main"))
	for _, e := range entries {
		fmt.Println(e.Name())
	}
	// The report names the folder as given to Open; shorten the temporary path.
	fmt.Println(strings.ReplaceAll(d.Report(alignments, false), root, "out"))
	// Output:
	// true
	// .canalstep-folder
	// drops.csv
	// 2 of 3 alignment folders written to out: Main, East; not written: West
}
