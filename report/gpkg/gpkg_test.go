package gpkg

import (
	"bytes"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/airbusgeo/godal"

	"canalstep/report/geojson"
	"canalstep/report/layers"
	"canalstep/report/layers/testdata/fixture"
	"canalstep/testdata/reftool"
)

var update = flag.Bool("update", false, "rewrite report/gpkg/testdata golden files from the current output")

// fixedDate stands for the inputs' date a caller passes (invented for the
// tests).
var fixedDate = time.Date(2024, 3, 9, 14, 30, 5, 0, time.UTC)

func mustWrite(tb testing.TB, ls []layers.Layer, date time.Time) string {
	tb.Helper()
	path := filepath.Join(tb.TempDir(), "plan.gpkg")
	if err := Write(path, ls, Options{CRS: fixture.CRS, Date: date}); err != nil {
		tb.Fatal(err)
	}
	return path
}

func run(tb testing.TB, name string, args ...string) string {
	tb.Helper()
	cmd := exec.Command(reftool.Need(tb, name), args...)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		tb.Fatalf("%s %s: %v\n%s", name, strings.Join(args, " "), err, stderr.String())
	}
	return string(out)
}

// TestOgrinfo checks the file with GDAL's own reader as a user runs it:
// ogrinfo lists the five layers with their geometry types, each with the
// fixture's feature count, its fields with their OGR types and the CRS
// EPSG:32633.
func TestOgrinfo(t *testing.T) {
	path := mustWrite(t, fixture.Layers(), fixedDate)
	list := run(t, "ogrinfo", "-ro", "-q", path)
	want := []string{
		"1: centreline (Line String)", "2: drops (Point)", "3: offtakes (Point)",
		"4: stakes (Point)", "5: footprint (Polygon)",
	}
	var got []string
	for _, line := range strings.Split(strings.TrimSpace(list), "\n") {
		got = append(got, strings.TrimSpace(line))
	}
	if strings.Join(got, "\n") != strings.Join(want, "\n") {
		t.Errorf("ogrinfo layers:\n%s\nwant:\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
	counts := regexp.MustCompile(`Feature Count: (\d+)`)
	all := run(t, "ogrinfo", "-ro", "-so", "-al", path)
	sections := strings.Split(all, "\nLayer name: ")[1:]
	if len(sections) != len(fixture.Layers()) {
		t.Fatalf("ogrinfo -so -al shows %d layers, want %d:\n%s", len(sections), len(fixture.Layers()), all)
	}
	for i, l := range fixture.Layers() {
		info := sections[i]
		if name, _, _ := strings.Cut(info, "\n"); name != l.Name {
			t.Errorf("layer %d is %q, want %q", i, name, l.Name)
		}
		m := counts.FindStringSubmatch(info)
		if m == nil || m[1] != strconv.Itoa(len(l.Features)) {
			t.Errorf("layer %s: ogrinfo feature count %v, want %d", l.Name, m, len(l.Features))
		}
		if !strings.Contains(info, `ID["EPSG",32633]`) {
			t.Errorf("layer %s: ogrinfo shows no EPSG:32633:\n%s", l.Name, info)
		}
		for _, f := range l.Fields {
			ogrType := map[layers.Type]string{layers.String: "String", layers.Real: "Real", layers.Integer: "Integer64"}[f.Type]
			if !strings.Contains(info, "\n"+f.Name+": "+ogrType+" ") {
				t.Errorf("layer %s: ogrinfo lists no %s field %s", l.Name, ogrType, f.Name)
			}
		}
	}
}

// TestEmptyLayer checks that a layer without features is still created,
// with its fields, and counted as empty.
func TestEmptyLayer(t *testing.T) {
	ls := fixture.Layers()[1:2]
	ls[0].Features = nil
	path := mustWrite(t, ls, fixedDate)
	info := run(t, "ogrinfo", "-ro", "-so", path, "drops")
	if !strings.Contains(info, "Feature Count: 0\n") || !strings.Contains(info, "\nheight_m: Real ") {
		t.Errorf("ogrinfo:\n%s\nwant an empty drops layer with its fields", info)
	}
}

// lonLat converts the fixture's projected layers to longitude and latitude
// with PROJ's cs2cs (the reference tool), one call for all positions.
func lonLat(t *testing.T, ls []layers.Layer) []layers.Layer {
	t.Helper()
	var in strings.Builder
	for _, l := range ls {
		for _, f := range l.Features {
			for _, p := range f.Parts {
				for _, c := range p {
					fmt.Fprintf(&in, "%.6f %.6f\n", c[0], c[1])
				}
			}
		}
	}
	cmd := exec.Command(reftool.Need(t, "cs2cs"), "-f", "%.12f", fixture.CRS, "OGC:CRS84")
	cmd.Stdin = strings.NewReader(in.String())
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("cs2cs: %v", err)
	}
	lines := strings.Split(strings.TrimSpace(string(out)), "\n")
	n := 0
	for i := range ls {
		for k := range ls[i].Features {
			f := &ls[i].Features[k]
			parts := make([][]layers.Coord, len(f.Parts))
			for j, p := range f.Parts {
				parts[j] = make([]layers.Coord, len(p))
				for q := range p {
					var lon, lat float64
					if _, err := fmt.Sscan(lines[n], &lon, &lat); err != nil {
						t.Fatalf("cs2cs line %q: %v", lines[n], err)
					}
					parts[j][q] = layers.Coord{lon, lat}
					n++
				}
			}
			f.Parts = parts
		}
	}
	return ls
}

type featureCollection struct {
	Features []struct {
		Geometry struct {
			Type        string          `json:"type"`
			Coordinates json.RawMessage `json:"coordinates"`
		} `json:"geometry"`
		Properties map[string]any `json:"properties"`
	} `json:"features"`
}

// flatten returns every number of a GeoJSON coordinates array in order.
func flatten(t *testing.T, raw json.RawMessage) []float64 {
	t.Helper()
	var v any
	if err := json.Unmarshal(raw, &v); err != nil {
		t.Fatal(err)
	}
	var out []float64
	var walk func(any)
	walk = func(v any) {
		switch x := v.(type) {
		case float64:
			out = append(out, x)
		case []any:
			for _, e := range x {
				walk(e)
			}
		}
	}
	walk(v)
	return out
}

// TestMatchesGeoJSON converts each layer of the GeoPackage to GeoJSON with
// ogr2ogr (RFC 7946 mode: reprojected to WGS 84 by PROJ, right-hand-rule
// rings) and compares it with report/geojson's output of the same layers,
// projected to lon/lat by cs2cs: same features, positions within 1e-7°
// (the tolerance the issue sets; ~1 cm), same properties. Numbers agree to
// 1e-9 relative: both come from the same rounded value, and ogr2ogr prints
// 15 significant digits.
func TestMatchesGeoJSON(t *testing.T) {
	path := mustWrite(t, fixture.Layers(), fixedDate)
	var ours bytes.Buffer
	if err := geojson.Write(&ours, lonLat(t, fixture.Layers())); err != nil {
		t.Fatal(err)
	}
	var mine featureCollection
	if err := json.Unmarshal(ours.Bytes(), &mine); err != nil {
		t.Fatal(err)
	}
	next := 0
	worst := 0.0
	for _, l := range fixture.Layers() {
		out := run(t, "ogr2ogr", "-f", "GeoJSON", "-lco", "RFC7946=YES", "-lco", "COORDINATE_PRECISION=10", "/vsistdout/", path, l.Name)
		var theirs featureCollection
		if err := json.Unmarshal([]byte(out), &theirs); err != nil {
			t.Fatalf("layer %s: ogr2ogr output: %v\n%s", l.Name, err, out)
		}
		if len(theirs.Features) != len(l.Features) {
			t.Fatalf("layer %s: ogr2ogr wrote %d features, want %d", l.Name, len(theirs.Features), len(l.Features))
		}
		for k, tf := range theirs.Features {
			mf := mine.Features[next]
			next++
			if mf.Properties["layer"] != l.Name {
				t.Fatalf("feature %d of ours is in layer %v, want %s", next-1, mf.Properties["layer"], l.Name)
			}
			if tf.Geometry.Type != mf.Geometry.Type {
				t.Errorf("layer %s feature %d: type %s, ours %s", l.Name, k, tf.Geometry.Type, mf.Geometry.Type)
			}
			a, b := flatten(t, tf.Geometry.Coordinates), flatten(t, mf.Geometry.Coordinates)
			if len(a) != len(b) {
				t.Errorf("layer %s feature %d: %d numbers in coordinates, ours %d", l.Name, k, len(a), len(b))
				continue
			}
			for i := range a {
				d := math.Abs(a[i] - b[i])
				worst = math.Max(worst, d)
				if d > 1e-7 {
					t.Errorf("layer %s feature %d coordinate %d: ogr2ogr %.10f, ours %.10f, diff %.2g > 1e-7", l.Name, k, i, a[i], b[i], d)
				}
			}
			for _, f := range l.Fields {
				tv, mv := tf.Properties[f.Name], mf.Properties[f.Name]
				switch x := tv.(type) {
				case float64:
					y, ok := mv.(float64)
					if !ok || math.Abs(x-y) > 1e-9*math.Max(1, math.Abs(x)) {
						t.Errorf("layer %s feature %d %s: ogr2ogr %v, ours %v", l.Name, k, f.Name, tv, mv)
					}
				default:
					if tv != mv {
						t.Errorf("layer %s feature %d %s: ogr2ogr %q, ours %q", l.Name, k, f.Name, tv, mv)
					}
				}
			}
		}
	}
	if next != len(mine.Features) {
		t.Errorf("ours has %d features, ogr2ogr %d", len(mine.Features), next)
	}
	t.Logf("largest coordinate difference, ogr2ogr vs ours: %.3g°", worst)
}

// lastChanges returns the distinct values of gpkg_contents.last_change as
// ogrinfo reads them (the raw text, not GDAL's date formatting), joined by
// ",".
func lastChanges(t *testing.T, path string) string {
	out := run(t, "ogrinfo", "-ro", "-q", path, "-sql", "SELECT DISTINCT substr(last_change, 1, 40) AS lc FROM gpkg_contents")
	var vals []string
	for _, line := range strings.Split(out, "\n") {
		if v, ok := strings.CutPrefix(strings.TrimSpace(line), "lc (String) = "); ok {
			vals = append(vals, v)
		}
	}
	return strings.Join(vals, ",")
}

// TestGeographic writes the layers in lon/lat on WGS 84 (EPSG:4326, whose
// declared axis order is latitude first) and expects GDAL to keep X as the
// longitude: ogr2ogr's GeoJSON must hold the positions as given, to 1e-12°.
func TestGeographic(t *testing.T) {
	ls := lonLat(t, fixture.Layers())
	path := filepath.Join(t.TempDir(), "plan.gpkg")
	if err := Write(path, ls, Options{CRS: "EPSG:4326", Date: fixedDate}); err != nil {
		t.Fatal(err)
	}
	out := run(t, "ogr2ogr", "-f", "GeoJSON", "/vsistdout/", path, "stakes")
	var fc featureCollection
	if err := json.Unmarshal([]byte(out), &fc); err != nil {
		t.Fatal(err)
	}
	for k, f := range fc.Features {
		got := flatten(t, f.Geometry.Coordinates)
		want := ls[3].Features[k].Parts[0][0]
		if math.Abs(got[0]-want[0]) > 1e-12 || math.Abs(got[1]-want[1]) > 1e-12 {
			t.Errorf("stake %d at %v, want %v", k, got, want)
		}
	}
}

// TestReproducible writes the same layers twice, a second apart, and
// expects the same bytes; another date must give another file. It also checks what last_change and the layer descriptions hold.
func TestReproducible(t *testing.T) {
	a := mustWrite(t, fixture.Layers(), fixedDate)
	time.Sleep(1100 * time.Millisecond) // a clock-stamped file would differ now
	b := mustWrite(t, fixture.Layers(), fixedDate)
	ba, _ := os.ReadFile(a)
	bb, _ := os.ReadFile(b)
	if !bytes.Equal(ba, bb) {
		t.Errorf("two writes of the same layers differ (%d and %d bytes)", len(ba), len(bb))
	}
	if got := lastChanges(t, a); got != "2024-03-09T14:30:05.000Z" {
		t.Errorf("gpkg_contents.last_change %q, want the single value 2024-03-09T14:30:05.000Z", got)
	}
	out := run(t, "ogrinfo", "-ro", "-q", a, "-sql", "SELECT DISTINCT description AS d FROM gpkg_contents")
	if !strings.Contains(out, "d (String) = "+layers.Caution+"\n") || strings.Count(out, "d (String)") != 1 {
		t.Errorf("gpkg_contents.description:\n%s\nwant the caution on every layer", out)
	}
	c := mustWrite(t, fixture.Layers(), fixedDate.Add(24*time.Hour))
	bc, _ := os.ReadFile(c)
	if bytes.Equal(ba, bc) {
		t.Error("a different date gave the same file")
	}
}

// TestConcurrentDates writes files with different dates at the same time:
// the date is set per thread, so each file must carry its own.
func TestConcurrentDates(t *testing.T) {
	const n = 4
	paths := make([]string, n)
	errs := make([]error, n)
	dir := t.TempDir()
	var wg sync.WaitGroup
	for i := range n {
		paths[i] = filepath.Join(dir, fmt.Sprintf("p%d.gpkg", i))
		wg.Add(1)
		go func() {
			defer wg.Done()
			errs[i] = Write(paths[i], fixture.Layers(), Options{CRS: fixture.CRS, Date: fixedDate.AddDate(0, 0, i)})
		}()
	}
	wg.Wait()
	for i := range n {
		if errs[i] != nil {
			t.Fatal(errs[i])
		}
		want := fixedDate.AddDate(0, 0, i).Format("2006-01-02T15:04:05.000Z")
		if got := lastChanges(t, paths[i]); got != want {
			t.Errorf("file %d: last_change %q, want %s", i, got, want)
		}
	}
}

// TestErrors checks that bad input is refused with a message naming it, and
// that nothing is left behind.
func TestErrors(t *testing.T) {
	bad := fixture.Layers()
	bad[1].Features[0].Values[1] = layers.Num(math.Inf(1))
	tests := []struct {
		name   string
		ls     []layers.Layer
		crs    string
		exists bool
		want   string
	}{
		{"existing file", fixture.Layers(), fixture.CRS, true, "already exists"},
		{"EPSG code not a number", fixture.Layers(), "EPSG:abc", false, "want EPSG"},
		{"unknown EPSG code", fixture.Layers(), "EPSG:999999", false, "EPSG:999999"},
		{"file name as CRS", fixture.Layers(), "/etc/passwd", false, "want EPSG:<code> or a WKT"},
		{"broken WKT", fixture.Layers(), `PROJCS["x",GEOGCS[`, false, "CRS"},
		{"infinite value", bad, fixture.CRS, false, "out of range"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "plan.gpkg")
			if tc.exists {
				if err := os.WriteFile(path, []byte("keep me"), 0o644); err != nil {
					t.Fatal(err)
				}
			}
			err := Write(path, tc.ls, Options{CRS: tc.crs, Date: fixedDate})
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Fatalf("error %v, want one containing %q", err, tc.want)
			}
			b, rerr := os.ReadFile(path)
			switch {
			case tc.exists && string(b) != "keep me":
				t.Errorf("existing file changed to %d bytes", len(b))
			case !tc.exists && !errors.Is(rerr, os.ErrNotExist):
				t.Errorf("a file was left at %s", path)
			}
		})
	}
}

// dump describes a GeoPackage as GDAL reads it back, in a stable text form:
// layers in file order, their geometry type, CRS code and fields, and each
// feature's geometry (WKT) and values in field order.
func dump(t *testing.T, path string, ls []layers.Layer) string {
	t.Helper()
	ds, err := godal.Open(path, godal.VectorOnly())
	if err != nil {
		t.Fatal(err)
	}
	defer ds.Close()
	var b strings.Builder
	for i, lyr := range ds.Layers() {
		sr := lyr.SpatialRef()
		fmt.Fprintf(&b, "layer %s type %d crs %s:%s\n", lyr.Name(), lyr.Type(), sr.AuthorityName(""), sr.AuthorityCode(""))
		sr.Close()
		nulls := nullFlags(t, ds, ls[i])
		lyr.ResetReading()
		for k := 0; ; k++ {
			f := lyr.NextFeature()
			if f == nil {
				break
			}
			g := f.Geometry()
			wkt, err := g.WKT()
			if err != nil {
				t.Fatal(err)
			}
			fmt.Fprintf(&b, "  %s\n", wkt)
			fields := f.Fields()
			names := make([]string, 0, len(fields))
			for n := range fields {
				names = append(names, n)
			}
			sort.Strings(names)
			for _, fl := range ls[i].Fields {
				v := fields[fl.Name]
				if !v.IsSet() || nulls[k][fl.Name] {
					fmt.Fprintf(&b, "    %s = NULL\n", fl.Name)
					continue
				}
				switch v.Type() {
				case godal.FTString:
					fmt.Fprintf(&b, "    %s = %q\n", fl.Name, v.String())
				case godal.FTReal:
					fmt.Fprintf(&b, "    %s = %v\n", fl.Name, v.Float())
				default:
					fmt.Fprintf(&b, "    %s = %d (type %d)\n", fl.Name, v.Int(), v.Type())
				}
			}
			if len(names) != len(ls[i].Fields) {
				fmt.Fprintf(&b, "    fields %v\n", names)
			}
			f.Close()
		}
	}
	return b.String()
}

// nullFlags reports, feature by feature in fid order, which fields of l
// are NULL in the file (godal's field values read NULL as 0).
func nullFlags(t *testing.T, ds *godal.Dataset, l layers.Layer) []map[string]bool {
	t.Helper()
	cols := make([]string, len(l.Fields))
	for j, f := range l.Fields {
		cols[j] = fmt.Sprintf("(%s IS NULL) AS %s", f.Name, f.Name)
	}
	rs, err := ds.ExecuteSQL(fmt.Sprintf("SELECT %s FROM %s ORDER BY fid", strings.Join(cols, ", "), l.Name))
	if err != nil {
		t.Fatal(err)
	}
	defer rs.Close()
	var out []map[string]bool
	for {
		f := rs.NextFeature()
		if f == nil {
			return out
		}
		m := map[string]bool{}
		for n, v := range f.Fields() {
			m[n] = v.Int() != 0
		}
		out = append(out, m)
		f.Close()
	}
}

// TestGolden compares what GDAL reads back with testdata/fixture.golden
// (rewritten by -update). The golden file was checked by hand: projected
// coordinates unchanged, the footprint ring turned counterclockwise, values
// rounded to their decimals, the NaN flow NULL, and the hostile name
// byte-for-byte as given.
func TestGolden(t *testing.T) {
	ls := fixture.Layers()
	got := dump(t, mustWrite(t, ls, fixedDate), ls)
	fixture.Golden(t, filepath.Join("testdata", "fixture.golden"), []byte(got), *update)
	if !strings.Contains(got, strconv.Quote(fixture.HostileName)) {
		t.Error("the hostile name did not come back byte for byte")
	}
}

// BenchmarkWrite10000Points writes one layer of 10,000 stake points with
// four fields.
func BenchmarkWrite10000Points(b *testing.B) {
	ls := []layers.Layer{fixture.Layers()[3]}
	pts := make([]layers.Feature, 10000)
	for i := range pts {
		pts[i] = layers.PointFeature(layers.Coord{512000 + float64(i), 4652000 + 0.5*float64(i)},
			layers.Str(fmt.Sprintf("%d+%03d", i/1000, i%1000)), layers.Num(float64(i)), layers.Num(100-0.0003*float64(i)), layers.Num(101.5))
	}
	ls[0].Features = pts
	dir := b.TempDir()
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		if err := Write(filepath.Join(dir, fmt.Sprintf("b%d.gpkg", i)), ls, Options{CRS: fixture.CRS, Date: fixedDate}); err != nil {
			b.Fatal(err)
		}
	}
}
