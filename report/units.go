package report

import "canalstep/report/units"

// Units selects the unit system of what report prints; see package units,
// the one place for conversions, symbols and column suffixes.
type Units = units.System

// The unit systems.
const (
	SI = units.SI
	US = units.US
)

// Exact conversion factors, from package units.
const (
	FootM       = units.FootM
	CubicYardM3 = units.CubicYardM3
)
