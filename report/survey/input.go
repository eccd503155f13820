package survey

import (
	"errors"
	"fmt"
	"math"
	"time"

	"canalstep/alignment"
	"canalstep/planner"
	"canalstep/planner/corridor"
	"canalstep/report/landxml"
	"canalstep/report/units"
)

// Input is one planned alignment and what the deliverables say about where
// it came from.
type Input struct {
	Corridor *corridor.Corridor // stations, route and coordinate frames
	Result   *planner.Result    // an Optimal plan of Corridor.Profile.Stations
	Units    units.System       // lengths and levels in the user's units
	Source   Source
}

// Source is the provenance the files' headers carry. Every field is
// optional, but the headers say less without them.
type Source struct {
	// DEM is the DEM's path or name as the user gave it.
	DEM string
	// DEMCRS is the DEM's CRS as WKT (terrain.Info.CRSWKT): the CRS of
	// plan.gpkg, which needs it (or DEMEPSG).
	DEMCRS string
	// DEMEPSG is the DEM's EPSG code, 0 when it has none.
	DEMEPSG int
	// ZUnits is the vertical unit the DEM's values were read in ("m",
	// "ft", "us-ft"); levels are converted from it to metres on reading.
	ZUnits string
	// WorkCRSWKT is the work CRS (Profile.WorkCRS) as WKT, for plan.xml
	// and the stake header: for a geographic DEM the local transverse
	// Mercator (terrain.CRSInfo(Profile.WorkCRS).WKT). Empty: the PROJ
	// definition is given instead.
	WorkCRSWKT string
	// Date is the inputs' date (never the clock): plan.xml's date and
	// plan.gpkg's last_change.
	Date time.Time
	// Version is canalstep's version, written in plan.xml.
	Version string
}

// ErrInput is wrapped by every error about an Input that cannot be turned
// into deliverables.
var ErrInput = errors.New("survey: unusable input")

// MaxStakes bounds the stake points of one alignment: seven a station and
// twelve a drop, so about 570,000 stations (5.7 km at 1 cm, or 5,700 km at
// 10 m). A finer spacing gives a stake list no surveyor sets out (common
// practice, no source).
const MaxStakes = 4_000_000

// check refuses an Input the deliverables cannot be made from.
func (in *Input) check() error {
	switch {
	case in == nil || in.Corridor == nil || in.Corridor.Profile == nil || in.Corridor.Route == nil:
		return fmt.Errorf("%w: no corridor, profile or route", ErrInput)
	case in.Result == nil || in.Result.Status != planner.Optimal:
		return fmt.Errorf("%w: alignment %q has no feasible plan", ErrInput, in.Corridor.Profile.Name)
	case len(in.Result.Stations) != len(in.Corridor.Profile.Stations) || len(in.Result.Stations) < 2:
		return fmt.Errorf("%w: the plan has %d stations, the profile %d", ErrInput, len(in.Result.Stations), len(in.Corridor.Profile.Stations))
	case len(in.Corridor.Route.Elements) == 0:
		return fmt.Errorf("%w: alignment %q has an empty route", ErrInput, in.Corridor.Profile.Name)
	case in.Corridor.Frames.WorkToLonLat == nil:
		return fmt.Errorf("%w: no transform from the work CRS to lon/lat", ErrInput)
	}
	if _, err := workUnit(in.unit()); err != nil {
		return err
	}
	for _, d := range in.Result.Drops {
		if d.Station < 0 || d.Station >= len(in.Result.Stations) {
			return fmt.Errorf("%w: a drop at station index %d of %d", ErrInput, d.Station, len(in.Result.Stations))
		}
	}
	if len(in.Result.Reaches) != len(in.Result.Drops)+1 {
		return fmt.Errorf("%w: %d reaches for %d drops", ErrInput, len(in.Result.Reaches), len(in.Result.Drops))
	}
	return nil
}

// unit is the length of one work CRS unit in metres.
func (in *Input) unit() float64 {
	if u := in.Corridor.Profile.WorkUnitToMetre; u > 0 {
		return u
	}
	return 1
}

// geographic reports whether the DEM is geographic: the work CRS is then
// the local transverse Mercator and differs from the DEM's.
func (in *Input) geographic() bool { return in.Corridor.Frames.WorkToDEM != nil }

// crsUnit is a work CRS's linear unit.
type crsUnit struct {
	name   string // for people
	suffix string // of the easting and northing columns
	xml    landxml.Unit
}

// workUnit names the linear unit of u metres. The US survey foot is
// 1200/3937 m and the international foot 0.3048 m exactly (NIST Handbook
// 44, Appendix C, from memory); GDAL gives the survey foot as
// 0.304800609601219, which matches to 1e-15.
func workUnit(u float64) (crsUnit, error) {
	switch {
	case math.Abs(u-1) < 1e-12:
		return crsUnit{"metre", "_m", landxml.Meter}, nil
	case math.Abs(u-1200.0/3937.0) < 1e-12:
		return crsUnit{"US survey foot", "_usft", landxml.USSurveyFoot}, nil
	case math.Abs(u-0.3048) < 1e-12:
		return crsUnit{"international foot", "_ft", landxml.Foot}, nil
	}
	return crsUnit{}, fmt.Errorf("%w: the work CRS's unit is %g m; stakes need a CRS in metres, US survey feet or international feet: reproject the DEM", ErrInput, u)
}

// transform converts xs, ys in place with t; nil is the identity.
func transform(t alignment.Transformer, xs, ys []float64) error {
	if t == nil {
		return nil
	}
	return t.Transform(xs, ys)
}
