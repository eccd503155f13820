package report

// Units selects the unit system of what report prints: SI (m, m³/s) or US
// customary (ft, cfs). Values inside canalstep are always SI; report
// converts at the edge only.
type Units int

const (
	SI Units = iota // metres, cubic metres per second
	US              // feet, cubic feet per second
)

// FootM is the international foot in metres (exact by definition).
const FootM = 0.3048

// Length converts a length in metres to the output unit.
func (u Units) Length(m float64) float64 {
	if u == US {
		return m / FootM
	}
	return m
}

// LengthUnit is the symbol of the output length unit.
func (u Units) LengthUnit() string {
	if u == US {
		return "ft"
	}
	return "m"
}

// Area converts an area in square metres to the output unit.
func (u Units) Area(m2 float64) float64 {
	if u == US {
		return m2 / (FootM * FootM)
	}
	return m2
}

// CubicYardM3 is one cubic yard in cubic metres (exact: 0.9144³).
const CubicYardM3 = 0.764554857984

// Volume converts a volume in cubic metres to the output unit: cubic yards
// in US units, the unit US earthwork is measured and priced in.
func (u Units) Volume(m3 float64) float64 {
	if u == US {
		return m3 / CubicYardM3
	}
	return m3
}

// VolumeUnit is the symbol of the output volume unit.
func (u Units) VolumeUnit() string {
	if u == US {
		return "yd³"
	}
	return "m³"
}
