package report

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
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

// TestPDFTextEncoding: a plot written as PDF reads back (pdftotext,
// poppler) with its accented and typographic characters as written; they
// came out as mojibake when UTF-8 went to vgpdf's Windows-1252 fonts.
func TestPDFTextEncoding(t *testing.T) {
	x, z := testGround(50, 500, false)
	path := filepath.Join(t.TempDir(), "g.pdf")
	if err := WriteGroundProfile(path, GroundProfile{Name: "Süd – Nord", Chainage: x, Ground: z, Units: SI}); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if got := pdfTool(t, "pdftotext", b); !strings.Contains(got, "Ground profile: Süd – Nord (vertical exaggeration") {
		t.Errorf("title as read back:\n%s", got)
	}
}
