// Package planner places drop structures on a canal's real ground profile at
// least cost, designs them, and sets the classic even-spacing method beside
// the result.
//
// # The design problem
//
// The input is a ground profile: stations at strictly increasing chainages
// (m) with their ground elevations (m), from [GroundProfile] or any other
// source, and the canal's design: discharge, section, roughness and
// velocity limits (see [Problem]).
//
//   - Reaches. Between drops the bed is a uniform grade per reach, taken from
//     a candidate set inside the velocity-limited range [flattest, steepest]
//     (hydraulics.VelocityLimitedSlopes). By default the set is
//     [DefaultGrades]: the steepest and up to four flatter grades.
//   - Drops sit at stations, with heights (bed falls) from an allowed set.
//     After a drop of height h the next drop is at least basin length(h) +
//     outlet transition + minimum reach downstream; the first drop is at
//     least the minimum reach from the start and the last leaves its basin,
//     transition and a minimum reach before the end. Basin lengths come from
//     hydraulics.DesignDrop (the longest over the candidate grades).
//   - Ends and controls. The start invert is given, or the ground minus the
//     normal depth at the steepest grade so the water surface starts at
//     ground level. Optional: an end invert, fixed inverts at chainages, a
//     minimum water level at chainages (normal depth of the reach's grade), a
//     maximum cut depth (ground − invert) and fill height (invert − ground)
//     at every station, both sides of a drop. No drop sits at a control
//     station.
//   - Cross-section and earthwork. [Template]: bed, inner slopes up to the
//     top of bank (normal depth + freeboard of the reach's grade), bank tops,
//     outer fill slope or cut slope, on ground level across the section. Cut
//     and fill areas are exact for that section ([Template.Areas]); volumes
//     between stations by average end areas or the prismoidal formula.
//   - Cost. [Costs]: cut, fill, waste of surplus usable cut and borrow of a
//     shortfall, priced per segment between two stations (lateral haul), plus
//     a fixed and a per-metre price for each drop.
//   - Objective. The least total cost. [Optimize] finds the global optimum
//     on the discretisation below, not a local improvement.
//
// # Discretisation
//
// A reach is fixed by its grade S and its bed line: bed(c) = λ − S·(c − c₀),
// where c₀ is the first chainage. The optimiser puts λ on a grid of step
// Settings.Step (default 1 cm) through the start invert:
// λ = z₀ + k·step. Grades are exact; inverts at stations are computed from
// the exact line and rounded only when written out (to the millimetre), so
// every reach's grade lies within [flattest, steepest] exactly, however flat
// it is and however the stations are spaced. (The alternative, a grid of
// bed levels at every station, would force the fall between two stations to
// a whole step: at 10 m stations and 1 cm steps that allows grades of 0.001,
// 0.002, … only, too coarse for earth canals.)
//
// Drop heights must be whole steps, so a drop keeps the bed line on the
// grid when the grade does not change. When the grade changes at a drop at
// chainage c, the new line is on the grid only where (S' − S)·(c − c₀) is a
// whole number of steps: the discretisation allows grade changes at those
// stations only. [DefaultGrades] spaces the default candidates by whole
// multiples of step/(5·spacing), so at the typical station spacing any two of
// them are in step at least every fifth station (every station for
// multiples of five). With one grade there is no restriction.
//
// # The optimiser
//
// Dynamic programming over the state (station, grade, k) with k in the band
// of bed lines that meet the station's cut, fill and control limits. Along a
// reach k is constant, so carrying a state to the next station costs one
// segment of earthwork; a drop at station j moves from (j, S, k) to
// (j, S', k') and, because the next drop cannot come before the spacing has
// passed, its candidates wait in a queue and join the free states at the
// first station where the next drop may sit (the forced stretch is priced by
// a running sum of each bed line's earthwork, so no counter state is
// needed). Work and memory grow linearly with the number of stations and
// with the band width (max cut + max fill)/step, times the number of grades
// and heights; the optimal path is recovered from one decision byte per
// state. Correctness is checked against exhaustive search on small cases and
// against GLPK's glpsol on the single-grade mixed-integer model that
// [WriteLP] writes.
//
// When no profile meets the constraints, [Optimize] returns an
// *[InfeasibleError] naming the binding constraints and the chainage range
// where they bind.
//
// # After optimisation
//
// Every drop is designed with hydraulics.DesignDrop and its outlet checked
// with hydraulics.CheckOutlet at Settings.CheckFlows (default 25, 50 and
// 100 % of the design flow). Water surfaces and velocities at stations come
// from hydraulics.StandardStep run upstream through each reach from its
// downstream control: normal depth where the drop crest is raised to hold
// it, the depth that matches the crest's critical energy where it cannot be
// (a drawdown), normal depth at the canal's end.
//
// # The even-spacing baseline
//
// [Baseline] is the classic hand method on the same ground, section,
// heights and costs: the average ground slope from the end elevations, the
// steepest candidate grade (on ground flatter than that, the steepest
// candidate not steeper than the ground), the largest allowed height,
// n = ceil((ground fall − grade·length)/height) drops at the stations nearest
// to equal divisions of the length. It is a profile of the same
// discretised problem, so whenever it meets every constraint the optimum
// costs no more; when it breaks a constraint its Violations say which.
//
// Optimize and [Compare] keep no state between calls: one alignment and one
// drop-height alternative is one pure job, and jobs may run in parallel.
//
// This is a preliminary design aid. Site survey, geotechnical and structural
// review and a licensed engineer's approval are needed before construction;
// local codes govern. Drops and hydraulic jumps are drowning hazards: fence
// them, sign them and keep the public out.
package planner
