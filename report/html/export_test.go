package html

import (
	"canalstep/planner"
	"canalstep/planner/earthwork"
)

// SectionAreas returns the areas (m²) of the cut and fill regions the
// cross-section figure of station s shades, by the shoelace formula.
func SectionAreas(s *planner.StationResult, t earthwork.Template) (cut, fill float64) {
	x := newXSSection(s, t)
	for _, p := range x.cut {
		cut += polygonArea(p)
	}
	for _, p := range x.fill {
		fill += polygonArea(p)
	}
	return cut, fill
}

// PlaceLabels is placeLabels, for tests.
var PlaceLabels = placeLabels

// MassOrdinates is massOrdinates, for tests.
var MassOrdinates = massOrdinates

// GroupDropWarnings returns the texts of the drop warning groups and the
// drops (indices) of each.
func GroupDropWarnings(drops []planner.DropResult) (texts []string, members [][]int) {
	for _, g := range groupDropWarnings(drops) {
		texts, members = append(texts, g.text), append(members, g.drops)
	}
	return texts, members
}
