package runner

import (
	"context"
	"errors"
	"fmt"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
)

// res is a worker's resource: it counts how often it is closed and
// refuses to be used by two goroutines at once.
type res struct {
	id     int
	closed atomic.Int32
	busy   atomic.Bool
}

func (r *res) Close() error {
	r.closed.Add(1)
	return nil
}

func (r *res) use(t *testing.T) {
	if !r.busy.CompareAndSwap(false, true) {
		t.Errorf("resource %d used by two tasks at once", r.id)
	}
	defer r.busy.Store(false)
}

// pool opens resources and remembers them, failing the open numbered fail
// (1-based; 0: none fails).
type pool struct {
	mu   sync.Mutex
	all  []*res
	fail int
}

func (p *pool) open() (*res, error) {
	p.mu.Lock()
	defer p.mu.Unlock()
	if len(p.all)+1 == p.fail {
		p.fail = -1
		return nil, errors.New("no more handles")
	}
	r := &res{id: len(p.all)}
	p.all = append(p.all, r)
	return r, nil
}

// TestTasksRunsEveryTaskOnce: every seed and every pushed task runs exactly
// once, on a resource no other task uses at that moment, and every resource
// is closed once; with an open that fails, the pool goes on with fewer
// workers.
func TestTasksRunsEveryTaskOnce(t *testing.T) {
	for _, tc := range []struct{ workers, seeds, fail int }{
		{1, 5, 0}, {2, 5, 0}, {4, 1, 0}, {8, 20, 0}, {3, 6, 2}, {2, 0, 0},
	} {
		t.Run(fmt.Sprintf("w%d-s%d-f%d", tc.workers, tc.seeds, tc.fail), func(t *testing.T) {
			p := &pool{fail: tc.fail}
			first, _ := p.open()
			seeds := make([]string, tc.seeds)
			for i := range seeds {
				seeds[i] = fmt.Sprintf("s%d", i)
			}
			var mu sync.Mutex
			ran := map[string]int{}
			err := Tasks(context.Background(), tc.workers, first, p.open, seeds, func(task string, r *res, push func(string)) {
				r.use(t)
				mu.Lock()
				ran[task]++
				mu.Unlock()
				if !strings.Contains(task, "/") { // a seed: three follow-ups
					for k := range 3 {
						push(fmt.Sprintf("%s/%d", task, k))
					}
				}
			})
			if err != nil {
				t.Fatal(err)
			}
			if len(ran) != 4*tc.seeds {
				t.Errorf("%d distinct tasks ran, want %d", len(ran), 4*tc.seeds)
			}
			for task, n := range ran {
				if n != 1 {
					t.Errorf("task %s ran %d times", task, n)
				}
			}
			for _, r := range p.all {
				if n := r.closed.Load(); n != 1 {
					t.Errorf("resource %d closed %d times", r.id, n)
				}
			}
		})
	}
}

// TestTasksOrder: one worker takes the pushed tasks last in, first out,
// before the next seed (what keeps a batch's shared sampling short-lived).
func TestTasksOrder(t *testing.T) {
	p := &pool{}
	first, _ := p.open()
	var order []string
	err := Tasks(context.Background(), 1, first, p.open, []string{"a", "b"}, func(task string, _ *res, push func(string)) {
		order = append(order, task)
		if len(task) == 1 {
			push(task + "1")
			push(task + "2")
		}
	})
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"a", "a2", "a1", "b", "b2", "b1"}
	if !slices.Equal(order, want) {
		t.Errorf("order %v, want %v", order, want)
	}
}

// TestTasksCancel: once the context is done no task starts; the running
// one ends and Tasks returns the context's error; a context done before
// the start runs nothing.
func TestTasksCancel(t *testing.T) {
	p := &pool{}
	first, _ := p.open()
	ctx, cancel := context.WithCancel(context.Background())
	var ran atomic.Int32
	err := Tasks(ctx, 1, first, p.open, []int{1, 2, 3, 4}, func(task int, _ *res, push func(int)) {
		ran.Add(1)
		if task == 2 {
			push(20)
			cancel()
		}
	})
	if !errors.Is(err, context.Canceled) {
		t.Errorf("err %v, want context.Canceled", err)
	}
	if n := ran.Load(); n != 2 {
		t.Errorf("%d tasks ran, want 2 (tasks 1 and 2; 20, 3 and 4 dropped)", n)
	}
	first2, _ := p.open()
	ran.Store(0)
	if err := Tasks(ctx, 2, first2, p.open, []int{1}, func(int, *res, func(int)) { ran.Add(1) }); !errors.Is(err, context.Canceled) || ran.Load() != 0 {
		t.Errorf("done context: err %v, %d ran; want context.Canceled and none", err, ran.Load())
	}
	// Cancelled after the last task: nothing dropped, no error.
	ctx3, cancel3 := context.WithCancel(context.Background())
	first3, _ := p.open()
	if err := Tasks(ctx3, 1, first3, p.open, []int{1}, func(int, *res, func(int)) { cancel3() }); err != nil {
		t.Errorf("cancel during the last task: %v, want nil", err)
	}
}

// TestEach: the index form visits each index once.
func TestEach(t *testing.T) {
	p := &pool{}
	first, _ := p.open()
	seen := make([]atomic.Int32, 50)
	if err := Each(context.Background(), len(seen), 3, first, p.open, func(i int, r *res) {
		r.use(t)
		seen[i].Add(1)
	}); err != nil {
		t.Fatal(err)
	}
	for i := range seen {
		if n := seen[i].Load(); n != 1 {
			t.Errorf("index %d visited %d times", i, n)
		}
	}
	if len(p.all) != 3 {
		t.Errorf("%d resources opened, want 3", len(p.all))
	}
}

// BenchmarkTasks measures the queue's own cost per task (no work in it).
func BenchmarkTasks(b *testing.B) {
	p := &pool{}
	seeds := make([]int, 1000)
	for b.Loop() {
		first, _ := p.open()
		_ = Tasks(context.Background(), 2, first, p.open, seeds, func(task int, _ *res, push func(int)) {
			if task == 0 {
				push(1)
			}
		})
	}
}
