package hydraulics

import "testing"

// The benchmarks vary the discharge so that no two consecutive solves are
// the same problem.

var sink float64

func BenchmarkNormalDepth(b *testing.B) {
	c := SI()
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		y, err := NormalDepth(c, si1.Section, 5+float64(i%64)*0.25, si1.N, si1.Slope)
		if err != nil {
			b.Fatal(err)
		}
		sink += y
	}
}

// BenchmarkNormalDepthWide covers the optimiser's range of slopes and
// widths: 1e-5 to 1e-2 and rectangles to wide trapezoids.
func BenchmarkNormalDepthWide(b *testing.B) {
	c := SI()
	secs := []Section{{3, 1.5}, {0.5, 0}, {10, 2}, {0, 1}}
	slopes := []float64{1e-5, 1e-4, 1e-3, 1e-2}
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		y, err := NormalDepth(c, secs[i%4], 0.5+float64(i%97), 0.02, slopes[(i/4)%4])
		if err != nil {
			b.Fatal(err)
		}
		sink += y
	}
}

func BenchmarkCriticalDepth(b *testing.B) {
	c := SI()
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		y, err := CriticalDepth(c, si1.Section, 5+float64(i%64)*0.25)
		if err != nil {
			b.Fatal(err)
		}
		sink += y
	}
}

func BenchmarkDesignDrop(b *testing.B) {
	c := SI()
	in := DropInput{Q: 10, CrestWidth: 3, Height: 1.2, Downstream: si1}
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		in.Height = 0.5 + float64(i%16)*0.1
		d, err := DesignDrop(c, in)
		if err != nil {
			b.Fatal(err)
		}
		sink += d.BasinLength
	}
}

// BenchmarkStandardStep: one 3 km M1 profile at 50 m stations (61 steps).
func BenchmarkStandardStep(b *testing.B) {
	c := SI()
	st := stationsEvery(3000, 50)
	depths := make([]float64, len(st))
	b.ReportAllocs()
	for b.Loop() {
		if err := StandardStepInto(c, si1, 10, 2.0, st, depths); err != nil {
			b.Fatal(err)
		}
		sink += depths[0]
	}
}

// BenchmarkWaterSurfaceProfile: the refined M2 drawdown above a free
// overfall over 2 km at 100 m stations.
func BenchmarkWaterSurfaceProfile(b *testing.B) {
	c := SI()
	yc, _ := CriticalDepth(c, si1.Section, 10)
	st := stationsEvery(2000, 100)
	b.ReportAllocs()
	for b.Loop() {
		pts, err := WaterSurfaceProfile(c, si1, 10, yc, st, 2.5)
		if err != nil {
			b.Fatal(err)
		}
		sink += pts[0].Depth
	}
}
