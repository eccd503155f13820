// Package runner runs a batch's jobs on a pool of workers, each with its
// own resource (a DEM handle: GDAL datasets are not shared between
// threads). Jobs are independent and pure; their outcomes land by index, so
// nothing depends on scheduling.
package runner

import (
	"context"
	"errors"
	"io"
	"runtime"
	"sync"
)

// Each calls do(i, r) for every i in [0, n) on up to workers goroutines (0
// or less: one per CPU). Each goroutine gets its own resource: the first
// uses first, the others open their own with open (a failure there leaves
// that goroutine out, unless it is the only one); every opened resource and
// first are closed at the end. Once ctx is done no new job starts; Each
// then returns ctx's error after the running jobs end.
func Each[R io.Closer](ctx context.Context, n, workers int, first R, open func() (R, error), do func(i int, r R)) error {
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = max(1, min(workers, n))
	next := make(chan int)
	var wg sync.WaitGroup
	var mu sync.Mutex
	var openErr error
	work := func(r R) {
		defer wg.Done()
		defer r.Close()
		for i := range next {
			do(i, r)
		}
	}
	wg.Add(1)
	go work(first)
	for w := 1; w < workers; w++ {
		r, err := open()
		if err != nil {
			mu.Lock()
			openErr = errors.Join(openErr, err)
			mu.Unlock()
			continue
		}
		wg.Add(1)
		go work(r)
	}
	var err error
feed:
	for i := 0; i < n; i++ {
		select {
		case <-ctx.Done():
			err = ctx.Err()
			break feed
		case next <- i:
		}
	}
	close(next)
	wg.Wait()
	_ = openErr // extra workers are an optimisation; the first one did the work
	return err
}
