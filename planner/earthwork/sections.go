package earthwork

// Catch is where the design section meets the ground on one side of the
// centre line.
type Catch struct {
	Offset float64 // m from the centre line, negative left (looking downstream)
	Level  float64 // ground = design elevation there, m
	Cut    bool    // met by the cut slope (true) or the fill slope (false)
	// Found is false when the slope did not meet the ground within the
	// sampled width; the ground is then taken level beyond the last sampled
	// point, and Offset and Level are where the slope meets that level
	// extension.
	Found bool
}

// Sections gives the cut and fill areas of ONE template at each station of
// a profile.
//
// On each side the outer slope starts at the bank's outer edge
// (Template.HalfWidthAtBank): the cut slope rising outward where the ground
// there is above the top of bank, the fill slope falling outward where it is
// below; the catch point is the first point outward where the slope meets
// the ground. Cut is the area where the ground lies above the design line
// between the two catch points, fill where it lies below; they are never
// netted within a section.
//
// As the bed rises the cut never grows and the fill never shrinks. The areas
// are continuous in the bed except where the catch point jumps: where the
// ground beyond the bank edge rises faster than the cut slope or falls
// faster than the fill slope (at the bed where the ground at the bank edge
// passes the top of bank), or where the ground touches the outer slope and
// leaves it again (the first crossing moves).
//
// The station index must lie in [0, Len()) (MidAreas: [1, Len())), as for a
// slice. The bed must be finite: a NaN bed gives a NaN fill and NaN catch
// offsets, not a panic. The methods allocate nothing (but see the package
// doc on a Cross value used by several goroutines at once).
type Sections interface {
	Len() int
	// Areas returns the cut and fill areas (m²) at station i with the bed
	// (invert) at elevation bed (m).
	Areas(i int, bed float64) (cut, fill float64)
	// MidAreas returns the areas (m²) of the mid-section of the segment from
	// station i−1 to i (prismoidal formula), with the beds at the two ends
	// bedPrev and bed (m).
	MidAreas(i int, bedPrev, bed float64) (cut, fill float64)
	// Catch returns the left and right catch points at station i with the
	// bed at bed (m).
	Catch(i int, bed float64) (left, right Catch)
}

// Runs is an optional interface of a Sections value: the areas at one
// station for a run of beds on an elevation grid, bed_x = base +
// float64(k0+x)·step for x in [0, len(cut)), in one call. Its values are
// exactly those of Areas and MidAreas at the same beds (bit for bit); it is
// only faster, because the station's tables are searched once for the whole
// run (the beds rise with x when step > 0). The optimiser asserts it once
// per template and falls back to Areas. cut and fill must have the same
// length; the methods allocate nothing.
type Runs interface {
	// AreasRun sets cut[x], fill[x] to Areas(i, bed_x).
	AreasRun(i int, base, step float64, k0 int, cut, fill []float64)
	// MidAreasRun sets cut[x], fill[x] to MidAreas(i, bed_x+rise, bed_x):
	// the mid-section of the segment from station i−1 to i for the bed line
	// that falls by rise (m) from station i−1 to i.
	MidAreasRun(i int, base, step, rise float64, k0 int, cut, fill []float64)
}

// Level takes the ground as level across the section at each station's
// centre-line ground (m): the areas are Template.Areas at depth
// ground[i] − bed, and the mid-section of a segment is the section at the
// average of the two end depths (reference sheet §6.2, "averaged
// dimensions"). On level ground a catch point is always found. Level copies
// ground; the template and the ground should be valid (Template.Validate,
// finite levels): Level itself does not check them.
func Level(t Template, ground []float64) Sections {
	return &levelSections{t: t, g: append([]float64(nil), ground...)}
}

// levelSections is Level's Sections.
type levelSections struct {
	t Template
	g []float64 // centre-line ground, m
}

var _ Sections = (*levelSections)(nil)

func (s *levelSections) Len() int { return len(s.g) }

func (s *levelSections) Areas(i int, bed float64) (cut, fill float64) {
	return s.t.Areas(s.g[i] - bed)
}

func (s *levelSections) MidAreas(i int, bedPrev, bed float64) (cut, fill float64) {
	return s.t.Areas(((s.g[i-1] - bedPrev) + (s.g[i] - bed)) / 2)
}

var _ Runs = (*levelSections)(nil)

func (s *levelSections) AreasRun(i int, base, step float64, k0 int, cut, fill []float64) {
	s.run(i, base, step, 0, false, k0, cut, fill)
}

func (s *levelSections) MidAreasRun(i int, base, step, rise float64, k0 int, cut, fill []float64) {
	s.run(i, base, step, rise, true, k0, cut, fill)
}

// run sets cut[x], fill[x] to the areas at station i (mid false) or of the
// mid-section before it (mid true) for bed_x = base + float64(k0+x)·step,
// with the depths formed exactly as Areas and MidAreas form them.
func (s *levelSections) run(i int, base, step, rise float64, mid bool, k0 int, cut, fill []float64) {
	fill = fill[:len(cut)]
	t := &s.t
	h := t.BankHeight
	g1, g0 := s.g[i], 0.0
	if mid {
		g0 = s.g[i-1]
	}
	for x := range cut {
		bed := base + float64(k0+x)*step
		d := g1 - bed
		if mid {
			d = ((g0 - (bed + rise)) + d) / 2
		}
		switch {
		case d > h:
			cut[x], fill[x] = t.deepCut(d), 0
		case d > 0:
			cut[x], fill[x] = t.shallowCut(d), t.shallowFill(d)
		default:
			cut[x], fill[x] = 0, t.highFill(d)
		}
	}
}

func (s *levelSections) Catch(i int, bed float64) (left, right Catch) {
	a, cut := s.t.levelCatch(s.g[i] - bed)
	right = Catch{Offset: a, Level: s.g[i], Cut: cut, Found: true}
	left = right
	left.Offset = -a
	return left, right
}
