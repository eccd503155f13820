package terrain

import (
	"strings"

	"github.com/airbusgeo/godal"
)

// demDriver is one GDAL raster driver that [Open] may use.
type demDriver struct {
	name     string // GDAL's short name, as GDALOpenEx's allow-list takes it
	register string // XXX in GDALRegister_XXX
	format   string // what users call it, for messages
}

// demDrivers is the allow-list of GDAL drivers for DEMs: the formats
// elevation data is commonly delivered in, each of which reads only the file
// named and its own side-car files. Left out on purpose: MEM (reads raw
// process memory named by address), every driver that fetches from a
// server by itself (WMS, WCS, …), formats whose bands may live in other
// files the header names (PCIDSK, MRF, …), the image formats (PNG, JPEG, …),
// and everything else. GTiff is first so that GeoTIFFs are identified
// first; VRT files are inspected by checkDEM before GDAL sees them.
var demDrivers = []demDriver{
	{"GTiff", "GTiff", "GeoTIFF/COG"},
	{"VRT", "VRT", "VRT"},
	{"AAIGrid", "AAIGrid", "Esri ASCII grid"},
	{"GRASSASCIIGrid", "GRASSASCIIGrid", "GRASS ASCII grid"},
	{"AIG", "AIGrid", "Arc/Info binary grid"},
	{"EHdr", "EHdr", "Esri .bil/.flt"},
	{"ENVI", "ENVI", "ENVI"},
	{"HFA", "HFA", "Erdas .img"},
	{"USGSDEM", "USGSDEM", "USGS DEM"},
	{"SRTMHGT", "SRTMHGT", "SRTM .hgt"},
	{"DTED", "DTED", "DTED"},
	{"GSAG", "GSAG", "Surfer ASCII .grd"},
	{"GSBG", "GSBG", "Surfer 6 .grd"},
	{"GS7BG", "GS7BG", "Surfer 7 .grd"},
	{"XYZ", "XYZ", "gridded XYZ"},
	{"netCDF", "netCDF", "netCDF"},
	{"BT", "BT", "VTP .bt"},
}

// DEMDrivers returns the short names of the GDAL drivers [Open] uses, in
// the order GDAL tries them.
func DEMDrivers() []string { return driverNames() }

func driverNames() []string {
	names := make([]string, len(demDrivers))
	for i, d := range demDrivers {
		names[i] = d.name
	}
	return names
}

// formatList is the allow-list worded for an error message.
func formatList() string {
	var b strings.Builder
	for i, d := range demDrivers {
		if i > 0 {
			b.WriteString(", ")
		}
		b.WriteString(d.format)
	}
	return b.String()
}

// registerDrivers registers the drivers of the allow-list with GDAL. A
// driver this GDAL build lacks is skipped. No other driver is registered by
// this package, so MEM (and anything else left out) cannot be reached even
// by a file that slipped past the checks; code elsewhere in the process
// that registers more drivers loses that second fence, not the first.
func registerDrivers() {
	for _, d := range demDrivers {
		_ = godal.RegisterRaster(godal.DriverName(d.register)) // absent from this build: not offered
	}
}
