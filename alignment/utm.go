package alignment

import (
	"fmt"
	"math"

	"github.com/paulmach/orb"
)

// UTMZoneEPSG returns the EPSG code of the WGS 84 / UTM zone holding the
// point (lon, lat in degrees): 32600+zone north of the equator (lat ≥ 0),
// 32700+zone south. Zones are 6° wide from 180°W; lon = 180 falls in zone
// 60 and longitudes outside [-180, 180] are wrapped. The two standard
// exceptions are applied: zone 32 is widened over south-west Norway (56°N
// to 64°N, 3°E to 12°E) and Svalbard (72°N to 84°N) uses zones 31, 33, 35
// and 37 only. UTM is defined from 80°S to 84°N; nearer the poles a zone is
// still returned, but its grid scale error grows, and a polar projection
// is the better choice there. It returns 0 for non-finite input or |lat| > 90.
func UTMZoneEPSG(lon, lat float64) int {
	if math.IsNaN(lon) || math.IsInf(lon, 0) || math.IsNaN(lat) || math.IsInf(lat, 0) || math.Abs(lat) > 90 {
		return 0
	}
	if lon < -180 || lon > 180 {
		lon = math.Mod(lon+180, 360)
		if lon < 0 {
			lon += 360
		}
		lon -= 180
	}
	zone := min(int(math.Floor((lon+180)/6))+1, 60)
	switch {
	case lat >= 56 && lat < 64 && lon >= 3 && lon < 12:
		zone = 32
	case lat >= 72 && lat <= 84 && lon >= 0 && lon < 42:
		switch {
		case lon < 9:
			zone = 31
		case lon < 21:
			zone = 33
		case lon < 33:
			zone = 35
		default:
			zone = 37
		}
	}
	if lat < 0 {
		return 32700 + zone
	}
	return 32600 + zone
}

// LooksGeographic reports whether every point of line could be lon/lat in
// degrees: finite, |x| ≤ 180 and |y| ≤ 90. It is a sanity check, not a
// proof: a projected line near its CRS's false origin also passes, while a
// true lon/lat line never fails. An empty line does not look geographic.
func LooksGeographic(line orb.LineString) bool {
	if len(line) == 0 {
		return false
	}
	for _, p := range line {
		if !(math.Abs(p[0]) <= 180 && math.Abs(p[1]) <= 90) {
			return false
		}
	}
	return true
}

// LocalTransverseMercator returns a PROJ definition of a transverse
// Mercator CRS on the WGS 84 datum, in metres, centred on the middle of the
// bounding box of line (lon/lat in degrees) with scale factor 1, for
// stationing an alignment over a geographic DEM. Its grid distances match
// ellipsoidal (geodesic) distances to within x²/(2R²) at x metres from
// the centre (about 0.003 % at 50 km), where a UTM zone's scale error reaches
// 0.04 % to 0.1 %. GDAL (OSRSetFromUserInput) and PROJ accept the string.
// ok is false when line is empty or does not look like lon/lat.
func LocalTransverseMercator(line orb.LineString) (def string, ok bool) {
	if !LooksGeographic(line) {
		return "", false
	}
	b := line.Bound()
	lon0, lat0 := (b.Min[0]+b.Max[0])/2, (b.Min[1]+b.Max[1])/2
	return fmt.Sprintf("+proj=tmerc +lat_0=%.6f +lon_0=%.6f +k=1 +x_0=0 +y_0=0 +datum=WGS84 +units=m +no_defs +type=crs", lat0, lon0), true
}
