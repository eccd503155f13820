package terrain_test

import (
	"encoding/binary"
	"errors"
	"fmt"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"testing"
	"unsafe"

	"github.com/airbusgeo/godal"

	"canalstep/terrain"
)

// vrtXML returns a VRT of 8×8 cells on the fixture georeferencing whose
// band is band (XML).
func vrtXML(band string) string {
	return `<VRTDataset rasterXSize="8" rasterYSize="8">
  <SRS>EPSG:32633</SRS>
  <GeoTransform>500000, 10, 0, 4000000, 0, -10</GeoTransform>
  ` + band + `
</VRTDataset>
`
}

// simpleBand is a VRT band reading band 1 of the file src (written into
// the XML as it is), relative to the VRT or not.
func simpleBand(src string, relative bool) string {
	rel := "0"
	if relative {
		rel = "1"
	}
	return `<VRTRasterBand dataType="Float32" band="1">
    <SimpleSource>
      <SourceFilename relativeToVRT="` + rel + `">` + src + `</SourceFilename>
      <SourceBand>1</SourceBand>
    </SimpleSource>
  </VRTRasterBand>`
}

func mustWriteFile(tb testing.TB, path, content string) string {
	tb.Helper()
	if err := os.WriteFile(path, []byte(content), 0o644); err != nil {
		tb.Fatal(err)
	}
	return path
}

// TestOpenRefusesUnsafe checks that DEMs which would make GDAL read process
// memory, raw bytes of arbitrary files, run code or open formats outside the
// allow-list are refused with one line that says what is wrong and how to
// fix it, with the sentinels a CLI maps to its bad-input exit, and (where
// the refusal is ours) before GDAL is asked to open or identify anything.
func TestOpenRefusesUnsafe(t *testing.T) {
	dir := t.TempDir()
	good := mustWriteDEM(t, dir, "good.tif", planar(8, 8, 40, 1, 1))
	at := func(name string) string { return filepath.Join(dir, name) }
	vrt := func(name, band string) string { return mustWriteFile(t, at(name), vrtXML(band)) }

	// A Go buffer of a recognisable value (1234.5 m), and a MEM::: string
	// that points GDAL's MEM driver at it, as a crafted VRT would point it
	// at any address of the process.
	secret := make([]float32, 16)
	for i := range secret {
		secret[i] = 1234.5
	}
	defer runtime.KeepAlive(secret)
	mem := fmt.Sprintf("MEM:::DATAPOINTER=%d,PIXELS=4,LINES=4,DATATYPE=Float32", uintptr(unsafe.Pointer(&secret[0])))

	memVRT := vrt("mem.vrt", simpleBand(mem, false))
	vrt("loop2.vrt", simpleBand("loop1.vrt", true))
	// x1 → x2 → x3 → good.tif is 3 VRTs deep: fine from top.vrt's first
	// source, one too many through its second, y.vrt.
	vrt("x3.vrt", simpleBand("good.tif", true))
	vrt("x2.vrt", simpleBand("x3.vrt", true))
	vrt("x1.vrt", simpleBand("x2.vrt", true))
	vrt("y.vrt", simpleBand("x1.vrt", true))
	twoPaths := vrt("top.vrt", `<VRTRasterBand dataType="Float32" band="1">
    <SimpleSource><SourceFilename relativeToVRT="1">x1.vrt</SourceFilename></SimpleSource>
    <SimpleSource><SourceFilename relativeToVRT="1">y.vrt</SourceFilename></SimpleSource>
  </VRTRasterBand>`)
	nested := vrt("outer.vrt", simpleBand("mem.vrt", true))
	// Five VRTs deep over good.tif: one more than the limit of 4.
	chain := "good.tif"
	for i := 5; i >= 1; i-- {
		name := fmt.Sprintf("deep%d.vrt", i)
		vrt(name, simpleBand(chain, true))
		chain = name
	}
	big := at("big.vrt")
	mustWriteFile(t, big, vrtXML(simpleBand("good.tif", true)))
	if err := os.Truncate(big, 17<<20); err != nil { // sparse: 17 MiB, NULs after the XML
		t.Fatal(err)
	}
	// A PNG with a world file and a .aux.xml (GDAL's PNG driver is in the
	// process because the test registered all drivers).
	godal.RegisterAll()
	src, err := godal.Open(good)
	if err != nil {
		t.Fatal(err)
	}
	png := at("dem.png")
	pds, err := src.Translate(png, []string{"-of", "PNG", "-ot", "UInt16", "-co", "WORLDFILE=YES"})
	if err != nil {
		t.Fatal(err)
	}
	pds.Close()
	src.Close()
	if _, err := os.Stat(at("dem.wld")); err != nil {
		t.Fatalf("no world file beside the PNG: %v", err)
	}
	zeroLink := at("zero.tif")
	if err := os.Symlink("/dev/zero", zeroLink); err != nil {
		t.Fatal(err)
	}
	sub := at("grid")
	if err := os.Mkdir(sub, 0o755); err != nil {
		t.Fatal(err)
	}
	empty := mustWriteFile(t, at("empty.tif"), "")
	// An overview side-car that is a MEM VRT: GDAL opens x.tif.ovr when it
	// reads x.tif at reduced resolution, as a VRT source may ask it to.
	withOvr := mustWriteDEM(t, dir, "ovr.tif", planar(8, 8, 40, 1, 1))
	mustWriteFile(t, withOvr+".OVR", vrtXML(simpleBand(mem, false)))

	tests := []struct {
		name    string
		path    string
		is      error    // besides ErrBadDEM
		message []string // substrings
		ours    bool     // refused before any GDAL open or identify
	}{
		{"MEM::: VRT pointing at a Go buffer", memVRT, terrain.ErrVRTRefused,
			[]string{"DEM " + memVRT + ": source 1 is a MEM::: dataset", "canalstep refuses", "point the VRT at a raster file"}, true},
		{"MEM::: as an attribute, lower case", vrt("attr.vrt", `<VRTRasterBand dataType="Float32" band="1"><SimpleSource sourcefilename="mem:::DATAPOINTER=1,PIXELS=4,LINES=4"/></VRTRasterBand>`),
			terrain.ErrVRTRefused, []string{"source 1 is a MEM::: dataset"}, true},
		{"MEM::: in CDATA", vrt("cdata.vrt", simpleBand("<![CDATA["+mem+"]]>", false)), terrain.ErrVRTRefused,
			[]string{"source 1 is a MEM::: dataset"}, true},
		{"MEM::: behind a character reference", vrt("ref.vrt", simpleBand("&#77;"+mem[1:], false)), terrain.ErrVRTRefused,
			[]string{"MEM:::"}, true},
		{"MEM::: relative to the VRT", vrt("rel.vrt", simpleBand(mem, true)), terrain.ErrVRTRefused,
			[]string{"source 1 is a MEM::: dataset"}, true},
		{"nested VRT with a MEM::: source", nested, terrain.ErrVRTRefused,
			[]string{"DEM " + nested + ": source 1 (mem.vrt): source 1 is a MEM::: dataset"}, true},
		{"MEM::: path given as the DEM", mem, terrain.ErrFormatRefused,
			[]string{"is a MEM::: dataset", "give the path of a raster file"}, true},
		{"VRTRawRasterBand over the executable", vrt("raw.vrt", `<VRTRasterBand dataType="Float32" band="1" subClass="VRTRawRasterBand">
    <SourceFilename relativeToVRT="0">/proc/self/exe</SourceFilename>
    <ImageOffset>0</ImageOffset><PixelOffset>4</PixelOffset><LineOffset>32</LineOffset>
  </VRTRasterBand>`), terrain.ErrVRTRefused, []string{"VRTRawRasterBand", "reads raw bytes", "gdal_translate -of GTiff"}, true},
		{"raw band named by a subClass element", vrt("rawel.vrt", `<VRTRasterBand dataType="Float32" band="1"><subclass>VRTRawRasterBand</subclass>
    <SourceFilename>good.tif</SourceFilename></VRTRasterBand>`), terrain.ErrVRTRefused, []string{"VRTRawRasterBand"}, true},
		{"Python pixel function", vrt("py.vrt", `<VRTRasterBand dataType="Float32" band="1" subClass="VRTDerivedRasterBand">
    <PixelFunctionType>lift</PixelFunctionType>
    <PixelFunctionLanguage>Python</PixelFunctionLanguage>
    <PixelFunctionCode>def lift(in_ar, out_ar, *a, **k): out_ar[:] = in_ar[0] + 1</PixelFunctionCode>
    <SimpleSource><SourceFilename relativeToVRT="1">good.tif</SourceFilename></SimpleSource>
  </VRTRasterBand>`), terrain.ErrVRTRefused, []string{"Python pixel function", "gdal_calc.py"}, true},
		{"open options on a source", vrt("oo.vrt", `<VRTRasterBand dataType="Float32" band="1"><SimpleSource>
    <SourceFilename relativeToVRT="1">good.tif</SourceFilename><OpenOptions><OOI key="NUM_THREADS">2</OOI></OpenOptions>
  </SimpleSource></VRTRasterBand>`), terrain.ErrVRTRefused, []string{"open options", "<OpenOptions>"}, true},
		{"VRT naming itself through another", vrt("loop1.vrt", simpleBand("loop2.vrt", true)), terrain.ErrVRTRefused,
			[]string{"source 1 (loop2.vrt): source 1 (loop1.vrt) is a VRT that names itself"}, true},
		{"VRTs five deep through a second path", twoPaths, terrain.ErrVRTRefused,
			[]string{"source 2 (y.vrt): source 1 (x1.vrt): source 1 (x2.vrt): source 1 (x3.vrt) is a VRT nested more than 4 deep"}, false}, // good.tif was identified on the way
		{"VRTs five deep", at("deep1.vrt"), terrain.ErrVRTRefused, []string{"nested more than 4 deep", "flatten"}, true},
		{"VRT over 16 MiB", big, terrain.ErrVRTRefused, []string{"16 MiB limit", "gdalbuildvrt -te"}, true},
		{"geolocation transformer in a warped VRT", vrt("geoloc.vrt", `<VRTRasterBand dataType="Float32" band="1" subClass="VRTWarpedRasterBand"/>
  <GDALWarpOptions><SourceDataset relativeToVRT="1">good.tif</SourceDataset><Transformer><GenImgProjTransformer>
    <SrcGeoLocTransformer><Metadata><MDI key="X_BAND">1</MDI></Metadata></SrcGeoLocTransformer>
  </GenImgProjTransformer></Transformer></GDALWarpOptions>`), terrain.ErrVRTRefused,
			[]string{"uses <SrcGeoLocTransformer>", "gdal_translate -of GTiff"}, true},
		{"pansharpening", vrt("pan.vrt", `<PansharpeningOptions><PanchroBand><SourceFilename relativeToVRT="1">good.tif</SourceFilename></PanchroBand></PansharpeningOptions>`),
			terrain.ErrVRTRefused, []string{"uses <PansharpeningOptions>"}, true},
		{"DTD in a VRT", mustWriteFile(t, at("dtd.vrt"), `<!DOCTYPE x [<!ENTITY e "MEM">]>`+vrtXML(simpleBand("good.tif", true))),
			terrain.ErrVRTRefused, []string{"DTD"}, true},
		{"broken XML", mustWriteFile(t, at("broken.vrt"), `<VRTDataset rasterXSize="8"><VRTRasterBand></VRTDataset>`),
			terrain.ErrVRTRefused, []string{"not well-formed VRT XML", "gdalbuildvrt"}, true},
		{"source is a connection string", vrt("hdf.vrt", simpleBand(`HDF5:"dem.h5"://elevation`, false)), terrain.ErrVRTRefused,
			[]string{"source 1 is a GDAL connection string (HDF5:…)"}, true},
		{"source is a URL", vrt("url.vrt", simpleBand("https://example.invalid/dem.tif", false)), terrain.ErrVRTRefused,
			[]string{"source 1 is a URL", "/vsicurl/"}, true},
		{"source is a byte range of process memory", vrt("subfile.vrt", simpleBand("/vsisubfile/4096_64,/proc/self/mem", false)),
			terrain.ErrVRTRefused, []string{"/vsisubfile/ file system", "canalstep refuses"}, true},
		{"source is an archive under /proc", vrt("zip.vrt", simpleBand("/vsizip//proc/self/cwd/a.zip/dem.tif", false)),
			terrain.ErrVRTRefused, []string{"archive under /proc"}, true},
		{"source is /dev/zero", vrt("devzero.vrt", simpleBand("/dev/zero", false)), terrain.ErrNotAFile,
			[]string{"source 1 is a system file"}, true},
		{"source does not exist", vrt("missing.vrt", simpleBand("gone.tif", true)), fs.ErrNotExist,
			[]string{"source 1 (gone.tif) does not exist", "fix the path in the VRT"}, true},
		{"source is a directory", vrt("dirsrc.vrt", simpleBand("grid", true)), terrain.ErrNotAFile,
			[]string{"source 1 (grid) is a directory"}, true},
		{"source in a format outside the list", vrt("pngsrc.vrt", simpleBand("dem.png", true)), terrain.ErrFormatRefused,
			[]string{"source 1 (dem.png) is not in a raster format canalstep reads", "GeoTIFF/COG", "gdal_translate -of GTiff"}, false},
		{"overview side-car is a MEM::: VRT", withOvr, terrain.ErrVRTRefused,
			[]string{"its side-car file ovr.tif.OVR: source 1 is a MEM::: dataset"}, true},
		{"PNG with a world file", png, terrain.ErrFormatRefused,
			[]string{"cannot open DEM " + png + ": not in a raster format canalstep reads", "gdal_translate -of GTiff"}, false},
		{"/dev/zero", "/dev/zero", terrain.ErrNotAFile, []string{"DEM /dev/zero is a system file"}, true},
		{"link to /dev/zero", zeroLink, terrain.ErrNotAFile, []string{"leads to a system file"}, true},
		{"a directory", sub, terrain.ErrNotAFile, []string{"is a directory", "hdr.adf"}, true},
		{"an empty file", empty, terrain.ErrNotAFile, []string{"is empty (0 bytes)"}, true},
		{"VRT XML as the path", vrtXML(simpleBand(good, false)), terrain.ErrFormatRefused, []string{"VRT XML written in place of a file name"}, true},
		{"vrt:// connection string", "vrt://" + good + "?bands=1", terrain.ErrFormatRefused, []string{"connection string (vrt:…)"}, true},
		{"/vsistdin/", "/vsistdin/", terrain.ErrFormatRefused, []string{"/vsistdin/ file system"}, true},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			before := terrain.GDALCalls()
			d, err := terrain.Open(tt.path, terrain.Options{})
			if err == nil {
				out := []float64{0}
				d.Sample([]float64{fxX0 + 5}, []float64{fxY0 - 5}, out)
				d.Close()
				t.Fatalf("Open succeeded (first cell reads %v m), want a refusal", out[0])
			}
			t.Log(err)
			if !errors.Is(err, terrain.ErrBadDEM) || !errors.Is(err, tt.is) {
				t.Errorf("error %q: errors.Is(ErrBadDEM) = %v, errors.Is(%v) = %v", err,
					errors.Is(err, terrain.ErrBadDEM), tt.is, errors.Is(err, tt.is))
			}
			for _, s := range tt.message {
				if !strings.Contains(err.Error(), s) {
					t.Errorf("error %q does not say %q", err, s)
				}
			}
			if strings.Contains(err.Error(), "\n") {
				t.Errorf("error %q spans several lines", err)
			}
			if calls := terrain.GDALCalls() - before; tt.ours && calls != 0 {
				t.Errorf("GDAL was asked to open or identify %d time(s) before the refusal", calls)
			}
		})
	}
}

// TestVRTAccepted checks that the checks let ordinary VRTs through and that
// they sample like their sources: a chain of four VRTs (the limit), a
// two-source mosaic, absolute and relative source paths, a VRT in /vsimem/
// (from gdalbuildvrt), VRTs from gdal_translate and gdalwarp,
// a GeoTIFF with an ordinary .ovr side-car, an Esri ASCII grid and an Esri
// .bil, whose CRS (.prj) and layout (.hdr) are in side-car files that GDAL
// finds only when it may look in the folder.
func TestVRTAccepted(t *testing.T) {
	dir := t.TempDir()
	at := func(name string) string { return filepath.Join(dir, name) }
	tif := mustWriteDEM(t, dir, "plane.tif", planar(8, 8, 40, 1.5, -0.5))
	chain := "plane.tif"
	for i := 4; i >= 1; i-- {
		name := fmt.Sprintf("chain%d.vrt", i)
		mustWriteFile(t, at(name), vrtXML(simpleBand(chain, true)))
		chain = name
	}
	// Left half from plane.tif, right half from a copy, by absolute path.
	cp := mustWriteDEM(t, dir, "copy.tif", planar(8, 8, 40, 1.5, -0.5))
	mosaic := mustWriteFile(t, at("mosaic.vrt"), vrtXML(`<VRTRasterBand dataType="Float32" band="1">
    <SimpleSource><SourceFilename relativeToVRT="1">plane.tif</SourceFilename><SourceBand>1</SourceBand>
      <SrcRect xOff="0" yOff="0" xSize="4" ySize="8"/><DstRect xOff="0" yOff="0" xSize="4" ySize="8"/></SimpleSource>
    <SimpleSource><SourceFilename relativeToVRT="0">`+cp+`</SourceFilename><SourceBand>1</SourceBand>
      <SrcRect xOff="4" yOff="0" xSize="4" ySize="8"/><DstRect xOff="4" yOff="0" xSize="4" ySize="8"/></SimpleSource>
  </VRTRasterBand>`))
	mem := "/vsimem/terrain-guard/plane.tif"
	if err := terrain.WriteGeoTIFF(mem, planar(8, 8, 40, 1.5, -0.5)); err != nil {
		t.Fatal(err)
	}
	memVRT := "/vsimem/terrain-guard/plane.vrt"
	godal.RegisterAll()
	vds, err := godal.BuildVRT(memVRT, []string{mem}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if err := vds.Close(); err != nil { // writes the XML
		t.Fatal(err)
	}
	t.Cleanup(func() { godal.VSIUnlink(mem); godal.VSIUnlink(memVRT) })

	// VRTs as gdal_translate -of VRT (a ComplexSource with scale and
	// offset 1 and 0) and gdalwarp -of VRT (a warped VRT onto the same
	// grid, nearest neighbour) write them.
	pds, err := godal.Open(tif)
	if err != nil {
		t.Fatal(err)
	}
	translated := at("translated.vrt")
	tds, err := pds.Translate(translated, []string{"-of", "VRT", "-scale", "0", "1", "0", "1"})
	if err != nil {
		t.Fatal(err)
	}
	tds.Close()
	warped := at("warped.vrt")
	wds, err := pds.Warp(warped, []string{"-of", "VRT", "-t_srs", "EPSG:32633", "-tr", "10", "10",
		"-te", "500000", "3999920", "500080", "4000000", "-r", "near"})
	if err != nil {
		t.Fatal(err)
	}
	wds.Close()
	pds.Close()

	// An ordinary overview file, built read-only as gdaladdo -ro does.
	ovr := mustWriteDEM(t, dir, "ovr.tif", planar(8, 8, 40, 1.5, -0.5))
	godal.RegisterAll()
	ods, err := godal.Open(ovr)
	if err != nil {
		t.Fatal(err)
	}
	if err := ods.BuildOverviews(godal.Levels(2)); err != nil {
		t.Fatal(err)
	}
	ods.Close()
	if _, err := os.Stat(ovr + ".ovr"); err != nil {
		t.Fatalf("no .ovr built: %v", err)
	}

	// The plane as an Esri ASCII grid: 8 rows of 8 values, lower-left
	// corner at (500000, 3999920), and a .prj naming UTM 33N in ESRI WKT.
	var asc strings.Builder
	asc.WriteString("ncols 8\nnrows 8\nxllcorner 500000\nyllcorner 3999920\ncellsize 10\nNODATA_value -9999\n")
	for r := range 8 {
		for c := range 8 {
			fmt.Fprintf(&asc, "%g ", 40+1.5*float64(c)-0.5*float64(r))
		}
		asc.WriteString("\n")
	}
	ascPath := mustWriteFile(t, at("plane.asc"), asc.String())
	info, err := terrain.CRSInfo("EPSG:32633")
	if err != nil {
		t.Fatal(err)
	}
	mustWriteFile(t, at("plane.prj"), info.WKT)
	// The plane as an Esri .bil: raw little-endian float32 rows, described
	// by plane.hdr (ULXMAP/ULYMAP: centre of the upper-left cell).
	bil := make([]byte, 0, 4*64)
	for _, v := range planar(8, 8, 40, 1.5, -0.5).Data {
		bil = binary.LittleEndian.AppendUint32(bil, math.Float32bits(v))
	}
	bilPath := mustWriteFile(t, at("plane.bil"), string(bil))
	mustWriteFile(t, at("plane.hdr"), "BYTEORDER I\nLAYOUT BIL\nNROWS 8\nNCOLS 8\nNBANDS 1\nNBITS 32\nPIXELTYPE FLOAT\n"+
		"ULXMAP 500005\nULYMAP 3999995\nXDIM 10\nYDIM 10\n")

	xs, ys := []float64{fxX0 + 12, fxX0 + 47.5, fxX0 + 71}, []float64{fxY0 - 33, fxY0 - 71.25, fxY0 - 9}
	ref := make([]float64, len(xs))
	if err := mustOpen(t, tif, terrain.Options{}).Sample(xs, ys, ref); err != nil {
		t.Fatal(err)
	}
	for _, p := range []string{at("chain1.vrt"), mosaic, memVRT, translated, warped, ovr, ascPath, bilPath} {
		d := mustOpen(t, p, terrain.Options{})
		got := make([]float64, len(xs))
		if err := d.Sample(xs, ys, got); err != nil {
			t.Fatalf("%s: %v", p, err)
		}
		// The same float32 cells through every path: equal exactly.
		if !slices.Equal(got, ref) {
			t.Errorf("%s samples %v, the GeoTIFF %v", p, got, ref)
		}
		if d.Info().EPSG != 32633 {
			t.Errorf("%s: EPSG %d, want 32633", p, d.Info().EPSG)
		}
	}
}
