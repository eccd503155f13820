package terrain_test

import (
	"runtime"
	"testing"

	"canalstep/terrain"
)

// BenchmarkTransformPair builds the forward and inverse transforms between
// lon/lat and UTM zone 33N, as each alignment's set-up did: from OGC:CRS84
// the way this package did before (godal straight from the definitions),
// from LonLat with two searches, and from LonLat with the inverse derived
// from the forward one; then as cached lookups. GDAL gives each OS thread a
// PROJ context of its own, with its own caches: the "cold" runs build on a
// fresh thread each time, as a new worker thread or process would, the
// "warm" ones on threads that have built the pair before.
func BenchmarkTransformPair(b *testing.B) {
	const utm = "EPSG:32633"
	builds := []struct {
		name  string
		build func(b *testing.B)
	}{
		{"CRS84-old", func(b *testing.B) {
			oldTransform(b, "OGC:CRS84", utm).Close()
			oldTransform(b, utm, "OGC:CRS84").Close()
		}},
		{"LonLat-two-builds", func(b *testing.B) {
			f, err := terrain.NewTransform(terrain.LonLat, utm)
			if err != nil {
				b.Fatal(err)
			}
			i, err := terrain.NewTransform(utm, terrain.LonLat)
			if err != nil {
				b.Fatal(err)
			}
			f.Close()
			i.Close()
		}},
		{"LonLat-inverse", func(b *testing.B) {
			f, err := terrain.NewTransform(terrain.LonLat, utm)
			if err != nil {
				b.Fatal(err)
			}
			i, err := f.Inverse()
			if err != nil {
				b.Fatal(err)
			}
			f.Close()
			i.Close()
		}},
	}
	for _, bl := range builds {
		b.Run(bl.name+"/warm", func(b *testing.B) {
			for b.Loop() {
				bl.build(b)
			}
		})
		b.Run(bl.name+"/cold", func(b *testing.B) {
			for b.Loop() {
				done := make(chan struct{})
				go func() {
					defer close(done)
					runtime.LockOSThread() // never unlocked: the thread ends with the goroutine
					bl.build(b)
				}()
				<-done
			}
		})
	}
	b.Run("shared-lookup", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			f, err := terrain.SharedTransform("OGC:CRS84", utm)
			if err != nil {
				b.Fatal(err)
			}
			if _, err := f.Inverse(); err != nil {
				b.Fatal(err)
			}
		}
	})
}

// BenchmarkCRSInfo describes a CRS, as every alignment's set-up asks; after
// the first call it is a cache lookup.
func BenchmarkCRSInfo(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		if _, err := terrain.CRSInfo("EPSG:32633"); err != nil {
			b.Fatal(err)
		}
	}
}

// utmPoints returns n points along a 40 km line in UTM zone 33N.
func utmPoints(n int) (xs, ys []float64) {
	xs, ys = make([]float64, n), make([]float64, n)
	for i := range n {
		xs[i] = 480000 + float64(i)
		ys[i] = 3960000 + 0.5*float64(i)
	}
	return xs, ys
}

// BenchmarkTransform40k transforms 40,000 stations from UTM to lon/lat
// through the shared transform.
func BenchmarkTransform40k(b *testing.B) {
	tr, err := terrain.SharedTransform("EPSG:32633", terrain.LonLat)
	if err != nil {
		b.Fatal(err)
	}
	x0, y0 := utmPoints(40000)
	xs, ys := make([]float64, len(x0)), make([]float64, len(y0))
	b.ReportAllocs()
	for b.Loop() {
		copy(xs, x0)
		copy(ys, y0)
		if err := tr.Transform(xs, ys); err != nil {
			b.Fatal(err)
		}
	}
	reportPerPoint(b, len(xs))
}

// BenchmarkTransformParallel transforms 40,000 points per call from every
// benchmark goroutine through one Transform: with its pool of PROJ handles,
// and with a single handle (calls in turn), to show what the pool buys.
func BenchmarkTransformParallel(b *testing.B) {
	for _, tc := range []struct {
		name  string
		limit int
	}{{"pool", 0}, {"one-handle", 1}} {
		b.Run(tc.name, func(b *testing.B) {
			tr, err := terrain.NewTransform("EPSG:32633", terrain.LonLat)
			if err != nil {
				b.Fatal(err)
			}
			defer tr.Close()
			if tc.limit > 0 {
				terrain.SetHandleLimit(tr, tc.limit)
			}
			x0, y0 := utmPoints(40000)
			b.RunParallel(func(pb *testing.PB) {
				xs, ys := make([]float64, len(x0)), make([]float64, len(y0))
				for pb.Next() {
					copy(xs, x0)
					copy(ys, y0)
					if err := tr.Transform(xs, ys); err != nil {
						b.Error(err)
						return
					}
				}
			})
			reportPerPoint(b, len(x0))
		})
	}
}
