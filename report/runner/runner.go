// Package runner runs a batch's jobs on a pool of workers, each with its
// own resource (a DEM handle: GDAL datasets are not shared between
// threads). Jobs are independent and pure; their outcomes land by index, so
// nothing depends on scheduling.
package runner

import (
	"context"
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
	seeds := make([]int, n)
	for i := range seeds {
		seeds[i] = i
	}
	return Tasks(ctx, min(Workers(workers), max(n, 1)), first, open, seeds, func(i int, r R, _ func(int)) { do(i, r) })
}

// Workers returns the pool size that workers asks for: workers itself when
// positive, else one per CPU (GOMAXPROCS).
func Workers(workers int) int {
	if workers <= 0 {
		return runtime.GOMAXPROCS(0)
	}
	return workers
}

// Tasks runs do for every task of seeds, and for every task a running task
// hands on with push, on workers goroutines (at least one; Workers gives
// the default). Each goroutine has its own resource, as in [Each]; a
// resource open fails for leaves that goroutine out, and first always works.
//
// Order: a goroutine that is free takes the task pushed last, if any, else
// the next seed. So the follow-ups of a task (the alternatives of an
// alignment just sampled) run before the next seed starts, and what they
// share is released soon: with a seed that pushes k tasks, at most about
// workers seeds' shared state is alive at once, however many seeds there are.
//
// Tasks returns when every task has run. Once ctx is done no task starts
// (pushed and seed tasks not started are dropped); Tasks then returns
// ctx's error after the running tasks end, or nil when none was dropped.
func Tasks[R io.Closer, T any](ctx context.Context, workers int, first R, open func() (R, error), seeds []T, do func(t T, r R, push func(T))) error {
	q := &queue[T]{seeds: seeds, ctx: ctx}
	q.cond.L = &q.mu
	stop := context.AfterFunc(ctx, func() {
		q.mu.Lock()
		q.stopped = true
		q.mu.Unlock()
		q.cond.Broadcast()
	})
	defer stop()
	var wg sync.WaitGroup
	work := func(r R) {
		defer wg.Done()
		defer r.Close()
		for {
			t, ok := q.take()
			if !ok {
				return
			}
			do(t, r, q.push)
			q.finish()
		}
	}
	wg.Add(1)
	go work(first)
	for w := 1; w < max(1, workers); w++ {
		r, err := open()
		if err != nil {
			continue // extra workers are an optimisation; the first one does the work
		}
		wg.Add(1)
		go work(r)
	}
	wg.Wait()
	if q.dropped() {
		return ctx.Err()
	}
	return nil
}

// queue hands tasks to the workers: pushed tasks last in, first out, then
// the seeds in order.
type queue[T any] struct {
	ctx     context.Context
	mu      sync.Mutex
	cond    sync.Cond
	seeds   []T
	next    int // the next seed to hand out
	stack   []T // pushed tasks not yet taken
	running int
	stopped bool // ctx is done: hand out nothing more
}

// take blocks until a task is ready, or reports false when there is none
// left (and none running that could push one) or the queue was stopped.
func (q *queue[T]) take() (T, bool) {
	q.mu.Lock()
	defer q.mu.Unlock()
	for {
		var t T
		q.stopped = q.stopped || q.ctx.Err() != nil
		switch {
		case q.stopped:
			return t, false
		case len(q.stack) > 0:
			t = q.stack[len(q.stack)-1]
			q.stack[len(q.stack)-1] = *new(T) // let the task's data go
			q.stack = q.stack[:len(q.stack)-1]
		case q.next < len(q.seeds):
			t = q.seeds[q.next]
			q.next++
		case q.running == 0:
			q.cond.Broadcast() // wake the other idle workers to end too
			return t, false
		default:
			q.cond.Wait() // a running task may push more
			continue
		}
		q.running++
		return t, true
	}
}

func (q *queue[T]) push(t T) {
	q.mu.Lock()
	q.stack = append(q.stack, t)
	q.mu.Unlock()
	q.cond.Signal()
}

func (q *queue[T]) finish() {
	q.mu.Lock()
	q.running--
	idle := q.running == 0
	q.mu.Unlock()
	if idle {
		q.cond.Broadcast()
	}
}

// dropped reports whether a task was left unstarted when the queue stopped.
func (q *queue[T]) dropped() bool {
	q.mu.Lock()
	defer q.mu.Unlock()
	return q.stopped && (len(q.stack) > 0 || q.next < len(q.seeds))
}
