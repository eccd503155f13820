package alignment

import (
	"fmt"
	"strings"
	"testing"

	"github.com/paulmach/orb"
)

// hundredKm is a 100 km zigzag of 50 legs, 2 km each (exact by construction).
func hundredKm() orb.LineString {
	line := orb.LineString{{400000, 4000000}}
	for i := range 50 {
		p := line[len(line)-1]
		dy := 1200.0
		if i%2 == 1 {
			dy = -1200
		}
		line = append(line, orb.Point{p[0] + 1600, p[1] + dy}) // 1600-1200-2000 triangle
	}
	return line
}

// BenchmarkStationLine stations a 100 km line at 1 m spacing (100,001
// stations).
func BenchmarkStationLine(b *testing.B) {
	line := hundredKm()
	b.ReportAllocs()
	var n int
	for b.Loop() {
		st, err := StationLine(line, 1, 1, 0)
		if err != nil {
			b.Fatal(err)
		}
		n = len(st)
	}
	b.ReportMetric(float64(n), "stations")
}

// BenchmarkStations adds the three (identity) frame transforms, as the
// command does for a projected DEM.
func BenchmarkStations(b *testing.B) {
	a := Alignment{Name: "bench", Line: hundredKm()}
	id := TransformerFunc(func(xs, ys []float64) error { return nil })
	f := Frames{ToWork: id, WorkToDEM: id, WorkToLonLat: id}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Stations(a, f, 1, 0); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkFormatStation(b *testing.B) {
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		_ = FormatStation(float64(i)*0.37, false)
	}
}

// curveRadius for the benchmark zigzag: its legs deflect 73.7° (twice
// atan(1200/1600)), so R = 500 m takes T = 375 m of each 2 km leg.
const curveRadius = 500

// BenchmarkFitCurves fits the 49 curves of the 100 km zigzag.
func BenchmarkFitCurves(b *testing.B) {
	line := hundredKm()
	b.ReportAllocs()
	for b.Loop() {
		if _, err := FitCurves(line, 1, curveRadius); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkStationRoute stations the curved 100 km zigzag at 1 m: about a
// third of the stations lie on arcs (49 arcs of 643.5 m; common practice
// for comparing with BenchmarkStationLine, no source).
func BenchmarkStationRoute(b *testing.B) {
	r, err := FitCurves(hundredKm(), 1, curveRadius)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	var n int
	for b.Loop() {
		st, err := StationRoute(r, 1, 0)
		if err != nil {
			b.Fatal(err)
		}
		n = len(st)
	}
	b.ReportMetric(float64(n), "stations")
}

// BenchmarkLocate finds one offtake on the curved 100 km zigzag (99
// elements).
func BenchmarkLocate(b *testing.B) {
	r, err := FitCurves(hundredKm(), 1, curveRadius)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		r.Locate(430000, 4000900)
	}
}

// BenchmarkReadScheme reads a scheme of 200 alignments of 50 vertices with
// every control, and 200 offtakes.
func BenchmarkReadScheme(b *testing.B) {
	var buf strings.Builder
	buf.WriteString(`{"type":"FeatureCollection","features":[`)
	for i := range 200 {
		fmt.Fprintf(&buf, `{"type":"Feature","properties":{"name":"A%d","flow":1.5,"start_invert":100,"end_invert":90,"roughness":0.025,"bottom_width":1,"command_margin":0.1,"curve_radius":50,"corridor":"C%d"},"geometry":{"type":"LineString","coordinates":[`, i, i/2)
		for j := range 50 {
			if j > 0 {
				buf.WriteByte(',')
			}
			fmt.Fprintf(&buf, "[%d,%d]", 500000+j*100, 4000000+i*1000+(j%2)*30)
		}
		fmt.Fprintf(&buf, `]}},{"type":"Feature","properties":{"name":"O%d","margin":0.2,"alignment":"A%d"},"geometry":{"type":"Point","coordinates":[500050,%d]}},`, i, i, 4000000+i*1000)
	}
	data := []byte(strings.TrimSuffix(buf.String(), ",") + "]}")
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		if _, err := ReadScheme(data); err != nil {
			b.Fatal(err)
		}
	}
}
