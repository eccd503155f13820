package outdir

import (
	"bytes"
	"io"
	"testing"
)

// One alignment folder as the CLI writes it: six files of 20 kB, staged and
// committed over the previous run's folder. "sync" is the default policy,
// "nosync" Options.NoSync; the difference is the cost of durability on the
// file system under the test's temporary folder.
func BenchmarkCommit(b *testing.B) {
	content := bytes.Repeat([]byte("0+250.00,101.25,100.75\n"), 20000/23)
	files := []string{"stations.csv", "drops.csv", "summary.json", "profile.svg", "profile.png", "landxml.xml"}
	for _, bc := range []struct {
		name   string
		noSync bool
	}{{"sync", false}, {"nosync", true}} {
		b.Run(bc.name, func(b *testing.B) {
			d := mustOpen(b, b.TempDir(), Options{NoSync: bc.noSync})
			b.ReportAllocs()
			for b.Loop() {
				st, err := d.Stage("Main")
				if err != nil {
					b.Fatal(err)
				}
				for _, f := range files {
					if err := st.WriteFile(f, func(w io.Writer) error { _, err := w.Write(content); return err }); err != nil {
						b.Fatal(err)
					}
				}
				if err := st.Commit(); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
