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
// offsets, not a panic. The methods allocate nothing.
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

func (s *levelSections) Catch(i int, bed float64) (left, right Catch) {
	a, cut := s.t.levelCatch(s.g[i] - bed)
	right = Catch{Offset: a, Level: s.g[i], Cut: cut, Found: true}
	left = right
	left.Offset = -a
	return left, right
}
