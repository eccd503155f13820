package terrain_test

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/airbusgeo/godal"

	"canalstep/terrain"
)

// writeRaw writes a 4×4 Float32 GeoTIFF with godal directly, for fixtures
// that WriteGeoTIFF deliberately cannot make (no or rotated geotransform).
func writeRaw(t *testing.T, path string, gt *[6]float64, epsg int) {
	t.Helper()
	godal.RegisterAll()
	ds, err := godal.Create(godal.GTiff, path, 1, godal.Float32, 4, 4)
	if err != nil {
		t.Fatal(err)
	}
	if gt != nil {
		if err := ds.SetGeoTransform(*gt); err != nil {
			t.Fatal(err)
		}
	}
	if epsg != 0 {
		sr, err := godal.NewSpatialRefFromEPSG(epsg)
		if err != nil {
			t.Fatal(err)
		}
		defer sr.Close()
		if err := ds.SetSpatialRef(sr); err != nil {
			t.Fatal(err)
		}
	}
	if err := ds.Bands()[0].Write(0, 0, make([]float32, 16), 4, 4); err != nil {
		t.Fatal(err)
	}
	if err := ds.Close(); err != nil {
		t.Fatal(err)
	}
}

// TestOpenRefuses checks that DEMs which cannot be sampled are refused with
// one message that says what is wrong and, where there is one, the fix.
func TestOpenRefuses(t *testing.T) {
	dir := t.TempDir()
	noGT := filepath.Join(dir, "nogt.tif")
	writeRaw(t, noGT, nil, 32633)
	rotated := filepath.Join(dir, "rotated.tif")
	writeRaw(t, rotated, &[6]float64{500000, 10, 2, 4000000, 2, -10}, 32633)
	noCRS := mustWriteDEM(t, dir, "nocrs.tif", terrain.Grid{Width: 4, Height: 4,
		GeoTransform: fxGeoTransform(), Data: make([]float32, 16)})
	thin := mustWriteDEM(t, dir, "thin.tif", terrain.Grid{Width: 5, Height: 1,
		GeoTransform: fxGeoTransform(), EPSG: 32633, Data: make([]float32, 5)})
	good := mustWriteDEM(t, dir, "good.tif", planar(4, 4, 1, 0, 0))
	text := filepath.Join(dir, "notes.txt")
	if err := os.WriteFile(text, []byte("not a raster\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	missing := filepath.Join(dir, "missing.tif")

	tests := []struct {
		name    string
		path    string
		opt     terrain.Options
		is      error
		message []string // substrings the message must hold
	}{
		{"missing file", missing, terrain.Options{}, nil, []string{"cannot open DEM", missing, "No such file"}},
		{"not a raster", text, terrain.Options{}, nil, []string{"cannot open DEM", text}},
		{"no geotransform", noGT, terrain.Options{}, terrain.ErrNoGeoTransform, []string{noGT, "no georeferencing (geotransform)"}},
		{"no CRS", noCRS, terrain.Options{}, terrain.ErrNoCRS, []string{"no coordinate reference system", "gdal_edit.py -a_srs EPSG:n"}},
		{"rotated", rotated, terrain.Options{}, terrain.ErrRotated, []string{"rotated rasters are not supported", "gdalwarp"}},
		{"one row", thin, terrain.Options{}, nil, []string{"5×1 cells", "at least 2×2"}},
		{"bad z-units", good, terrain.Options{ZUnits: "yd"}, nil, []string{`unknown vertical unit "yd"`, "m, ft or us-ft"}},
		{"bad method", good, terrain.Options{Method: 7}, nil, []string{"interpolation method"}},
		{"negative cache", good, terrain.Options{CacheBlocks: -1}, nil, []string{"negative"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			d, err := terrain.Open(tt.path, tt.opt)
			if err == nil {
				d.Close()
				t.Fatal("Open succeeded, want an error")
			}
			t.Log(err)
			if tt.is != nil && !errors.Is(err, tt.is) {
				t.Errorf("error %q is not %q", err, tt.is)
			}
			for _, s := range tt.message {
				if !strings.Contains(err.Error(), s) {
					t.Errorf("error %q does not mention %q", err, s)
				}
			}
			if strings.Contains(err.Error(), "\n") {
				t.Errorf("error %q spans several lines", err)
			}
		})
	}
}

// TestInfo checks what Open reports about a DEM the test wrote.
func TestInfo(t *testing.T) {
	path := mustWriteDEM(t, t.TempDir(), "info.tif", roughGrid(300, 200, 1))
	d := mustOpen(t, path, terrain.Options{ZUnits: "ft", Method: terrain.Nearest, CacheBlocks: 8})
	in := d.Info()
	checks := []struct {
		name      string
		got, want any
	}{
		{"Path", in.Path, path},
		{"Width", in.Width, 300},
		{"Height", in.Height, 200},
		{"CellX", in.CellX, 10.0},
		{"CellY", in.CellY, 10.0},
		{"GeoTransform", in.GeoTransform, fxGeoTransform()},
		{"EPSG", in.EPSG, 32633},
		{"Geographic", in.Geographic, false},
		{"LinearUnitToMetre", in.LinearUnitToMetre, 1.0},
		{"NoData", in.NoData, -9999.0},
		{"HasNoData", in.HasNoData, true},
		{"Scale", in.Scale, 1.0},
		{"Offset", in.Offset, 0.0},
		{"DataType", in.DataType, "Float32"},
		{"BlockX", in.BlockX, 256},
		{"BlockY", in.BlockY, 256},
		{"CacheBlockX", in.CacheBlockX, 256},
		{"CacheBlockY", in.CacheBlockY, 200}, // cut to the raster's height
		{"CacheBlocks", in.CacheBlocks, 8},
		{"ZUnits", in.ZUnits, "ft"},
		{"Method", in.Method, terrain.Nearest},
	}
	for _, c := range checks {
		if c.got != c.want {
			t.Errorf("Info().%s = %v, want %v", c.name, c.got, c.want)
		}
	}
	if !strings.Contains(in.CRSWKT, "UTM zone 33N") {
		t.Errorf("CRSWKT %q does not name UTM zone 33N", in.CRSWKT)
	}
	if err := d.Close(); err != nil {
		t.Fatal(err)
	}
	if err := d.Sample([]float64{fxX0 + 5}, []float64{fxY0 - 5}, []float64{0}); err == nil {
		t.Error("Sample after Close succeeded")
	}
	if err := d.Close(); err != nil {
		t.Errorf("second Close: %v", err)
	}
}

// TestGeographicDEM checks Info and sampling for a DEM in EPSG:4326 (lon/lat
// in degrees, traditional GIS order).
func TestGeographicDEM(t *testing.T) {
	g := planar(40, 30, 200, 0.5, -0.25)
	g.GeoTransform = [6]float64{15, 0.001, 0, 36.03, 0, -0.001} // invented: 0.001° cells
	g.EPSG = 4326
	path := mustWriteDEM(t, t.TempDir(), "geo.tif", g)
	d := mustOpen(t, path, terrain.Options{})
	in := d.Info()
	if !in.Geographic || in.EPSG != 4326 || in.LinearUnitToMetre != 0 {
		t.Errorf("Info: Geographic=%v EPSG=%d LinearUnitToMetre=%v, want true 4326 0", in.Geographic, in.EPSG, in.LinearUnitToMetre)
	}
	out := []float64{0}
	// lon 15.0105, lat 36.0195: col 10, row 10 fractional 10.0, 10.0 from
	// the first centre → 200 + 0.5·10 − 0.25·10.
	if err := d.Sample([]float64{15.0105}, []float64{36.0195}, out); err != nil {
		t.Fatal(err)
	}
	if want := 202.5; math.Abs(out[0]-want) > 1e-6 { // coordinates carry ~1e-12° rounding
		t.Errorf("sample at (15.0105°E, 36.0195°N) = %v m, want %v m", out[0], want)
	}
}

// TestVSIPath opens a DEM through GDAL's virtual file system (/vsimem/, as
// /vsicurl/ and /vsis3/ work for remote files), with parallel readers, which
// open the path again.
func TestVSIPath(t *testing.T) {
	const path = "/vsimem/terrain-test/plane.tif"
	if err := terrain.WriteGeoTIFF(path, planar(600, 300, 20, 0.5, 0.25)); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { godal.VSIUnlink(path) })
	d := mustOpen(t, path, terrain.Options{Readers: 2})
	// Two points in different 256-cell blocks: cells (10, 10) and (500, 200).
	x0, y0 := cellCentre(10, 10)
	x1, y1 := cellCentre(500, 200)
	out := make([]float64, 2)
	if err := d.Sample([]float64{x0, x1}, []float64{y0, y1}, out); err != nil {
		t.Fatal(err)
	}
	want := []float64{20 + 5 + 2.5, 20 + 250 + 50} // plane at the centres, exact in float32
	if out[0] != want[0] || out[1] != want[1] {
		t.Errorf("got %v, want %v", out, want)
	}
	if d.BlocksRead() != 2 {
		t.Errorf("%d blocks read, want 2", d.BlocksRead())
	}
}

// TestVRT opens a DEM that is not a GeoTIFF (a GDAL VRT over one), which
// needs drivers beyond GeoTIFF, and checks it samples like its source.
func TestVRT(t *testing.T) {
	dir := t.TempDir()
	tif := mustWriteDEM(t, dir, "plane.tif", planar(8, 8, 40, 1.5, -0.5))
	vrt := filepath.Join(dir, "plane.vrt")
	xml := `<VRTDataset rasterXSize="8" rasterYSize="8">
  <SRS>EPSG:32633</SRS>
  <GeoTransform>500000, 10, 0, 4000000, 0, -10</GeoTransform>
  <VRTRasterBand dataType="Float32" band="1">
    <SimpleSource>
      <SourceFilename relativeToVRT="1">plane.tif</SourceFilename>
      <SourceBand>1</SourceBand>
    </SimpleSource>
  </VRTRasterBand>
</VRTDataset>
`
	if err := os.WriteFile(vrt, []byte(xml), 0o644); err != nil {
		t.Fatal(err)
	}
	xs, ys := []float64{fxX0 + 12, fxX0 + 47.5}, []float64{fxY0 - 33, fxY0 - 71.25}
	var got [2][]float64
	for i, p := range []string{tif, vrt} {
		d := mustOpen(t, p, terrain.Options{})
		got[i] = make([]float64, len(xs))
		if err := d.Sample(xs, ys, got[i]); err != nil {
			t.Fatalf("%s: %v", p, err)
		}
		if d.Info().EPSG != 32633 {
			t.Errorf("%s: EPSG %d", p, d.Info().EPSG)
		}
	}
	if got[0][0] != got[1][0] || got[0][1] != got[1][1] {
		t.Errorf("VRT samples %v, GeoTIFF samples %v", got[1], got[0])
	}
}
