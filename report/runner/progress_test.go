package runner

import (
	"bytes"
	"strings"
	"testing"
	"time"
)

// TestProgressLine: the plain line's wording, its rate and time left
// (12 of 180 jobs in 5 s: 2.4 jobs/s, 168 jobs left take 70 s).
func TestProgressLine(t *testing.T) {
	p := &Progress{what: "jobs", total: 180, done: 12}
	if got, want := p.line(5*time.Second), "12 of 180 jobs done, 2.40 jobs/s, about 1m10s left"; got != want {
		t.Errorf("line %q, want %q", got, want)
	}
	p.done = 0
	if got, want := p.line(time.Second), "0 of 180 jobs done"; got != want {
		t.Errorf("line %q, want %q", got, want)
	}
}

// TestProgressDisplays: Off writes nothing; Lines writes its last line at
// Finish; Bar draws the count; Finish twice is harmless.
func TestProgressDisplays(t *testing.T) {
	var b bytes.Buffer
	p := NewProgress(&b, 3, "jobs", Off)
	p.Add(3)
	p.Finish()
	if b.Len() != 0 {
		t.Errorf("Off wrote %q", b.String())
	}

	p = NewProgress(&b, 3, "jobs", Lines)
	p.Add(2)
	p.Add(1)
	p.Finish()
	p.Finish()
	if out := b.String(); !strings.HasPrefix(out, "3 of 3 jobs done, ") || strings.Count(out, "\n") != 1 {
		t.Errorf("Lines wrote %q", out)
	}

	b.Reset()
	p = NewProgress(&b, 4, "jobs", Bar)
	for range 4 {
		p.Add(1)
	}
	p.Finish()
	if out := b.String(); !strings.Contains(out, "4/4") || !strings.Contains(out, "jobs") {
		t.Errorf("Bar wrote %q", out)
	}

	b.Reset()
	p = NewProgress(&b, 4, "jobs", Bar)
	p.Add(1)
	p.Finish() // interrupted at 1 of 4
	if out := b.String(); !strings.HasSuffix(out, "\n") {
		t.Errorf("interrupted bar does not end its line: %q", out)
	}
}
