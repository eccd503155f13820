package earthwork

// VolumeMethod chooses how volumes between two stations are computed.
type VolumeMethod int

const (
	// AverageEndArea is V = L·(A1 + A2)/2 (reference sheet §6.2).
	AverageEndArea VolumeMethod = iota
	// Prismoidal is V = L·(A1 + 4·Am + A2)/6 with Am the area of the
	// mid-section (Sections.MidAreas; reference sheet §6.2); exact when the
	// area varies quadratically along the segment.
	Prismoidal
)

// String returns "average_end_area" or "prismoidal".
func (m VolumeMethod) String() string {
	if m == Prismoidal {
		return "prismoidal"
	}
	return "average_end_area"
}

// AverageEndVolume returns L·(a1 + a2)/2 in m³ for end areas a1, a2 (m²)
// l metres apart.
func AverageEndVolume(l, a1, a2 float64) float64 { return l * (a1 + a2) / 2 }

// PrismoidalVolume returns L·(a1 + 4·am + a2)/6 in m³ for end areas a1, a2
// and mid-section area am (m²) l metres apart.
func PrismoidalVolume(l, a1, am, a2 float64) float64 { return l * (a1 + 4*am + a2) / 6 }

// SegmentVolumes returns the cut and fill volumes (m³) of the segment of
// length l (m) from station i−1 to station i of s, with the bed at bedPrev
// (m, the downstream side of station i−1) and at bed (m, the upstream side
// of station i), by method m. It needs 1 ≤ i < s.Len().
func SegmentVolumes(s Sections, m VolumeMethod, i int, l, bedPrev, bed float64) (cut, fill float64) {
	c1, f1 := s.Areas(i-1, bedPrev)
	c2, f2 := s.Areas(i, bed)
	if m == Prismoidal {
		cm, fm := s.MidAreas(i, bedPrev, bed)
		return PrismoidalVolume(l, c1, cm, c2), PrismoidalVolume(l, f1, fm, f2)
	}
	return AverageEndVolume(l, c1, c2), AverageEndVolume(l, f1, f2)
}
