package terrain

import (
	"bytes"
	"errors"
	"path/filepath"
	"strings"
	"testing"
)

// FuzzInspectVRT feeds arbitrary bytes to the VRT inspection, as the XML of
// a VRT beside one small GeoTIFF. Invariants: no panic; a refusal matches
// ErrBadDEM and is one line; what is accepted names no MEM::: dataset, no
// raw band and no pixel function code in any spelling.
func FuzzInspectVRT(f *testing.F) {
	dir := f.TempDir()
	g := Grid{Width: 4, Height: 4, GeoTransform: [6]float64{500000, 10, 0, 4000000, 0, -10}, EPSG: 32633, Data: make([]float32, 16)}
	if err := WriteGeoTIFF(filepath.Join(dir, "a.tif"), g); err != nil {
		f.Fatal(err)
	}
	band := func(inner string) string {
		return `<VRTDataset rasterXSize="4" rasterYSize="4"><VRTRasterBand dataType="Float32" band="1">` + inner + `</VRTRasterBand></VRTDataset>`
	}
	for _, s := range []string{
		band(`<SimpleSource><SourceFilename relativeToVRT="1">a.tif</SourceFilename></SimpleSource>`),
		band(`<SimpleSource><SourceFilename>MEM:::DATAPOINTER=4096,PIXELS=4,LINES=4</SourceFilename></SimpleSource>`),
		band(`<SimpleSource SourceFilename="a.tif"/>`),
		`<VRTDataset><VRTRasterBand subClass="VRTRawRasterBand"><SourceFilename>a.tif</SourceFilename></VRTRasterBand></VRTDataset>`,
		band(`<PixelFunctionLanguage>Python</PixelFunctionLanguage><PixelFunctionCode>x</PixelFunctionCode>`),
		band(`<SimpleSource><SourceFilename relativeToVRT=" 1x">a.tif<!-- c --></SourceFilename></SimpleSource>`),
		"\xef\xbb\xbf<VRTDataset/>", "<VRTDataset>&#77;", "", "<",
	} {
		f.Add([]byte(s))
	}
	vrt := filepath.Join(dir, "a.vrt")
	f.Fuzz(func(t *testing.T, data []byte) {
		in := inspector{open: map[string]bool{}, checked: map[string]int{}, dirs: map[string][]string{}}
		err := in.inspectVRT(data, vrt, "DEM a.vrt", 1)
		if err != nil {
			if !errors.Is(err, ErrBadDEM) {
				t.Fatalf("refusal %q does not match ErrBadDEM", err)
			}
			if strings.ContainsAny(err.Error(), "\n\r") {
				t.Fatalf("refusal %q spans several lines", err)
			}
			return
		}
		low := bytes.ToLower(data)
		for _, s := range []string{"mem:::", "vrtrawrasterband", "pixelfunctioncode", "&#"} {
			if bytes.Contains(low, []byte(s)) {
				t.Fatalf("accepted a VRT containing %q: %q", s, data)
			}
		}
	})
}
