package terrain

/*
#include <stdlib.h>
#include <ogr_srs_api.h>

static int canalstepTransform(OGRCoordinateTransformationH ct, int n, double *x, double *y, int *ok) {
	return OCTTransformEx(ct, n, x, y, NULL, ok);
}
*/
import "C"

import (
	"errors"
	"fmt"
	"math"
	"runtime"
	"strings"
	"sync"
)

// Transform converts coordinates between two CRSs through PROJ, in
// traditional GIS order: x is longitude or easting, y latitude or northing,
// whatever the CRS's official axis order. A Transform is safe for concurrent
// use: each call takes a PROJ handle of its own from a small pool (clones of
// one transformation, at most GOMAXPROCS and 8), so goroutines transform in
// parallel. Between two CRSs that describe the same coordinates the
// Transform is the identity and PROJ is not involved.
type Transform struct {
	src, dst string // as the caller gave them, for messages
	identity bool
	shared   bool // from SharedTransform: Close does nothing

	mu     sync.Mutex
	free   sync.Cond // signalled when a handle is put back
	closed bool
	proto  C.OGRCoordinateTransformationH // cloned and inverted, never used to transform
	idle   []*pjHandle
	made   int // handles cloned from proto
	limit  int // most handles made
	busy   int // handles out
}

// pjHandle is one clone of a transformation, used by one call at a time.
type pjHandle struct {
	ct C.OGRCoordinateTransformationH
}

// NewTransform prepares a transformation from CRS src to CRS dst, each
// anything GDAL accepts ("EPSG:4326", "OGC:CRS84", WKT, PROJ strings) except
// file names and URLs. OGC:CRS84 is taken as [LonLat], the same coordinates
// built faster. The caller closes it. For transforms used by many jobs of a
// run, [SharedTransform] builds each pair once per process.
func NewTransform(src, dst string) (*Transform, error) {
	s, err := parseSRS(transformCRS(src))
	if err != nil {
		return nil, renameCRS(err, transformCRS(src), src)
	}
	defer s.close()
	d, err := parseSRS(transformCRS(dst))
	if err != nil {
		return nil, renameCRS(err, transformCRS(dst), dst)
	}
	defer d.close()
	t := newTransformValue(src, dst)
	if s.same(d) {
		t.identity = true
		return t, nil
	}
	var ct C.OGRCoordinateTransformationH
	msg := quietly(func() { ct = C.OCTNewCoordinateTransformation(s.h, d.h) })
	if ct == nil {
		return nil, fmt.Errorf("no transformation from %q to %q: %s", shorten(src), shorten(dst), strings.TrimSpace(msg))
	}
	t.proto = ct
	return t, nil
}

// renameCRS words a parse error with the definition the caller gave when it
// was mapped to another (OGC:CRS84 to LonLat).
func renameCRS(err error, used, given string) error {
	if used == given {
		return err
	}
	return fmt.Errorf("%w (given as %q)", err, shorten(given))
}

func newTransformValue(src, dst string) *Transform {
	t := &Transform{src: src, dst: dst, limit: min(runtime.GOMAXPROCS(0), 8)}
	t.free.L = &t.mu
	return t
}

// Inverse returns the transformation from t's destination to its source,
// derived from t without asking PROJ to search for it again. The inverse of
// a shared Transform is the shared one for the reversed pair; otherwise the
// caller closes it.
func (t *Transform) Inverse() (*Transform, error) {
	if t.shared {
		return SharedTransform(t.dst, t.src)
	}
	return t.inverse()
}

func (t *Transform) inverse() (*Transform, error) {
	t.mu.Lock()
	defer t.mu.Unlock()
	if t.closed {
		return nil, errors.New("transform is closed")
	}
	inv := newTransformValue(t.dst, t.src)
	if t.identity {
		inv.identity = true
		return inv, nil
	}
	var ct C.OGRCoordinateTransformationH
	msg := quietly(func() { ct = C.OCTGetInverse(t.proto) })
	if ct == nil {
		return nil, fmt.Errorf("no inverse of the transformation from %q to %q: %s", shorten(t.src), shorten(t.dst), strings.TrimSpace(msg))
	}
	inv.proto = ct
	return inv, nil
}

// TransformError is returned by [Transform.Transform] when some points could
// not be transformed (for example a latitude beyond 90°). Their coordinates
// are set to NaN.
type TransformError struct {
	Indices []int  // positions of the failed points, increasing
	Total   int    // number of points asked for
	Reason  string // PROJ's last message, may be empty
}

func (e *TransformError) Error() string {
	s := fmt.Sprintf("%d of %d points could not be transformed (first: point %d)", len(e.Indices), e.Total, e.Indices[0])
	if e.Reason != "" {
		s += ": " + e.Reason
	}
	return s
}

// Transform converts the points in place. Points that fail become NaN and
// are reported by a *TransformError; the others are converted. Points that
// are not finite always fail. It panics if the slices differ in length.
// Batches of more than splitPoints points are cut into parts transformed in
// parallel, each through a handle of its own (at most the pool's limit).
func (t *Transform) Transform(xs, ys []float64) error {
	if len(xs) != len(ys) {
		panic(fmt.Sprintf("terrain: Transform with %d xs and %d ys", len(xs), len(ys)))
	}
	if len(xs) == 0 {
		return nil
	}
	if t.identity {
		t.mu.Lock()
		closed := t.closed
		t.mu.Unlock()
		if closed {
			return errors.New("transform is closed")
		}
		return failures(xs, ys, nil, "")
	}
	ok := make([]C.int, len(xs))
	parts := min(t.limit, (len(xs)+splitPoints-1)/splitPoints)
	if parts <= 1 {
		rc, reason, err := t.transformPart(xs, ys, ok)
		if err != nil {
			return err
		}
		return t.result(xs, ys, ok, rc != 0, reason)
	}
	// Parts of whole points, the last one taking the remainder.
	size := len(xs) / parts
	errs := make([]error, parts)
	reasons := make([]string, parts)
	allOK := make([]bool, parts)
	var wg sync.WaitGroup
	for p := range parts {
		lo, hi := p*size, (p+1)*size
		if p == parts-1 {
			hi = len(xs)
		}
		wg.Add(1)
		go func() {
			defer wg.Done()
			var rc C.int
			rc, reasons[p], errs[p] = t.transformPart(xs[lo:hi], ys[lo:hi], ok[lo:hi])
			allOK[p] = rc != 0
		}()
	}
	wg.Wait()
	if err := errors.Join(errs...); err != nil {
		return err
	}
	reason, all := "", true
	for p := range parts {
		if reason == "" {
			reason = reasons[p]
		}
		all = all && allOK[p]
	}
	return t.result(xs, ys, ok, all, reason)
}

// splitPoints is the size of the parts a large batch is cut into: big
// enough that starting a goroutine and taking a handle (a few
// microseconds) is small beside transforming them (about 0.3 µs a point).
const splitPoints = 8192

// transformPart transforms xs, ys in place through a handle of the pool,
// writing PROJ's per-point success flags into ok. rc is GDAL's return code
// (non-zero when every point succeeded), reason the last message GDAL
// raised.
func (t *Transform) transformPart(xs, ys []float64, ok []C.int) (rc C.int, reason string, err error) {
	h, err := t.take()
	if err != nil {
		return 0, "", err
	}
	defer t.put(h)
	reason = quietly(func() {
		rc = C.canalstepTransform(h.ct, C.int(len(xs)), (*C.double)(&xs[0]), (*C.double)(&ys[0]), &ok[0])
	})
	return rc, reason, nil
}

// result reports the points that failed, or an error when none did but
// GDAL still said the transformation failed (all false).
func (t *Transform) result(xs, ys []float64, ok []C.int, all bool, reason string) error {
	if err := failures(xs, ys, ok, reason); err != nil {
		return err
	}
	if !all {
		return fmt.Errorf("transform %q to %q: %s", shorten(t.src), shorten(t.dst), reason)
	}
	return nil
}

// failures sets to NaN the points that PROJ marked as failed (ok[i] == 0,
// when ok is not nil) or that are not finite, and reports them.
func failures(xs, ys []float64, ok []C.int, reason string) error {
	var failed []int
	for i := range xs {
		if (ok != nil && ok[i] == 0) || math.IsInf(xs[i], 0) || math.IsInf(ys[i], 0) || math.IsNaN(xs[i]) || math.IsNaN(ys[i]) {
			xs[i], ys[i] = math.NaN(), math.NaN()
			failed = append(failed, i)
		}
	}
	if failed != nil {
		return &TransformError{Indices: failed, Total: len(xs), Reason: reason}
	}
	return nil
}

// take returns an idle handle, cloning a new one while fewer than limit
// exist, else waiting for one.
func (t *Transform) take() (*pjHandle, error) {
	t.mu.Lock()
	defer t.mu.Unlock()
	for {
		if t.closed {
			return nil, errors.New("transform is closed")
		}
		if n := len(t.idle); n > 0 {
			h := t.idle[n-1]
			t.idle = t.idle[:n-1]
			t.busy++
			return h, nil
		}
		if t.made < t.limit {
			var ct C.OGRCoordinateTransformationH
			msg := quietly(func() { ct = C.OCTClone(t.proto) })
			if ct == nil {
				return nil, fmt.Errorf("transform %q to %q: cannot copy the transformation: %s", shorten(t.src), shorten(t.dst), msg)
			}
			t.made++
			t.busy++
			return &pjHandle{ct: ct}, nil
		}
		t.free.Wait()
	}
}

func (t *Transform) put(h *pjHandle) {
	t.mu.Lock()
	t.idle = append(t.idle, h)
	t.busy--
	t.mu.Unlock()
	t.free.Broadcast()
}

// Close releases the transformation, once the calls in progress are done.
// It does nothing for a Transform from [SharedTransform], which lives as
// long as the process.
func (t *Transform) Close() error {
	if t.shared {
		return nil
	}
	t.mu.Lock()
	defer t.mu.Unlock()
	if t.closed {
		return nil
	}
	t.closed = true
	for t.busy > 0 {
		t.free.Wait()
	}
	for _, h := range t.idle {
		C.OCTDestroyCoordinateTransformation(h.ct)
	}
	t.idle = nil
	if t.proto != nil {
		C.OCTDestroyCoordinateTransformation(t.proto)
		t.proto = nil
	}
	return nil
}

// pair is a (source, destination) pair of CRS definitions as transforms
// use them.
type pair struct{ src, dst string }

// shared holds the process's shared transforms.
var shared struct {
	sync.Mutex
	m map[pair]*sharedEntry
}

// sharedEntry is one shared transform; ready is closed once t or err is set.
type sharedEntry struct {
	ready chan struct{}
	t     *Transform
	err   error
}

// SharedTransform returns the process's one Transform from src to dst,
// building it on first use; later calls, from any goroutine, get the same
// one. Its Close does nothing. A pair whose reverse is already built is
// derived from it (PROJ's inverse of the same operation) rather than
// searched for again. Definitions are as for [NewTransform]; OGC:CRS84 and
// LonLat name the same pair. Failures are kept too, so a bad definition
// fails fast the second time. Up to 256 pairs are kept; past that, each call
// returns a new Transform that the caller should Close as usual.
func SharedTransform(src, dst string) (*Transform, error) {
	k := pair{transformCRS(src), transformCRS(dst)}
	shared.Lock()
	if shared.m == nil {
		shared.m = map[pair]*sharedEntry{}
	}
	e, ok := shared.m[k]
	if ok {
		shared.Unlock()
		<-e.ready
		return e.t, e.err
	}
	if len(shared.m) >= maxCached {
		shared.Unlock()
		return NewTransform(src, dst)
	}
	e = &sharedEntry{ready: make(chan struct{})}
	shared.m[k] = e
	rev := shared.m[pair{k.dst, k.src}]
	shared.Unlock()

	defer close(e.ready)
	if rev != nil {
		select {
		case <-rev.ready:
			if rev.err == nil {
				e.t, e.err = rev.t.inverse()
			}
		default: // being built: build this one too rather than wait
		}
	}
	if e.t == nil {
		e.t, e.err = NewTransform(src, dst)
	}
	if e.t != nil {
		e.t.shared = true
	}
	return e.t, e.err
}
