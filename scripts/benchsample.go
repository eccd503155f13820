//go:build ignore

// Benchsample samples a DEM bilinearly at the "x y" points of a file (or
// stdin) with package terrain, as the profile command does, and prints how
// long opening and sampling took and how many blocks were decoded. With -o
// it writes the elevations, one per line. scripts/bench.sh times it beside
// gdallocationinfo and a Python reference.
//
// With -decode N it measures the tile-decode floor of that profile
// instead: the time GDAL takes to decode, once each, the DEM blocks that
// bilinear sampling at the points touches. It finds those blocks from the
// points and the DEM's geotransform (each point's 2×2 cell neighbourhood),
// then, in N passes, opens the DEM, decodes every one of them with
// GDALReadBlock (what package terrain calls: into a caller's buffer, no
// GDAL block cache) and closes it again; only the decoding is timed. It
// prints one line for people and "decode_s SECONDS", the median pass's
// total. scripts/bench.sh sets canalstep profile, net of the load floor,
// against this floor.
//
// Usage: go run scripts/benchsample.go [-o FILE | -decode PASSES] DEM [POINTS]
package main

/*
#cgo pkg-config: gdal
#include <gdal.h>
#include <cpl_error.h>
#include <stdlib.h>
*/
import "C"

import (
	"bufio"
	"flag"
	"fmt"
	"io"
	"log"
	"math"
	"os"
	"sort"
	"strconv"
	"strings"
	"syscall"
	"time"
	"unsafe"

	"canalstep/terrain"
)

func main() {
	outPath := flag.String("o", "", "write elevations (m) to this file")
	passes := flag.Int("decode", 0, "measure the tile-decode floor in this many passes instead of sampling")
	flag.Parse()
	if flag.NArg() < 1 {
		log.Fatal("usage: benchsample [-o FILE | -decode PASSES] DEM [POINTS]")
	}
	var in io.Reader = os.Stdin
	if flag.NArg() > 1 {
		f, err := os.Open(flag.Arg(1))
		if err != nil {
			log.Fatal(err)
		}
		defer f.Close()
		in = f
	}
	c0 := cpu()
	t0 := time.Now()
	xs, ys, err := readPoints(in)
	if err != nil {
		log.Fatal(err)
	}
	if *passes > 0 {
		decodeFloor(flag.Arg(0), xs, ys, *passes)
		return
	}
	t1, c1 := time.Now(), cpu()
	dem, err := terrain.Open(flag.Arg(0), terrain.Options{})
	if err != nil {
		log.Fatal(err)
	}
	defer dem.Close()
	t2, c2 := time.Now(), cpu()
	z := make([]float64, len(xs))
	if err := dem.Sample(xs, ys, z); err != nil {
		log.Fatal(err)
	}
	t3, c3 := time.Now(), cpu()
	if *outPath != "" {
		f, err := os.Create(*outPath)
		if err != nil {
			log.Fatal(err)
		}
		w := bufio.NewWriter(f)
		for _, v := range z {
			fmt.Fprintf(w, "%.4f\n", v)
		}
		if err := w.Flush(); err != nil {
			log.Fatal(err)
		}
		if err := f.Close(); err != nil {
			log.Fatal(err)
		}
	}
	in2 := dem.Info()
	fmt.Fprintf(os.Stderr, "benchsample: %d points; wall (CPU) ms: before main %.1f, read points %.1f (%.1f), open %.1f (%.1f), sample %.1f (%.1f) = %.0f ns/point; %d of %d blocks decoded (%d×%d cells each)\n",
		len(xs), c0, ms(t1.Sub(t0)), c1-c0, ms(t2.Sub(t1)), c2-c1, ms(t3.Sub(t2)), c3-c2, float64(t3.Sub(t2).Nanoseconds())/float64(len(xs)),
		dem.BlocksRead(), ceilDiv(in2.Width, in2.CacheBlockX)*ceilDiv(in2.Height, in2.CacheBlockY), in2.CacheBlockX, in2.CacheBlockY)
}

// cpu returns the process's user+system CPU time so far in ms.
func cpu() float64 {
	var ru syscall.Rusage
	syscall.Getrusage(syscall.RUSAGE_SELF, &ru)
	return float64(ru.Utime.Nano()+ru.Stime.Nano()) / 1e6
}

func ms(d time.Duration) float64 { return float64(d.Microseconds()) / 1000 }

func ceilDiv(a, b int) int { return (a + b - 1) / b }

// readPoints reads "x y" lines; other columns are ignored.
func readPoints(r io.Reader) (xs, ys []float64, err error) {
	sc := bufio.NewScanner(r)
	xs, ys = make([]float64, 0, 1<<16), make([]float64, 0, 1<<16)
	for sc.Scan() {
		line := strings.TrimSpace(sc.Text())
		if line == "" {
			continue
		}
		a, b, _ := strings.Cut(line, " ")
		b, _, _ = strings.Cut(strings.TrimLeft(b, " "), " ")
		x, err1 := strconv.ParseFloat(a, 64)
		y, err2 := strconv.ParseFloat(b, 64)
		if err1 != nil || err2 != nil {
			return nil, nil, fmt.Errorf("bad point line %q", sc.Text())
		}
		xs, ys = append(xs, x), append(ys, y)
	}
	return xs, ys, sc.Err()
}

// decodeFloor prints the tile-decode floor of sampling dem at the points
// (see the package comment), in passes passes.
func decodeFloor(dem string, xs, ys []float64, passes int) {
	C.GDALAllRegister()
	path := C.CString(dem)
	defer C.free(unsafe.Pointer(path))

	ds := open(path)
	var gt [6]C.double
	if C.GDALGetGeoTransform(ds, &gt[0]) != C.CE_None || gt[2] != 0 || gt[4] != 0 {
		log.Fatal("benchsample: the DEM needs a north-up geotransform")
	}
	band := C.GDALGetRasterBand(ds, 1)
	w, h := int(C.GDALGetRasterXSize(ds)), int(C.GDALGetRasterYSize(ds))
	var bx, by C.int
	C.GDALGetBlockSize(band, &bx, &by)
	if C.GDALGetRasterDataType(band) != C.GDT_Float32 {
		log.Fatal("benchsample: the DEM's band 1 must be Float32")
	}
	blocks := touched(xs, ys, gt, w, h, int(bx), int(by))
	C.GDALClose(ds)

	buf := make([]float32, int(bx)*int(by))
	totals := make([]float64, passes)
	for p := range totals {
		ds := open(path)
		band := C.GDALGetRasterBand(ds, 1)
		t0 := time.Now()
		for _, b := range blocks {
			if C.GDALReadBlock(band, C.int(b[0]), C.int(b[1]), unsafe.Pointer(&buf[0])) != C.CE_None {
				log.Fatalf("benchsample: block (%d, %d): %s", b[0], b[1], C.GoString(C.CPLGetLastErrorMsg()))
			}
		}
		totals[p] = time.Since(t0).Seconds()
		C.GDALClose(ds)
	}
	sorted := append([]float64(nil), totals...)
	sort.Float64s(sorted)
	med := sorted[len(sorted)/2]
	if len(sorted)%2 == 0 {
		med = (sorted[len(sorted)/2-1] + sorted[len(sorted)/2]) / 2
	}
	ms := make([]string, len(totals))
	for i, s := range totals {
		ms[i] = fmt.Sprintf("%.2f", s*1e3)
	}
	fmt.Printf("benchsample: %d points touch %d of %d blocks (%d×%d cells); pass totals %s ms; median %.2f ms = %.3f ms a block\n",
		len(xs), len(blocks), ceilDiv(w, int(bx))*ceilDiv(h, int(by)), bx, by, strings.Join(ms, ", "), med*1e3, med*1e3/float64(len(blocks)))
	fmt.Printf("decode_s %.6f\n", med)
}

func open(path *C.char) C.GDALDatasetH {
	ds := C.GDALOpen(path, C.GA_ReadOnly)
	if ds == nil {
		log.Fatalf("benchsample: open: %s", C.GoString(C.CPLGetLastErrorMsg()))
	}
	return ds
}

// touched returns the blocks (column, row) whose cells bilinear sampling
// at the points reads: for each point inside the raster, the cells of its
// 2×2 neighbourhood (cell centres at half-integer pixel positions), in the
// order first met.
func touched(xs, ys []float64, gt [6]C.double, w, h, bx, by int) (blocks [][2]int) {
	seen := map[[2]int]bool{}
	for i := range xs {
		px := (xs[i]-float64(gt[0]))/float64(gt[1]) - 0.5
		py := (ys[i]-float64(gt[3]))/float64(gt[5]) - 0.5
		c0, r0 := int(math.Floor(px)), int(math.Floor(py))
		for _, c := range []int{c0, c0 + 1} {
			for _, r := range []int{r0, r0 + 1} {
				if c < 0 || r < 0 || c >= w || r >= h {
					continue
				}
				b := [2]int{c / bx, r / by}
				if !seen[b] {
					seen[b] = true
					blocks = append(blocks, b)
				}
			}
		}
	}
	return blocks
}
