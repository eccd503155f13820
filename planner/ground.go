package planner

import (
	"errors"
	"fmt"
	"math"

	"canalstep/alignment"
)

// Ground gives ground elevations (m) at points in the DEM's CRS. It writes
// into out the elevation at each (xs[k], ys[k]); a point without data gets
// NaN and may make Sample return an error after it sampled the rest.
// *terrain.DEM satisfies it.
type Ground interface {
	Sample(xs, ys, out []float64) error
}

// GroundProfile samples g at the stations and returns their chainages (m)
// and ground elevations (m), ready for a Problem. Stations without ground
// data are named by chainage in the error.
func GroundProfile(g Ground, stations []alignment.Station) (chainage, ground []float64, err error) {
	n := len(stations)
	xs, ys := make([]float64, n), make([]float64, n)
	chainage, ground = make([]float64, n), make([]float64, n)
	for i, s := range stations {
		xs[i], ys[i], chainage[i] = s.X, s.Y, s.Chainage
	}
	serr := g.Sample(xs, ys, ground)
	var bad []int
	for i, z := range ground {
		if math.IsNaN(z) || math.IsInf(z, 0) {
			bad = append(bad, i)
		}
	}
	if len(bad) > 0 {
		e := fmt.Errorf("no ground elevation at %s", alignment.Ranges(stations, bad, false))
		if serr != nil {
			e = errors.Join(e, serr)
		}
		return nil, nil, e
	}
	if serr != nil {
		return nil, nil, fmt.Errorf("sample ground: %w", serr)
	}
	return chainage, ground, nil
}
