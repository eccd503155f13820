package planner

import (
	"errors"
	"runtime/debug"
	"testing"
)

// TestBoundedWork: a problem whose state arrays would need far more memory
// than allowed is refused before anything is allocated, with an error that
// wraps ErrInput and names what to change. The test runs under a soft
// memory limit of 256 MiB, so an allocation of the naive size (tens of GB
// here: 1,000 stations × 5 grades × 2,000,000 bed lines) would make the
// runtime collect itself to death or crash instead of returning.
func TestBoundedWork(t *testing.T) {
	old := debug.SetMemoryLimit(256 << 20)
	defer debug.SetMemoryLimit(old)
	p := testProblem(1000, 3)
	p.Design.Step = 1e-4                                    // the finest step Ranges allow
	p.Design.MaxCutDepth, p.Design.MaxFillHeight = 100, 100 // the widest band
	p.Design.DropHeights = []float64{0.5}
	p.Design.MaxMemory = DefaultMaxMemory
	_, err := Optimize(p)
	var tb *TooBigError
	if !errors.As(err, &tb) || !errors.Is(err, ErrInput) {
		t.Fatalf("got %v, want a *TooBigError wrapping ErrInput", err)
	}
	if tb.Bytes <= tb.Limit || tb.States < 1e9 {
		t.Errorf("estimate %d bytes for %d states against a limit of %d", tb.Bytes, tb.States, tb.Limit)
	}
	t.Log(err)
	// The same problem with an ordinary step fits.
	p.Design.Step, p.Design.MaxCutDepth, p.Design.MaxFillHeight = 0.01, 5, 2
	if _, err := Optimize(p); err != nil && errors.As(err, &tb) {
		t.Errorf("an ordinary problem was refused: %v", err)
	}
}
