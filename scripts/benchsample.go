//go:build ignore

// Benchsample samples a DEM bilinearly at the "x y" points of a file (or
// stdin) with package terrain, as the profile command does, and prints how
// long opening and sampling took and how many blocks were decoded. With -o
// it writes the elevations, one per line. scripts/bench.sh times it beside
// gdallocationinfo and a Python reference.
//
// Usage: go run scripts/benchsample.go [-o FILE] DEM [POINTS]
package main

import (
	"bufio"
	"flag"
	"fmt"
	"io"
	"log"
	"os"
	"strconv"
	"strings"
	"syscall"
	"time"

	"canalstep/terrain"
)

func main() {
	outPath := flag.String("o", "", "write elevations (m) to this file")
	flag.Parse()
	if flag.NArg() < 1 {
		log.Fatal("usage: benchsample [-o FILE] DEM [POINTS]")
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
