package runner

import (
	"fmt"
	"io"
	"sync"
	"time"

	"github.com/schollz/progressbar/v3"
)

// Display says how a Progress shows itself.
type Display int

const (
	// Off shows nothing.
	Off Display = iota
	// Bar draws a progress bar on a terminal: jobs done of all, rate and
	// time left, redrawn in place.
	Bar
	// Lines prints a plain line every Every (a CI log, a file), and one at
	// the end.
	Lines
)

// Every is how often a Lines display prints.
const Every = 5 * time.Second

// Progress reports jobs done of a known total on a writer meant for people
// (stderr). It shows times (elapsed, left, rate), so it must never write
// into an output file that has to be reproducible. It is safe for
// concurrent use.
type Progress struct {
	mu      sync.Mutex
	w       io.Writer
	what    string // "jobs"
	total   int
	done    int
	start   time.Time
	bar     *progressbar.ProgressBar
	stop    chan struct{}
	stopped sync.WaitGroup
	ended   bool
}

// NewProgress starts reporting total jobs (named what, plural) on w.
func NewProgress(w io.Writer, total int, what string, d Display) *Progress {
	p := &Progress{w: w, what: what, total: total, start: time.Now()}
	switch {
	case d == Bar && total > 0:
		p.bar = progressbar.NewOptions(total,
			progressbar.OptionSetWriter(w),
			progressbar.OptionSetDescription(what),
			progressbar.OptionShowCount(),
			progressbar.OptionShowIts(),
			progressbar.OptionSetItsString(what),
			progressbar.OptionSetPredictTime(true),
			progressbar.OptionThrottle(100*time.Millisecond),
			progressbar.OptionFullWidth(),
			progressbar.OptionSetRenderBlankState(true),
			progressbar.OptionOnCompletion(func() { fmt.Fprintln(w) }),
		)
	case d == Lines && total > 0:
		p.stop = make(chan struct{})
		p.stopped.Add(1)
		go p.lines()
	default:
		p.w = nil
	}
	return p
}

// lines prints the plain progress line every Every until Finish.
func (p *Progress) lines() {
	defer p.stopped.Done()
	t := time.NewTicker(Every)
	defer t.Stop()
	for {
		select {
		case <-p.stop:
			return
		case <-t.C:
			p.mu.Lock()
			fmt.Fprintln(p.w, p.line(time.Since(p.start)))
			p.mu.Unlock()
		}
	}
}

// line words the state after elapsed: "12 of 180 jobs done, 2.4 jobs/s,
// about 1m10s left".
func (p *Progress) line(elapsed time.Duration) string {
	s := fmt.Sprintf("%d of %d %s done", p.done, p.total, p.what)
	if p.done == 0 || elapsed <= 0 {
		return s
	}
	rate := float64(p.done) / elapsed.Seconds()
	s += fmt.Sprintf(", %.2f %s/s", rate, p.what)
	if left := p.total - p.done; left > 0 {
		s += fmt.Sprintf(", about %s left", (time.Duration(float64(left) / rate * float64(time.Second))).Round(time.Second))
	}
	return s
}

// Add counts n more jobs done.
func (p *Progress) Add(n int) {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.done += n
	if p.bar != nil && !p.ended {
		_ = p.bar.Add(n)
	}
}

// Finish ends the display with a last line (Lines) or the full bar (Bar)
// and returns how long since the start. Later calls do nothing more.
func (p *Progress) Finish() time.Duration {
	elapsed := time.Since(p.start)
	if p.stop != nil {
		close(p.stop)
		p.stopped.Wait()
		p.stop = nil
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.ended || p.w == nil {
		p.ended = true
		return elapsed
	}
	p.ended = true
	if p.bar != nil {
		if !p.bar.IsFinished() {
			_ = p.bar.Exit() // interrupted: leave the bar where it stopped
			fmt.Fprintln(p.w)
		}
		return elapsed
	}
	fmt.Fprintf(p.w, "%s in %s\n", p.line(elapsed), elapsed.Round(10*time.Millisecond))
	return elapsed
}
