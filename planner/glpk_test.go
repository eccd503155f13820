package planner

import (
	"bytes"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"canalstep/testdata/reftool"
)

// mipProblem is the single-grade case that WriteLP models (linearDesign)
// with one grade and one drop height. The ground is seeded synthetic: a
// 1.5 % fall, a 200 m undulation of ±0.5 m and small roughness; prices are
// illustrative (no source).
func mipProblem(n int, seed uint64) Problem {
	r := rand.New(rand.NewPCG(seed, 3))
	c, g := make([]float64, n), make([]float64, n)
	ph, rough := 2*math.Pi*r.Float64(), 0.0
	for i := range c {
		c[i] = 10 * float64(i)
		rough = 0.7*rough + 0.05*r.NormFloat64()
		g[i] = 100 - 0.015*c[i] + 0.5*math.Sin(2*math.Pi*c[i]/200+ph) + rough
	}
	d := linearDesign()
	d.DropHeights, d.Grades, d.MaxCutDepth, d.MaxFillHeight = []float64{1.0}, []float64{0.005}, 3, 1.5
	d.BasinLength = func(float64) float64 { return 6 }
	return Problem{Stations: LevelProfile(c, g), Design: d}
}

// glpsolObjective solves an LP file with glpsol and returns the MIP objective
// from its solution file.
func glpsolObjective(t testing.TB, lp string) float64 {
	t.Helper()
	glpsol := reftool.Need(t, "glpsol")
	out := lp + ".sol"
	cmd := exec.Command(glpsol, "--lp", lp, "-w", out)
	var stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stderr, &stderr
	if err := cmd.Run(); err != nil {
		t.Fatalf("glpsol: %v\n%s", err, stderr.String())
	}
	if !strings.Contains(stderr.String(), "INTEGER OPTIMAL SOLUTION FOUND") {
		t.Fatalf("glpsol did not prove optimality:\n%s", stderr.String())
	}
	b, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	// GLPK 5.0 solution format: a line "s mip ROWS COLS o OBJ" (o = optimal).
	for _, line := range strings.Split(string(b), "\n") {
		f := strings.Fields(line)
		if len(f) == 6 && f[0] == "s" && f[1] == "mip" {
			if f[4] != "o" {
				t.Fatalf("glpsol status %q, want o (optimal)", f[4])
			}
			v, err := strconv.ParseFloat(f[5], 64)
			if err != nil {
				t.Fatal(err)
			}
			return v
		}
	}
	t.Fatalf("no MIP objective in glpsol's solution file:\n%s", b)
	return 0
}

func TestOptimumMatchesGLPK(t *testing.T) {
	dir := t.TempDir()
	for _, tc := range []struct {
		n         int
		seed      uint64
		dropFixed float64 // 0: mipProblem's price
	}{{50, 11, 0}, {100, 12, 0}, {200, 13, 0}, {50, 14, 2000}, {120, 15, 1000}} {
		p := mipProblem(tc.n, tc.seed)
		if tc.dropFixed > 0 {
			p.Design.Costs.DropFixed = tc.dropFixed
		}
		lp := filepath.Join(dir, "plan"+strconv.Itoa(tc.n)+".lp")
		var buf bytes.Buffer
		if err := WriteLP(&buf, p); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(lp, buf.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
		t0 := time.Now()
		want := glpsolObjective(t, lp)
		tg := time.Since(t0)
		res, err := Optimize(p)
		if err != nil {
			t.Fatal(err)
		}
		// Same feasible set and objective: the difference is rounding only.
		// glpsol writes the objective with 16+ significant digits; its
		// integrality tolerance (1e-5 on a binary) could move the bed by at
		// most 5e-6 m, worth far less than 1e-6 of the cost here.
		got := res.Totals.TotalCost
		if math.Abs(got-want) > 1e-6*want {
			t.Errorf("%d stations: optimiser %.6f, glpsol %.6f (diff %.3g)", tc.n, got, want, got-want)
		}
		t.Logf("%d stations: optimiser %.6f (%d drops), glpsol %.6f in %v (diff %.2g)", tc.n, got, len(res.Drops), want, tg, got-want)
		// The same problem on level DEM cross-sections runs the
		// cross-section integrator in the optimiser; the MIP is unchanged.
		levelCross(&p, 20)
		resX, err := Optimize(p)
		if err != nil {
			t.Fatalf("%d stations on level cross-sections: %v", tc.n, err)
		}
		if got := resX.Totals.TotalCost; math.Abs(got-want) > 1e-6*want {
			t.Errorf("%d stations on level cross-sections: optimiser %.6f, glpsol %.6f", tc.n, got, want)
		}
		if len(res.Drops) == 0 {
			t.Errorf("%d stations: no drops in the optimum; the case proves little", tc.n)
		}
	}
}

var (
	benchPlanOut  = flag.String("benchplan.out", "", "directory: write the single-grade MIP model (model.lp) and the optimiser's objective and time (dp.txt) for scripts/bench-plan.sh")
	benchPlanN    = flag.Int("benchplan.n", 400, "stations of the bench-plan model")
	benchPlanReps = flag.Int("benchplan.reps", 20, "timed optimiser runs for bench-plan (the fastest is reported)")
)

// TestBenchPlanModel is the Go side of scripts/bench-plan.sh; it runs only
// with -benchplan.out. It times Optimize (the fastest of -benchplan.reps
// runs, everything included) and writes the same problem as a MIP for CBC.
func TestBenchPlanModel(t *testing.T) {
	if *benchPlanOut == "" {
		t.Skip("run by scripts/bench-plan.sh with -benchplan.out")
	}
	p := mipProblem(*benchPlanN, 400)
	var buf bytes.Buffer
	if err := WriteLP(&buf, p); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(*benchPlanOut, "model.lp"), buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	var res *Result
	best := time.Duration(math.MaxInt64)
	for r := 0; r < max(1, *benchPlanReps); r++ {
		t0 := time.Now()
		var err error
		if res, err = Optimize(p); err != nil {
			t.Fatal(err)
		}
		best = min(best, time.Since(t0))
	}
	out := fmt.Sprintf("stations %d\nobjective %.10f\ndrops %d\nseconds %.9f\n", *benchPlanN, res.Totals.TotalCost, len(res.Drops), best.Seconds())
	if err := os.WriteFile(filepath.Join(*benchPlanOut, "dp.txt"), []byte(out), 0o644); err != nil {
		t.Fatal(err)
	}
}
