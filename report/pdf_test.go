package report

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"
)

// TestPDFReproducible: the long section as PDF is byte-identical on a
// rerun (no wall-clock date in the file) and is a PDF.
func TestPDFReproducible(t *testing.T) {
	p, r := smallPlan(t)
	ls := NewLongSection(p.Name, r, SI)
	dir := t.TempDir()
	var got [2][]byte
	for k := range got {
		path := filepath.Join(dir, []string{"a.pdf", "b.pdf"}[k])
		if err := WriteLongSection(path, ls); err != nil {
			t.Fatal(err)
		}
		b, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		got[k] = b
	}
	if !bytes.HasPrefix(got[0], []byte("%PDF-")) {
		t.Fatalf("not a PDF: %q", got[0][:min(16, len(got[0]))])
	}
	if !bytes.Equal(got[0], got[1]) {
		t.Errorf("two renderings of the same long section differ")
	}
}
