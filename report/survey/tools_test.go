package survey

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"os/exec"
	"strconv"
	"strings"
	"testing"

	"canalstep/report/layers"
	"canalstep/testdata/reftool"
)

// run runs a reference tool and returns its standard output.
func run(tb testing.TB, stdin string, name string, args ...string) string {
	tb.Helper()
	cmd := exec.Command(reftool.Need(tb, name), args...)
	cmd.Stdin = strings.NewReader(stdin)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		tb.Fatalf("%s %s: %v\n%s", name, strings.Join(args, " "), err, stderr.String())
	}
	return string(out)
}

// cs2cs converts points from the work CRS def (EPSG:n or a PROJ string) to
// WGS 84 lon/lat with PROJ's cs2cs, one call for all of them.
func cs2cs(tb testing.TB, def string, xs, ys []float64) (lon, lat []float64) {
	tb.Helper()
	var in strings.Builder
	for k := range xs {
		fmt.Fprintf(&in, "%.6f %.6f\n", xs[k], ys[k])
	}
	args := []string{"-f", "%.12f"}
	if strings.HasPrefix(def, "+") {
		// cs2cs takes a PROJ string as separate +key=value arguments.
		args = append(append(args, strings.Fields(def)...), "+to", "OGC:CRS84")
	} else {
		args = append(args, def, "OGC:CRS84")
	}
	out := run(tb, in.String(), "cs2cs", args...)
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if len(lines) != len(xs) {
		tb.Fatalf("cs2cs gave %d lines for %d points", len(lines), len(xs))
	}
	lon, lat = make([]float64, len(xs)), make([]float64, len(xs))
	for k, l := range lines {
		f := strings.Fields(l)
		if len(f) < 2 {
			tb.Fatalf("cs2cs line %q", l)
		}
		lon[k], _ = strconv.ParseFloat(f[0], 64)
		lat[k], _ = strconv.ParseFloat(f[1], 64)
	}
	return lon, lat
}

// groundMetres returns the distance on the ground (m) between two nearby
// points given in lon/lat (degrees) at latitude lat: Δφ·M north and
// Δλ·N·cos φ east, with the WGS 84 meridian and prime-vertical radii of
// curvature M = a(1−e²)/(1−e² sin²φ)^{3/2} and N = a/(1−e² sin²φ)^{1/2},
// a = 6378137 m, f = 1/298.257223563 (NIMA TR8350.2, WGS 84, from memory).
// It is how a 1 mm tolerance becomes degrees at that latitude: about
// 9.0e-9° of latitude and 1.27e-8° of longitude at 45°N.
func groundMetres(lon1, lat1, lon2, lat2 float64) float64 {
	const a, f = 6378137.0, 1 / 298.257223563
	e2 := f * (2 - f)
	phi := lat1 * math.Pi / 180
	w := 1 - e2*math.Sin(phi)*math.Sin(phi)
	m := a * (1 - e2) / math.Pow(w, 1.5)
	n := a / math.Sqrt(w)
	dn := (lat2 - lat1) * math.Pi / 180 * m
	de := (lon2 - lon1) * math.Pi / 180 * n * math.Cos(phi)
	return math.Hypot(dn, de)
}

// table is a CSV file read back: its header comment lines and its rows by
// column name.
type table struct {
	comments []string
	head     map[string]int
	rows     [][]string
}

func readTable(tb testing.TB, text string) table {
	tb.Helper()
	var t table
	for _, l := range strings.Split(text, "\n") {
		c, ok := strings.CutPrefix(l, "# ")
		if !ok {
			break
		}
		t.comments = append(t.comments, c)
	}
	r := csv.NewReader(strings.NewReader(text))
	r.Comment = '#'
	recs, err := r.ReadAll()
	if err != nil {
		tb.Fatalf("read the stake list back: %v", err)
	}
	t.head = map[string]int{}
	for k, h := range recs[0] {
		t.head[h] = k
	}
	t.rows = recs[1:]
	return t
}

// num returns column col of row k as a number (NaN when empty).
func (t table) num(tb testing.TB, k int, col string) float64 {
	tb.Helper()
	c, ok := t.head[col]
	if !ok {
		tb.Fatalf("no column %q in %v", col, t.head)
	}
	if t.rows[k][c] == "" {
		return math.NaN()
	}
	v, err := strconv.ParseFloat(t.rows[k][c], 64)
	if err != nil {
		tb.Fatalf("row %d column %s: %v", k, col, err)
	}
	return v
}

func (t table) str(tb testing.TB, k int, col string) string {
	tb.Helper()
	c, ok := t.head[col]
	if !ok {
		tb.Fatalf("no column %q", col)
	}
	return t.rows[k][c]
}

// featureCollection is the part of a GeoJSON file the tests compare.
type featureCollection struct {
	Features []struct {
		Geometry struct {
			Type        string          `json:"type"`
			Coordinates json.RawMessage `json:"coordinates"`
		} `json:"geometry"`
		Properties map[string]any `json:"properties"`
	} `json:"features"`
}

// flatten returns the numbers of a GeoJSON coordinates member in order.
func flatten(tb testing.TB, raw json.RawMessage) []float64 {
	tb.Helper()
	var v any
	if err := json.Unmarshal(raw, &v); err != nil {
		tb.Fatal(err)
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

// segmentsMeet reports whether closed segments p1–p2 and p3–p4 share a
// point, by orientation tests (the standard computational-geometry
// predicate: Cormen et al., Introduction to Algorithms, §33.1, from
// memory), collinear overlaps and touching ends included.
func segmentsMeet(p1, p2, p3, p4 layers.Coord) bool {
	orient := func(a, b, c layers.Coord) float64 {
		return (b[0]-a[0])*(c[1]-a[1]) - (b[1]-a[1])*(c[0]-a[0])
	}
	on := func(a, b, c layers.Coord) bool { // c on segment a–b, given collinear
		return math.Min(a[0], b[0]) <= c[0] && c[0] <= math.Max(a[0], b[0]) &&
			math.Min(a[1], b[1]) <= c[1] && c[1] <= math.Max(a[1], b[1])
	}
	d1, d2 := orient(p3, p4, p1), orient(p3, p4, p2)
	d3, d4 := orient(p1, p2, p3), orient(p1, p2, p4)
	if ((d1 > 0 && d2 < 0) || (d1 < 0 && d2 > 0)) && ((d3 > 0 && d4 < 0) || (d3 < 0 && d4 > 0)) {
		return true
	}
	return d1 == 0 && on(p3, p4, p1) || d2 == 0 && on(p3, p4, p2) || d3 == 0 && on(p1, p2, p3) || d4 == 0 && on(p1, p2, p4)
}

// selfMeetings lists the pairs of non-adjacent edges of a closed ring that
// share a point: O(n²), every pair.
func selfMeetings(ring []layers.Coord) [][2]int {
	m := len(ring) - 1 // edges
	var out [][2]int
	for i := 0; i < m; i++ {
		for j := i + 2; j < m; j++ {
			if i == 0 && j == m-1 {
				continue // the closing edge meets the first at ring[0]
			}
			if segmentsMeet(ring[i], ring[i+1], ring[j], ring[j+1]) {
				out = append(out, [2]int{i, j})
			}
		}
	}
	return out
}

// inside reports whether p lies inside ring, by crossings of a ray to the
// east (the even-odd rule, from memory).
func inside(ring []layers.Coord, p layers.Coord) bool {
	in := false
	for i := 0; i+1 < len(ring); i++ {
		a, b := ring[i], ring[i+1]
		if (a[1] > p[1]) != (b[1] > p[1]) {
			x := a[0] + (p[1]-a[1])*(b[0]-a[0])/(b[1]-a[1])
			if x > p[0] {
				in = !in
			}
		}
	}
	return in
}
