package terrain

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"
)

// writeTestTIFF writes a 4×4 GeoTIFF with GDAL (WriteGeoTIFF), its CRS
// from def ("" for none), and returns its path.
func writeTestTIFF(t *testing.T, dir, name, def string) string {
	t.Helper()
	g := Grid{Width: 4, Height: 4, GeoTransform: [6]float64{500000, 10, 0, 4000000, 0, -10}, Data: make([]float32, 16)}
	var opts []WriteOption
	if def != "" {
		opts = append(opts, WithCRS(def))
	}
	p := filepath.Join(dir, name)
	if err := WriteGeoTIFF(p, g, opts...); err != nil {
		t.Fatal(err)
	}
	return p
}

// gdalCRS is the CRS as GDAL reads it from the file: the reference.
func gdalCRS(t *testing.T, path string) CRS {
	t.Helper()
	ds, err := openRaster(path)
	if err != nil {
		t.Fatal(err)
	}
	defer ds.Close()
	wkt := ds.Projection()
	c, err := crsInfo(wkt)
	if err != nil {
		t.Fatal(err)
	}
	c.WKT = wkt
	return c
}

// TestGeoTIFFCRS checks the fast reading of a GeoTIFF's CRS against GDAL's
// own on GeoTIFFs GDAL wrote: the same WKT, letter for letter, and the same
// description, for UTM north and south, Web Mercator, national grids
// (British, New Zealand: northing first officially), state plane in US
// survey feet, conic and azimuthal equal-area CRSs. The codes are EPSG's.
func TestGeoTIFFCRS(t *testing.T) {
	dir := t.TempDir()
	for _, code := range []string{"32633", "32733", "3857", "27700", "2193", "2227", "25832", "3035", "5070", "6933", "2154", "31287"} {
		t.Run(code, func(t *testing.T) {
			p := writeTestTIFF(t, dir, "e"+code+".tif", "EPSG:"+code)
			got, ok := geoTIFFCRS(p)
			if !ok {
				t.Fatal("fast path refused a GeoTIFF GDAL wrote from an EPSG code")
			}
			if want := gdalCRS(t, p); got != want {
				t.Errorf("fast path\n%+v\nGDAL\n%+v", got, want)
			}
		})
	}
}

// TestGeoTIFFCRSLeavesToGDAL checks the cases the fast path must leave to
// GDAL, and that Open then still gives GDAL's CRS.
func TestGeoTIFFCRSLeavesToGDAL(t *testing.T) {
	dir := t.TempDir()
	cases := []struct {
		name, def string
		prepare   func(t *testing.T, path string)
		refused   bool // Open refuses the file (an .aux that is no raster)
	}{
		{"geographic", "EPSG:4326", nil, false},
		{"no CRS", "", nil, false},
		{"user-defined projection", "+proj=tmerc +lat_0=0 +lon_0=17 +k=0.9999 +x_0=500000 +y_0=0 +datum=WGS84 +units=m +no_defs", nil, false},
		{"compound with a vertical CRS", "EPSG:32633+5773", nil, false},
		{"PAM side-car", "EPSG:32633", func(t *testing.T, p string) {
			os.WriteFile(p+".AUX.XML", []byte("<PAMDataset><SRS>EPSG:32634</SRS></PAMDataset>"), 0o644)
		}, false},
		{"aux side-car", "EPSG:32633", func(t *testing.T, p string) {
			os.WriteFile(p[:len(p)-4]+".aux", []byte("x"), 0o644)
		}, true},
		{"option set", "EPSG:32633", func(t *testing.T, p string) {
			t.Setenv("GTIFF_SRS_SOURCE", "GEOKEYS")
		}, false},
	}
	for i, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			sub := filepath.Join(dir, string(rune('a'+i)))
			os.Mkdir(sub, 0o755)
			p := writeTestTIFF(t, sub, "dem.tif", tc.def)
			if tc.prepare != nil {
				tc.prepare(t, p)
			}
			if c, ok := geoTIFFCRS(p); ok {
				t.Fatalf("fast path took it: %+v", c)
			}
			if tc.def == "" || tc.refused {
				return
			}
			d, err := Open(p, Options{})
			if err != nil {
				t.Fatal(err)
			}
			defer d.Close()
			if want := gdalCRS(t, p); d.Info().CRSWKT != want.WKT || d.Info().EPSG != want.EPSG {
				t.Errorf("Open: CRS %q (EPSG %d), GDAL reads %q (EPSG %d)", d.Info().CRSWKT, d.Info().EPSG, want.WKT, want.EPSG)
			}
		})
	}
}

// TestOpenFastCRS checks that Open, taking the fast path, describes the DEM
// as GDAL's own reading does.
func TestOpenFastCRS(t *testing.T) {
	p := writeTestTIFF(t, t.TempDir(), "dem.tif", "EPSG:2227")
	d, err := Open(p, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer d.Close()
	want := gdalCRS(t, p)
	i := d.Info()
	if i.CRSWKT != want.WKT || i.EPSG != 2227 || i.Geographic || i.LinearUnitToMetre != want.LinearUnitToMetre {
		t.Errorf("Info %q EPSG %d geographic %v unit %v; GDAL: %+v", i.CRSWKT, i.EPSG, i.Geographic, i.LinearUnitToMetre, want)
	}
}

// FuzzGeoKeys feeds arbitrary bytes to the TIFF and GeoKey reader: it must
// not panic or read outside the data, and what it accepts must be a
// projected CRS code.
func FuzzGeoKeys(f *testing.F) {
	dir := f.TempDir()
	for _, def := range []string{"EPSG:32633", "EPSG:4326", ""} {
		g := Grid{Width: 4, Height: 4, GeoTransform: [6]float64{0, 1, 0, 4, 0, -1}, Data: make([]float32, 16)}
		var opts []WriteOption
		if def != "" {
			opts = append(opts, WithCRS(def))
		}
		p := filepath.Join(dir, "seed.tif")
		if err := WriteGeoTIFF(p, g, opts...); err != nil {
			f.Fatal(err)
		}
		b, err := os.ReadFile(p)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
	f.Add([]byte("II+\x00\x08\x00\x00\x00\x10\x00\x00\x00\x00\x00\x00\x00"))
	f.Fuzz(func(t *testing.T, b []byte) {
		code, _, _, ok := geoKeysFrom(bytes.NewReader(b), int64(len(b)))
		if ok && (code < 1024 || code >= 32767) {
			t.Errorf("accepted code %d", code)
		}
	})
}
