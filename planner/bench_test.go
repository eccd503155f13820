package planner

import "testing"

// benchProblem: the seeded synthetic canal of helpers_test.go at 10 m
// stations with three drop heights, the five default grades and the default
// 1 cm step.
func benchOptimize(b *testing.B, n int) {
	p := testProblem(n, 7)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Optimize(p); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkOptimize10km and BenchmarkOptimize100km time one alternative,
// design and hydraulics included; their ratio shows how the cost grows with
// length (linear: about 10).
func BenchmarkOptimize10km(b *testing.B)  { benchOptimize(b, 1001) }
func BenchmarkOptimize100km(b *testing.B) { benchOptimize(b, 10001) }

// BenchmarkSolve100km times the dynamic programme alone.
func BenchmarkSolve100km(b *testing.B) {
	q, err := prepare(testProblem(10001, 7))
	if err != nil {
		b.Fatal(err)
	}
	k := q.core()
	b.ReportAllocs()
	for b.Loop() {
		if _, err := k.solve(); err != nil {
			b.Fatal(err)
		}
	}
}
