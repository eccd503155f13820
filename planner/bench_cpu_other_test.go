//go:build !unix

package planner

// cpuSeconds cannot read the CPU time here.
func cpuSeconds() (float64, bool) { return 0, false }
