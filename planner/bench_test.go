package planner

import (
	"runtime"
	"testing"
)

// perState reports the run's time per station state: ns/state from the
// wall clock, and cpu-ns/state from the process's CPU time, which a busy
// shared machine inflates far less (run with -cpu 1: one core).
type perState struct {
	b      *testing.B
	cpu0   float64
	cpuOK  bool
	states int64
}

func startPerState(b *testing.B) *perState {
	b.ReportAllocs()
	c, ok := cpuSeconds()
	return &perState{b: b, cpu0: c, cpuOK: ok}
}

func (m *perState) report() {
	if m.states == 0 {
		return
	}
	m.b.ReportMetric(float64(m.b.Elapsed().Nanoseconds())/float64(m.states), "ns/state")
	if c, ok := cpuSeconds(); ok && m.cpuOK {
		m.b.ReportMetric((c-m.cpu0)*1e9/float64(m.states), "cpu-ns/state")
	}
}

// benchOptimize: the seeded synthetic canal of helpers_test.go at 10 m
// stations with three drop heights, the five default grades and the default
// 1 cm step. ns/state is the whole run (design and hydraulics included) per
// station state the optimiser evaluates.
func benchOptimize(b *testing.B, p Problem) {
	m := startPerState(b)
	for b.Loop() {
		res, err := Optimize(p)
		if err != nil {
			b.Fatal(err)
		}
		m.states += res.Stats.States
	}
	m.report()
}

// BenchmarkOptimize10km and BenchmarkOptimize100km time one alternative,
// design and hydraulics included; their ratio shows how the cost grows with
// length (linear: about 10).
func BenchmarkOptimize10km(b *testing.B)  { benchOptimize(b, testProblem(1001, 7)) }
func BenchmarkOptimize100km(b *testing.B) { benchOptimize(b, testProblem(10001, 7)) }

// BenchmarkOptimizeCross100km is BenchmarkOptimize100km on DEM-like
// cross-sections (withCrossFall) sampled every metre to the design's
// envelope: the earthwork integrated across the irregular ground.
func BenchmarkOptimizeCross100km(b *testing.B) { benchOptimize(b, crossProblem(b, 10001)) }

// benchSolve times the dynamic programme alone on p.
func benchSolve(b *testing.B, p Problem) {
	q, err := prepare(p)
	if err != nil {
		b.Fatal(err)
	}
	k := q.core()
	m := startPerState(b)
	for b.Loop() {
		sol, err := k.solve()
		if err != nil {
			b.Fatal(err)
		}
		m.states += sol.states
	}
	m.report()
}

// BenchmarkSolve100km times the dynamic programme alone (35 M states).
func BenchmarkSolve100km(b *testing.B) { benchSolve(b, testProblem(10001, 7)) }

// BenchmarkSolve10km is BenchmarkSolve100km on a tenth of the length: the
// ratio of the two shows whether the work is linear in length.
func BenchmarkSolve10km(b *testing.B) { benchSolve(b, testProblem(1001, 7)) }

// BenchmarkSolveCross100km is BenchmarkSolve100km on DEM-like
// cross-sections.
func BenchmarkSolveCross100km(b *testing.B) { benchSolve(b, crossProblem(b, 10001)) }

// crossProblem is testProblem with cross-sections every metre out to the
// design's envelope (SectionEnvelope's half-width, rounded up).
func crossProblem(b *testing.B, n int) Problem {
	p := testProblem(n, 7)
	env, err := SectionEnvelope(p.Design)
	if err != nil {
		b.Fatal(err)
	}
	withCrossFall(&p, 5, float64(int(env.HalfWidth+1)))
	return p
}

// BenchmarkPrepareCross100km times preparing the cross-section problem of
// BenchmarkSolveCross100km (templates and the earthwork sections of the
// five grades) and reports the heap it keeps live, MB: what the sections
// cost in memory beside the stations themselves.
func BenchmarkPrepareCross100km(b *testing.B) {
	p := crossProblem(b, 10001)
	var live float64
	b.ReportAllocs()
	for b.Loop() {
		var m0, m1 runtime.MemStats
		runtime.GC()
		runtime.ReadMemStats(&m0)
		q, err := prepare(p)
		if err != nil {
			b.Fatal(err)
		}
		runtime.GC()
		runtime.ReadMemStats(&m1)
		live = float64(int64(m1.HeapAlloc)-int64(m0.HeapAlloc)) / 1e6
		runtime.KeepAlive(q)
	}
	b.ReportMetric(live, "MB-live")
}
