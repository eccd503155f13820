package planner

import "math"

// DefaultGrades returns candidate grades (m/m) within [flattest, steepest]:
// the steepest first, then flatter ones spaced by a whole multiple of
// step/(5·spacing), at most count in all. The spacing keeps the bed lines of
// any two candidates in step with each other on the elevation grid at least
// every fifth station of that spacing, which is where a reach may change
// grade at a drop (see the package doc). flattest = 0 means no lower limit;
// the candidates then reach down to a fifth of the steepest.
func DefaultGrades(flattest, steepest, step, spacing float64, count int) []float64 {
	if count < 1 {
		count = 1
	}
	if flattest <= 0 {
		flattest = steepest / 5
	}
	out := []float64{steepest}
	unit := step / (5 * spacing)
	if count == 1 || steepest-flattest < unit {
		return out
	}
	k := math.Max(1, math.Floor((steepest-flattest)/float64(count-1)/unit+1e-9))
	for i := 1; i < count; i++ {
		g := steepest - float64(i)*k*unit
		if g < flattest*(1-1e-12) || g <= 0 {
			break
		}
		out = append(out, g)
	}
	return out
}
