package terrain_test

import (
	"errors"
	"os"
	"path/filepath"
	"slices"
	"testing"

	"github.com/airbusgeo/godal"

	"canalstep/terrain"
)

// TestWriteGeoTIFFRows checks that a grid streamed band by band through Rows
// reads back equal to the same grid written from Data, tiled 256×256 and
// DEFLATE-compressed as documented.
func TestWriteGeoTIFFRows(t *testing.T) {
	dir := t.TempDir()
	const w, h = 300, 600 // 600 rows: three bands of 256, the last partial
	g := roughGrid(w, h, 2)
	whole := mustWriteDEM(t, dir, "whole.tif", g)
	streamed := g
	streamed.Data = nil
	calls := 0
	streamed.Rows = func(row0, n int, dst []float32) error {
		calls++
		copy(dst, g.Data[row0*w:(row0+n)*w])
		return nil
	}
	rows := mustWriteDEM(t, dir, "rows.tif", streamed)
	if calls != 3 {
		t.Errorf("Rows called %d times, want 3", calls)
	}
	for _, p := range []string{whole, rows} {
		ds, err := godal.Open(p)
		if err != nil {
			t.Fatal(err)
		}
		got := make([]float32, w*h)
		if err := ds.Read(0, 0, got, w, h); err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(got, g.Data) {
			t.Errorf("%s: values differ from the grid", p)
		}
		st := ds.Bands()[0].Structure()
		comp := ds.Metadata("COMPRESSION", godal.Domain("IMAGE_STRUCTURE"))
		if st.BlockSizeX != 256 || st.BlockSizeY != 256 || comp != "DEFLATE" {
			t.Errorf("%s: blocks %d×%d, compression %q; want 256×256 DEFLATE", p, st.BlockSizeX, st.BlockSizeY, comp)
		}
		ds.Close()
	}
}

// TestWriteGeoTIFFAtomic checks that a failed write leaves an existing file
// untouched and no temporary file behind.
func TestWriteGeoTIFFAtomic(t *testing.T) {
	dir := t.TempDir()
	g := planar(300, 600, 5, 0, 0)
	path := mustWriteDEM(t, dir, "dem.tif", g)
	before, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	broken := g
	broken.Data = nil
	boom := errors.New("generator failed")
	broken.Rows = func(row0, n int, dst []float32) error {
		if row0 > 0 {
			return boom
		}
		return nil
	}
	err = terrain.WriteGeoTIFF(path, broken)
	if !errors.Is(err, boom) {
		t.Fatalf("got %v, want the Rows error", err)
	}
	after, err := os.ReadFile(path)
	if err != nil || !slices.Equal(before, after) {
		t.Errorf("existing file changed by a failed write (%v)", err)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		var names []string
		for _, e := range entries {
			names = append(names, e.Name())
		}
		t.Errorf("folder holds %v, want only dem.tif", names)
	}
	if err := terrain.WriteGeoTIFF(filepath.Join(dir, "bad.tif"), terrain.Grid{Width: 2, Height: 2, Data: make([]float32, 3)}); err == nil {
		t.Error("grid with 3 values for 2×2 cells was written")
	}
}

// TestWriteGeoTIFFOptions checks the CRS and compression options: a grid in
// California zone 3 (US survey feet), uncompressed.
func TestWriteGeoTIFFOptions(t *testing.T) {
	g := planar(8, 8, 1, 0, 0)
	g.EPSG = 0
	path := mustWriteDEM(t, t.TempDir(), "ca.tif", g, terrain.WithCRS("EPSG:2227"), terrain.WithCompression("NONE"))
	in := mustOpen(t, path, terrain.Options{}).Info()
	// 0.304800609601219 m per US survey foot, from the EPSG dataset (unit 9003).
	if in.EPSG != 2227 || in.LinearUnitToMetre != 0.304800609601219 {
		t.Errorf("EPSG %d, unit %v m; want 2227, 0.304800609601219 m", in.EPSG, in.LinearUnitToMetre)
	}
	ds, err := godal.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer ds.Close()
	if c := ds.Metadata("COMPRESSION", godal.Domain("IMAGE_STRUCTURE")); c != "" {
		t.Errorf("compression %q, want none", c)
	}
}
