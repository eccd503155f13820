package terrain_test

import (
	"bufio"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"

	"canalstep/terrain"
)

// benchDir holds the bench DEM; TestMain removes it.
var benchDir string

// TestMain removes the bench DEM's folder after the tests and benchmarks.
func TestMain(m *testing.M) {
	code := m.Run()
	if benchDir != "" {
		os.RemoveAll(benchDir)
	}
	os.Exit(code)
}

// benchDEM is a 2048×2048 Float32 DEM in 256² DEFLATE tiles (64 tiles),
// written once per test binary.
var benchDEM = sync.OnceValues(func() (string, error) {
	dir, err := os.MkdirTemp("", "terrain-bench")
	if err != nil {
		return "", err
	}
	benchDir = dir
	const n = 2048
	g := roughGrid(n, n, 42)
	p := filepath.Join(dir, "bench.tif")
	return p, terrain.WriteGeoTIFF(p, g)
})

func mustBenchDEM(b *testing.B) string {
	b.Helper()
	p, err := benchDEM()
	if err != nil {
		b.Fatal(err)
	}
	return p
}

// benchLine returns n points along a diagonal across the bench DEM.
func benchLine(n int) (xs, ys []float64) {
	xs, ys = make([]float64, n), make([]float64, n)
	for i := range n {
		f := float64(i) / float64(n-1)
		xs[i] = fxX0 + (3+f*2040)*fxCell
		ys[i] = fxY0 - (3+f*1500)*fxCell
	}
	return xs, ys
}

func reportPerPoint(b *testing.B, points int) {
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*points), "ns/point")
}

// BenchmarkSampleLine: 40,001 bilinear samples along a line, blocks cached.
func BenchmarkSampleLine(b *testing.B) {
	d := mustOpen(b, mustBenchDEM(b), terrain.Options{})
	xs, ys := benchLine(40001)
	out := make([]float64, len(xs))
	if err := d.Sample(xs, ys, out); err != nil { // warm the cache
		b.Fatal(err)
	}
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		if err := d.Sample(xs, ys, out); err != nil {
			b.Fatal(err)
		}
	}
	reportPerPoint(b, len(xs))
}

// BenchmarkSampleLineCold: Open, 40,001 samples and Close per iteration, so
// every touched block is decoded again each time.
func BenchmarkSampleLineCold(b *testing.B) {
	xs, ys := benchLine(40001)
	benchCold(b, mustBenchDEM(b), xs, ys)
}

// benchCold runs Open, Sample and Close per iteration and reports the time
// per point and the blocks decoded per iteration.
func benchCold(b *testing.B, path string, xs, ys []float64) {
	out := make([]float64, len(xs))
	blocks := 0
	b.ReportAllocs()
	for b.Loop() {
		d, err := terrain.Open(path, terrain.Options{})
		if err != nil {
			b.Fatal(err)
		}
		if err := d.Sample(xs, ys, out); err != nil {
			b.Fatal(err)
		}
		blocks = d.BlocksRead()
		d.Close()
	}
	for i, v := range out {
		if math.IsNaN(v) {
			b.Fatalf("point %d sampled NaN", i)
		}
	}
	reportPerPoint(b, len(xs))
	b.ReportMetric(float64(blocks), "blocks/op")
}

// BenchmarkSampleRandom: random points anywhere on the DEM, all 64 blocks
// cached, for bilinear and nearest.
func BenchmarkSampleRandom(b *testing.B) {
	for _, m := range []terrain.Method{terrain.Bilinear, terrain.Nearest} {
		b.Run(m.String(), func(b *testing.B) {
			d := mustOpen(b, mustBenchDEM(b), terrain.Options{Method: m})
			rng := rand.New(rand.NewPCG(1, 1))
			const n = 40000
			xs, ys, out := make([]float64, n), make([]float64, n), make([]float64, n)
			for i := range xs {
				xs[i] = fxX0 + rng.Float64()*2048*fxCell
				ys[i] = fxY0 - rng.Float64()*2048*fxCell
			}
			if err := d.Sample(xs, ys, out); err != nil {
				b.Fatal(err)
			}
			b.ReportAllocs()
			b.ResetTimer()
			for b.Loop() {
				if err := d.Sample(xs, ys, out); err != nil {
					b.Fatal(err)
				}
			}
			reportPerPoint(b, n)
		})
	}
}

// BenchmarkBenchRoute samples the large DEM and the 40 km route that
// scripts/bench.sh generates (20000×20000 cells, 40,001+ stations), cold:
// Open, Sample and Close per iteration. Set CANALSTEP_BENCH_DIR to the
// folder holding dem.tif and points.txt (bench-out/ after bench.sh).
func BenchmarkBenchRoute(b *testing.B) {
	dir := os.Getenv("CANALSTEP_BENCH_DIR")
	if dir == "" {
		b.Skip("set CANALSTEP_BENCH_DIR to the folder scripts/bench.sh wrote")
	}
	xs, ys := readPoints(b, filepath.Join(dir, "points.txt"))
	benchCold(b, filepath.Join(dir, "dem.tif"), xs, ys)
	b.ReportMetric(float64(len(xs)), "points")
}

// BenchmarkBenchRouteDecode is the tile-decode floor of the profile
// benchmark: the same DEM and route as BenchmarkBenchRoute, sampled with a
// single decoder and Open and Close left out of the timing, so an op is the
// 21 blocks decoded one after another plus the bilinear sampling of 40,049
// points (BenchmarkSampleLine: about 2 ms of it). ms/block is the op over
// the blocks decoded; scripts/bench.sh compares the profile, net of the
// load floor, with it.
func BenchmarkBenchRouteDecode(b *testing.B) {
	dir := os.Getenv("CANALSTEP_BENCH_DIR")
	if dir == "" {
		b.Skip("set CANALSTEP_BENCH_DIR to the folder scripts/bench.sh wrote")
	}
	xs, ys := readPoints(b, filepath.Join(dir, "points.txt"))
	out := make([]float64, len(xs))
	blocks := 0
	for b.Loop() {
		b.StopTimer()
		d, err := terrain.Open(filepath.Join(dir, "dem.tif"), terrain.Options{Readers: 1})
		if err != nil {
			b.Fatal(err)
		}
		b.StartTimer()
		if err := d.Sample(xs, ys, out); err != nil {
			b.Fatal(err)
		}
		b.StopTimer()
		blocks = d.BlocksRead()
		d.Close()
		b.StartTimer()
	}
	b.ReportMetric(float64(blocks), "blocks/op")
	b.ReportMetric(float64(b.Elapsed())/1e6/float64(b.N)/float64(max(blocks, 1)), "ms/block")
}

// readPoints reads "x y" lines.
func readPoints(tb testing.TB, path string) (xs, ys []float64) {
	tb.Helper()
	f, err := os.Open(path)
	if err != nil {
		tb.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		fs := strings.Fields(sc.Text())
		if len(fs) < 2 {
			continue
		}
		x, err1 := strconv.ParseFloat(fs[0], 64)
		y, err2 := strconv.ParseFloat(fs[1], 64)
		if err1 != nil || err2 != nil {
			tb.Fatalf("%s: bad line %q", path, sc.Text())
		}
		xs, ys = append(xs, x), append(ys, y)
	}
	if err := sc.Err(); err != nil {
		tb.Fatal(err)
	}
	return xs, ys
}
