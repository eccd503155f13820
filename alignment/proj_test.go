package alignment

// Checks against PROJ's command-line tools (Debian proj-bin): cs2cs for
// coordinate transforms and geod for ellipsoidal distances.

import (
	"bytes"
	"fmt"
	"math"
	"os/exec"
	"strconv"
	"strings"
	"testing"

	"github.com/paulmach/orb"

	"canalstep/testdata/reftool"
)

// cs2cs is a Transformer that runs PROJ's cs2cs from src to dst (both
// given in lon/lat or easting/northing order: OGC:CRS84 or projected).
// A PROJ string ("+proj=...") must reach cs2cs as separate arguments joined
// by +to, with the other side spelled as a PROJ string too.
func cs2cs(t *testing.T, src, dst string) Transformer {
	bin := reftool.Need(t, "cs2cs")
	args := []string{"-f", "%.10f", src, dst}
	if strings.HasPrefix(src, "+") || strings.HasPrefix(dst, "+") {
		projString := func(s string) []string {
			if s == "OGC:CRS84" {
				s = "+proj=longlat +datum=WGS84 +no_defs +type=crs"
			}
			return strings.Fields(s)
		}
		args = append(append(append([]string{"-f", "%.10f"}, projString(src)...), "+to"), projString(dst)...)
	}
	return TransformerFunc(func(xs, ys []float64) error {
		var in bytes.Buffer
		for i := range xs {
			fmt.Fprintf(&in, "%.12f %.12f\n", xs[i], ys[i])
		}
		cmd := exec.Command(bin, args...)
		cmd.Stdin = &in
		out, err := cmd.Output()
		if err != nil {
			return fmt.Errorf("cs2cs %s %s: %v", src, dst, err)
		}
		lines := strings.Split(strings.TrimSpace(string(out)), "\n")
		if len(lines) != len(xs) {
			return fmt.Errorf("cs2cs gave %d lines for %d points", len(lines), len(xs))
		}
		for i, l := range lines {
			f := strings.Fields(l)
			if len(f) < 2 {
				return fmt.Errorf("cs2cs line %q", l)
			}
			if xs[i], err = strconv.ParseFloat(f[0], 64); err != nil {
				return err
			}
			if ys[i], err = strconv.ParseFloat(f[1], 64); err != nil {
				return err
			}
		}
		return nil
	})
}

// geodLength sums the WGS 84 geodesic lengths (m) of the line's segments
// with PROJ's geod -I (which reads lat lon pairs).
func geodLength(t *testing.T, line orb.LineString) float64 {
	bin := reftool.Need(t, "geod")
	var in bytes.Buffer
	for i := 1; i < len(line); i++ {
		fmt.Fprintf(&in, "%.12f %.12f %.12f %.12f\n", line[i-1][1], line[i-1][0], line[i][1], line[i][0])
	}
	cmd := exec.Command(bin, "+ellps=WGS84", "-I", "-f", "%.6f")
	cmd.Stdin = &in
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("geod: %v", err)
	}
	sum := 0.0
	for _, l := range strings.Split(strings.TrimSpace(string(out)), "\n") {
		f := strings.Fields(l)
		d, err := strconv.ParseFloat(f[len(f)-1], 64)
		if err != nil {
			t.Fatalf("geod output %q: %v", l, err)
		}
		sum += d
	}
	return sum
}

// TestStationsGeographicDEM stations a lon/lat alignment over a geographic
// DEM the way the command does: in the UTM zone of its start, sampling
// back in lon/lat. The stationed length must agree with the WGS 84
// geodesic length from PROJ's geod within 0.1 % (the requirement;
// the UTM grid scale is 0.9996 on the central meridian and grows away from
// it: Snyder 1987, "Map Projections—A Working Manual", USGS PP 1395, §8,
// from memory).
func TestStationsGeographicDEM(t *testing.T) {
	t.Parallel()
	for _, tt := range []struct {
		name string
		line orb.LineString
	}{
		{"near the central meridian", orb.LineString{{14.9, 36.0}, {15.0, 36.1}, {15.2, 36.15}}},
		{"near the zone edge", orb.LineString{{17.80, 36.0}, {17.85, 36.05}, {17.95, 36.07}}},
		{"southern hemisphere", orb.LineString{{-58.50, -34.60}, {-58.45, -34.65}, {-58.40, -34.64}}},
	} {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			utm := "EPSG:" + strconv.Itoa(UTMZoneEPSG(tt.line[0][0], tt.line[0][1]))
			f := Frames{
				ToWork:       cs2cs(t, "OGC:CRS84", utm),
				WorkToDEM:    cs2cs(t, utm, "OGC:CRS84"),
				WorkToLonLat: cs2cs(t, utm, "OGC:CRS84"),
			}
			st, err := Stations(Alignment{Name: tt.name, Line: tt.line}, f, 500, 0)
			if err != nil {
				t.Fatal(err)
			}
			got, want := st[len(st)-1].Chainage, geodLength(t, tt.line)
			if rel := math.Abs(got-want) / want; rel > 0.001 {
				t.Errorf("stationed length %.3f m, geod %.3f m: differ by %.4f %% > 0.1 %%", got, want, 100*rel)
			} else {
				t.Logf("stationed length %.3f m in %s, geod %.3f m: %.4f %%", got, utm, want, 100*rel)
			}
			// Vertex stations come back to the input lon/lat; 1e-8 degree
			// is about 1 mm (cs2cs round trip, printed to 1e-10).
			v := 0
			for _, s := range st {
				if !s.Vertex {
					continue
				}
				p := tt.line[v]
				if math.Abs(s.X-p[0]) > 1e-8 || math.Abs(s.Y-p[1]) > 1e-8 || s.Lon != s.X || s.Lat != s.Y {
					t.Errorf("vertex %d at (%.10f, %.10f) lon/lat (%.10f, %.10f), want (%v, %v)", v, s.X, s.Y, s.Lon, s.Lat, p[0], p[1])
				}
				v++
			}
			if v != len(tt.line) {
				t.Errorf("%d vertex stations, want %d", v, len(tt.line))
			}
		})
	}
}

// TestLocalTransverseMercator checks that stationing in the local
// transverse Mercator CRS matches the WGS 84 geodesic length from PROJ's
// geod within 0.001 %: the scale error x²/(2R²) at x = 20 km from the centre
// is 5e-6 (Snyder 1987, USGS PP 1395, §8, from memory).
func TestLocalTransverseMercator(t *testing.T) {
	t.Parallel()
	line := orb.LineString{{14.9, 36.0}, {15.0, 36.1}, {15.2, 36.15}}
	def, ok := LocalTransverseMercator(line)
	if want := "+proj=tmerc +lat_0=36.075000 +lon_0=15.050000 +k=1 +x_0=0 +y_0=0 +datum=WGS84 +units=m +no_defs +type=crs"; !ok || def != want {
		t.Fatalf("LocalTransverseMercator = %q, %v; want %q", def, ok, want)
	}
	f := Frames{ToWork: cs2cs(t, "OGC:CRS84", def), WorkToDEM: cs2cs(t, def, "OGC:CRS84")}
	st, err := Stations(Alignment{Name: "local", Line: line}, f, 1000, 0)
	if err != nil {
		t.Fatal(err)
	}
	got, want := st[len(st)-1].Chainage, geodLength(t, line)
	if rel := math.Abs(got-want) / want; rel > 1e-5 {
		t.Errorf("stationed length %.3f m, geod %.3f m: differ by %.5f %% > 0.001 %%", got, want, 100*rel)
	} else {
		t.Logf("stationed length %.3f m, geod %.3f m: %.5f %%", got, want, 100*rel)
	}
	if _, ok := LocalTransverseMercator(orb.LineString{{500000, 4000000}, {500100, 4000000}}); ok {
		t.Error("LocalTransverseMercator accepted projected coordinates")
	}
}

// TestUTMZoneAgainstCs2cs checks that the chosen zone holds the point: PROJ
// puts it within 3° of longitude of the zone's central meridian (easting
// 500 km ± 334 km at the equator), or, for the widened Norway and Svalbard
// zones, within 6° of it (± 400 km at those latitudes). UTM easting of the
// central meridian is 500000 m by definition (from memory, DMA TM 8358.2).
func TestUTMZoneAgainstCs2cs(t *testing.T) {
	t.Parallel()
	for _, p := range [][2]float64{{15, 36}, {-0.0001, 0.0001}, {179.99, 10}, {-179.99, -10}, {5, 60}, {10, 78}, {40, 78}, {-73.98, 40.75}} {
		code := UTMZoneEPSG(p[0], p[1])
		xs, ys := []float64{p[0]}, []float64{p[1]}
		if err := cs2cs(t, "OGC:CRS84", "EPSG:"+strconv.Itoa(code)).Transform(xs, ys); err != nil {
			t.Fatal(err)
		}
		if off := math.Abs(xs[0] - 500000); off > 400000 {
			t.Errorf("(%v, %v) in EPSG:%d has easting %.0f m, %.0f km off the central meridian", p[0], p[1], code, xs[0], off/1000)
		}
	}
}
