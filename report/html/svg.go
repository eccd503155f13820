package html

import (
	"html/template"
	"math"
	"strconv"

	"canalstep/report/textsafe"
)

// svg builds an inline SVG element. Coordinates are user units of the
// viewBox (CSS pixels at full width), written to 0.1; styles come from the
// page's classes. Text goes through textsafe.XMLText.
type svg struct{ b []byte }

func newSVG(w, h float64, label string) *svg {
	s := &svg{b: make([]byte, 0, 16<<10)}
	s.raw(`<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 `)
	s.num(w).raw(" ").num(h).raw(`" role="img" aria-label="`).esc(label).raw(`">`)
	return s
}

// html closes the element and returns it for the template.
func (s *svg) html() template.HTML {
	s.raw("</svg>")
	return template.HTML(s.b) // built here: numbers and escaped text only
}

func (s *svg) raw(t string) *svg { s.b = append(s.b, t...); return s }

func (s *svg) esc(t string) *svg { s.b = textsafe.AppendXMLText(s.b, t); return s }

// num writes x to 0.1, without a trailing ".0" and without "-0".
func (s *svg) num(x float64) *svg {
	r := math.Round(x*10) / 10
	if r == 0 {
		r = 0
	}
	s.b = strconv.AppendFloat(s.b, r, 'f', -1, 64)
	return s
}

// pt is a point in SVG coordinates.
type pt struct{ x, y float64 }

// path writes a path through the points with class c; NaN points break
// the line.
func (s *svg) path(c string, pts []pt) {
	s.pathD(c, "", pts)
}

// pathD is path with an extra attribute string (such as a clip-path).
func (s *svg) pathD(c, attr string, pts []pt) {
	started := false
	open := true
	for _, p := range pts {
		if math.IsNaN(p.x) || math.IsNaN(p.y) {
			open = true
			continue
		}
		if !started {
			s.raw(`<path class="`).raw(c).raw(`"`)
			if attr != "" {
				s.raw(" ").raw(attr)
			}
			s.raw(` d="`)
			started = true
		} else if !open {
			s.raw(" ")
		}
		if open {
			s.raw("M")
			open = false
		}
		s.num(p.x).raw(",").num(p.y)
	}
	if started {
		s.raw(`"/>`)
	}
}

// polygon writes a closed polygon with class c.
func (s *svg) polygon(c string, pts []pt) {
	s.raw(`<polygon class="`).raw(c).raw(`" points="`)
	for i, p := range pts {
		if i > 0 {
			s.raw(" ")
		}
		s.num(p.x).raw(",").num(p.y)
	}
	s.raw(`"/>`)
}

// line writes a straight line with class c.
func (s *svg) line(c string, x1, y1, x2, y2 float64) {
	s.raw(`<line class="`).raw(c).raw(`" x1="`).num(x1).raw(`" y1="`).num(y1).raw(`" x2="`).num(x2).raw(`" y2="`).num(y2).raw(`"/>`)
}

// rect writes a rectangle with class c.
func (s *svg) rect(c string, x, y, w, h float64) {
	s.raw(`<rect class="`).raw(c).raw(`" x="`).num(x).raw(`" y="`).num(y).raw(`" width="`).num(w).raw(`" height="`).num(h).raw(`"/>`)
}

// circle writes a small circle with class c.
func (s *svg) circle(c string, x, y, r float64) {
	s.raw(`<circle class="`).raw(c).raw(`" cx="`).num(x).raw(`" cy="`).num(y).raw(`" r="`).num(r).raw(`"/>`)
}

// text writes t at (x, y) with class c and anchor ("start", "middle",
// "end").
func (s *svg) text(c, anchor string, x, y float64, t string) {
	s.raw(`<text class="`).raw(c).raw(`" x="`).num(x).raw(`" y="`).num(y).raw(`"`)
	if anchor != "" && anchor != "start" {
		s.raw(` text-anchor="`).raw(anchor).raw(`"`)
	}
	s.raw(">").esc(t).raw("</text>")
}

// vtext writes t rotated to read upwards, its baseline through (x, y).
func (s *svg) vtext(c string, x, y float64, t string) {
	s.raw(`<text class="`).raw(c).raw(`" transform="translate(`).num(x).raw(",").num(y).raw(`) rotate(-90)">`).esc(t).raw("</text>")
}

// axis maps a value range onto a pixel range, linearly.
type axis struct{ v0, p0, scale float64 }

func (a axis) at(v float64) float64 { return a.p0 + (v-a.v0)*a.scale }

// niceStep returns a round step (1, 2, 2.5 or 5 × 10ⁿ) of at least raw.
func niceStep(raw float64) float64 {
	if !(raw > 0) || math.IsInf(raw, 0) {
		return 1
	}
	p := math.Pow(10, math.Floor(math.Log10(raw)))
	for _, m := range []float64{1, 2, 2.5, 5, 10} {
		if m*p >= raw*(1-1e-12) {
			return m * p
		}
	}
	return 10 * p
}

// niceBelow returns the largest round value (1, 1.5, 2, 2.5, 3, 4, 5, 6
// or 8 × 10ⁿ) not above raw: a vertical exaggeration.
func niceBelow(raw float64) float64 {
	if !(raw > 0) || math.IsInf(raw, 0) {
		return 1
	}
	p := math.Pow(10, math.Floor(math.Log10(raw)))
	best := p
	for _, m := range []float64{1, 1.5, 2, 2.5, 3, 4, 5, 6, 8} {
		if m*p <= raw*(1+1e-12) {
			best = m * p
		}
	}
	return best
}

// ticks returns the multiples of step within [lo, hi].
func ticks(lo, hi, step float64) []float64 {
	var out []float64
	if !(step > 0) || hi < lo {
		return out
	}
	for k := math.Ceil(lo/step - 1e-9); k*step <= hi+1e-9*step; k++ {
		out = append(out, k*step)
		if len(out) > 1000 {
			break
		}
	}
	return out
}

// trimNum prints a tick value: as few decimals as the step needs.
func trimNum(v, step float64) string {
	prec := 0
	for s := step; prec < 6 && math.Abs(s-math.Round(s)) > 1e-9*math.Max(1, math.Abs(s)); s *= 10 {
		prec++
	}
	return fixed(v, prec)
}
