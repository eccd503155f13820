//go:build unix

package planner

import "syscall"

// cpuSeconds returns the CPU time (user + system) the process has used,
// s; ok is false where it cannot be read.
func cpuSeconds() (s float64, ok bool) {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0, false
	}
	return float64(ru.Utime.Nano()+ru.Stime.Nano()) / 1e9, true
}
