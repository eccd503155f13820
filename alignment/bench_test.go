package alignment

import (
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
