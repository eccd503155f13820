// Package earthwork computes the cut and fill of a canal template against
// the ground and prices it.
//
// One [Template] (bed, inner slopes, banks, outer slopes) is set against the
// ground at each station of a profile through the [Sections] interface: its
// Areas method gives the cut and fill areas at a station for a bed
// elevation, MidAreas those of the mid-section between two stations (for the
// prismoidal formula) and Catch the catch points where the outer slopes meet
// the ground. Two implementations exist:
//
//   - [Level] takes the ground as level across the section at each station's
//     centre-line elevation and uses closed-form areas.
//   - [Cross] uses ground cross-sections (offsets and levels across the line,
//     as sampled from a DEM) and integrates the irregular ground exactly.
//
// [SegmentVolumes] turns the areas of two stations into volumes by the
// average-end-area or the prismoidal formula, and [Costs.Earthwork] is the
// one formula that prices the cut and fill of a segment.
//
// Lengths are metres, areas square metres, volumes cubic metres, slopes
// horizontal per unit vertical (H:V). Offsets across the line are negative
// to the left looking downstream. The methods follow the reference sheet §6
// (template against ground, exact integration of piecewise-linear sections,
// volumes between sections), whose route-surveying sources are cited there.
//
// Both also implement [Runs]: the areas of a whole run of beds on an
// elevation grid at one station in one call, the same numbers as Areas and
// MidAreas bit for bit, for the optimiser.
//
// The methods take no locks and a Sections value may be shared by
// goroutines once built. They allocate nothing, except that a Cross value
// used by several goroutines at once gives each concurrent call beyond
// the first its own scratch space.
package earthwork
