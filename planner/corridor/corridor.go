// Package corridor turns an alignment and a DEM into the stationed ground
// profile the planner works on: stations along the route, the centre-line
// ground and, when asked, the ground across the line at every station (DEM
// cross-sections). It reads the DEM and the coordinate reference systems
// through two small interfaces, which the terrain package satisfies, so its
// tests need no GDAL.
//
// Chainage is measured as grid distance in the DEM's CRS when it is
// projected, as surveyors' coordinates are; on a geographic DEM it is
// measured in a transverse Mercator projection centred on the alignment
// (scale 1 on its central meridian), whose grid distances match the
// ellipsoid's to a few parts per million over a canal's extent, and the DEM
// is sampled back in lon/lat.
package corridor

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"github.com/paulmach/orb"

	"canalstep/alignment"
)

// Ground samples ground elevations (m) at points in the DEM's CRS: it
// writes into out the elevation at each (xs[k], ys[k]), NaN where there is
// none (outside the raster, nodata, an implausible value). *terrain.DEM
// satisfies it.
type Ground interface {
	Sample(xs, ys, out []float64) error
}

// CRS builds coordinate transforms and describes coordinate reference
// systems given as definitions PROJ reads (EPSG:n, WKT, PROJ strings).
type CRS interface {
	// Transformer returns a transform from src to dst, safe for concurrent
	// use; the caller does not close it.
	Transformer(src, dst string) (alignment.Transformer, error)
	// Describe says whether def is geographic and, when projected, the
	// length of its linear unit in metres.
	Describe(def string) (geographic bool, unitToMetre float64, err error)
}

// LonLat is WGS 84 longitude and latitude in degrees, x = longitude: the
// CRS of RFC 7946 GeoJSON.
const LonLat = "OGC:CRS84"

// DEM describes the raster a corridor samples.
type DEM struct {
	CRS         string     // the DEM's CRS definition (WKT)
	Geographic  bool       // lon/lat in degrees
	UnitToMetre float64    // metres per CRS unit when projected
	CellSize    float64    // cell width in metres (approximate for geographic DEMs)
	Extent      [4]float64 // min x, min y, max x, max y of the raster in its CRS
}

// Options control the stationing and sampling of one alignment.
type Options struct {
	Spacing float64 // m between regular stations
	Start   float64 // chainage of the first point, m
	US      bool    // station labels in 100-ft stations (12+50.00) rather than km+m
	// AlignmentCRS overrides the file's CRS for the alignment's coordinates;
	// empty means the file's legacy crs member, else WGS 84 lon/lat.
	AlignmentCRS string

	// CrossSections asks for the ground across the line at every station,
	// sampled every CrossStep metres out to HalfWidth metres each side.
	CrossSections bool
	HalfWidth     float64 // m
	CrossStep     float64 // m
	// Holds reports whether a sampled section is wide enough (holds both
	// catch points for every bed the plan may choose). Sections it rejects
	// are sampled once more, twice as wide; nil accepts every section.
	Holds func(offsets, levels []float64, ground float64) bool

	// CurveRadius fits circular curves of this radius (m) at the vertices
	// (alignment.FitCurves); 0 keeps the alignment a polyline.
	CurveRadius float64

	// Offtakes are the offtakes this alignment serves, snapped to their
	// nearest station; one farther than MaxOfftakeDistance metres from it
	// is refused.
	Offtakes           []alignment.Offtake
	MaxOfftakeDistance float64
}

// Corridor is one alignment stationed and sampled.
type Corridor struct {
	Profile  *alignment.Profile
	Frames   alignment.Frames // the profile's coordinate frames (work CRS → DEM, lon/lat)
	Route    *alignment.Route // the route in the work CRS, with its curve table
	Offtakes []Offtake
}

// Offtake is an offtake snapped to the profile.
type Offtake struct {
	Name     string
	Station  int     // index of the nearest station
	Chainage float64 // m
	Distance float64 // from the offtake point to that station, m
	Ground   float64 // ground at the offtake point, m
	Level    float64 // the command level: given, or the ground plus the margin, m
}

// ErrInput is wrapped by errors about alignments, options or CRSs that
// cannot be used as given: the user must change the input.
var ErrInput = errors.New("corridor: invalid input")

// Build stations alignment a, samples the DEM under it (and across it,
// with Options.CrossSections), snaps its offtakes and returns the stationed
// corridor. Errors name the alignment and, for ground problems, the
// chainage ranges.
func Build(a alignment.Alignment, dem DEM, g Ground, crs CRS, o Options) (*Corridor, error) {
	if !(o.Spacing > 0) || math.IsInf(o.Spacing, 0) {
		return nil, fmt.Errorf("%w: station spacing %g m must be a positive number", ErrInput, o.Spacing)
	}
	f, work, err := frames(dem, a, o.AlignmentCRS, crs)
	if err != nil {
		return nil, fmt.Errorf("alignment %q: %w", a.Name, err)
	}
	st, route, err := alignment.StationsWith(a, f, alignment.Options{Spacing: o.Spacing, Start: o.Start, CurveRadius: o.CurveRadius})
	if err != nil {
		return nil, fmt.Errorf("%w: %w", ErrInput, err)
	}
	for i := range st {
		st[i].Label = alignment.FormatStation(st[i].Chainage, o.US)
	}
	p := &alignment.Profile{Name: a.Name, Folder: alignment.SafeName(a.Name), Alignment: a, Stations: st,
		WorkCRS: work, WorkUnitToMetre: f.WorkUnitToMetre}
	if err := centreLine(p, dem, g, o.US); err != nil {
		return nil, err
	}
	if o.CrossSections {
		if err := crossSections(p, f, dem, g, o); err != nil {
			return nil, err
		}
	}
	c := &Corridor{Profile: p, Frames: f, Route: route}
	if c.Offtakes, err = snap(p, route, f, g, o); err != nil {
		return nil, err
	}
	return c, nil
}

// snap finds the point of the route nearest each offtake, the station
// nearest that point, and the offtake's command level.
func snap(p *alignment.Profile, route *alignment.Route, f alignment.Frames, g Ground, o Options) ([]Offtake, error) {
	if len(o.Offtakes) == 0 {
		return nil, nil
	}
	n := len(o.Offtakes)
	xs, ys := make([]float64, n), make([]float64, n)
	for i, t := range o.Offtakes {
		xs[i], ys[i] = t.X, t.Y
	}
	if f.ToWork != nil {
		if err := f.ToWork.Transform(xs, ys); err != nil {
			return nil, fmt.Errorf("%w: alignment %q: offtakes to the work CRS: %v", ErrInput, p.Name, err)
		}
	}
	out := make([]Offtake, n)
	dx, dy := append([]float64(nil), xs...), append([]float64(nil), ys...)
	if f.WorkToDEM != nil {
		if err := f.WorkToDEM.Transform(dx, dy); err != nil {
			return nil, fmt.Errorf("%w: alignment %q: offtakes to the DEM CRS: %v", ErrInput, p.Name, err)
		}
	}
	z := make([]float64, n)
	_ = g.Sample(dx, dy, z) // a missing ground matters only for a margin, checked below
	for i, t := range o.Offtakes {
		along, offset := route.Locate(xs[i], ys[i])
		d := math.Abs(offset)
		k := nearestChainage(p.Stations, p.Stations[0].Chainage+along)
		if k < 0 || !(d <= o.MaxOfftakeDistance) {
			return nil, fmt.Errorf("%w: offtake %q lies %.1f m from alignment %q, more than %.0f m; move it next to the canal or name the alignment it serves",
				ErrInput, t.Name, d, p.Name, o.MaxOfftakeDistance)
		}
		ot := Offtake{Name: t.Name, Station: k, Chainage: p.Stations[k].Chainage, Distance: d, Ground: z[i]}
		switch {
		case t.CommandLevel != nil:
			ot.Level = *t.CommandLevel
		case t.Margin != nil:
			if !finite(z[i]) {
				return nil, fmt.Errorf("%w: offtake %q has a margin but no ground under it in the DEM; give its command_level instead", ErrInput, t.Name)
			}
			ot.Level = z[i] + *t.Margin
		}
		out[i] = ot
	}
	return out, nil
}

// centreLine samples the ground at the stations.
func centreLine(p *alignment.Profile, dem DEM, g Ground, us bool) error {
	n := len(p.Stations)
	xs, ys, z := make([]float64, n), make([]float64, n), make([]float64, n)
	for i, s := range p.Stations {
		xs[i], ys[i] = s.X, s.Y
	}
	serr := g.Sample(xs, ys, z)
	var outside, nodata []int
	for i, v := range z {
		if !math.IsNaN(v) && !math.IsInf(v, 0) {
			p.Stations[i].Ground = v
			continue
		}
		if dem.inside(xs[i], ys[i]) {
			nodata = append(nodata, i)
		} else {
			outside = append(outside, i)
		}
	}
	switch {
	case len(outside) > 0:
		return fmt.Errorf("%w: alignment %q leaves the DEM at %s: extend the DEM or shorten the alignment",
			ErrInput, p.Name, alignment.Ranges(p.Stations, outside, us))
	case len(nodata) > 0:
		return fmt.Errorf("%w: alignment %q crosses DEM cells without valid data at %s: fill the gaps (e.g. gdal_fillnodata.py), check the DEM's nodata value and vertical unit, or move the alignment",
			ErrInput, p.Name, alignment.Ranges(p.Stations, nodata, us))
	case serr != nil:
		return fmt.Errorf("sample the DEM along alignment %q: %w", p.Name, serr)
	}
	return nil
}

func (d DEM) inside(x, y float64) bool {
	e := d.Extent
	return x >= e[0] && x <= e[2] && y >= e[1] && y <= e[3]
}

// frames builds the coordinate frames of one alignment and returns the
// work CRS definition.
func frames(dem DEM, a alignment.Alignment, crsFlag string, crs CRS) (alignment.Frames, string, error) {
	var f alignment.Frames
	in := crsFlag
	if in == "" {
		in = a.CRS
	}
	if in == "" {
		if !alignment.LooksGeographic(a.Line) {
			return f, "", fmt.Errorf("%w: coordinates are not WGS 84 lon/lat as RFC 7946 requires; give --alignment-crs EPSG:n for projected coordinates", ErrInput)
		}
		in = LonLat
	}
	if _, _, err := crs.Describe(in); err != nil {
		return f, "", fmt.Errorf("%w: alignment CRS: %v; give an EPSG code such as EPSG:32634", ErrInput, err)
	}
	work := dem.CRS
	f.WorkUnitToMetre = dem.UnitToMetre
	var err error
	if dem.Geographic {
		// Station in a transverse Mercator projection centred on the
		// alignment, sample back in lon/lat.
		toLL, err := crs.Transformer(in, LonLat)
		if err != nil {
			return f, "", err
		}
		ll := append(orb.LineString(nil), a.Line...)
		xs, ys := make([]float64, len(ll)), make([]float64, len(ll))
		for i, p := range ll {
			xs[i], ys[i] = p[0], p[1]
		}
		if err := toLL.Transform(xs, ys); err != nil {
			return f, "", fmt.Errorf("%w: locate the alignment in lon/lat: %v", ErrInput, err)
		}
		for i := range ll {
			ll[i] = orb.Point{xs[i], ys[i]}
		}
		def, ok := alignment.LocalTransverseMercator(ll)
		if !ok {
			return f, "", fmt.Errorf("%w: cannot set up a local projection for the alignment; reproject the DEM to a projected CRS", ErrInput)
		}
		work, f.WorkUnitToMetre = def, 1
		if f.WorkToDEM, err = crs.Transformer(work, dem.CRS); err != nil {
			return f, "", err
		}
	} else if !(f.WorkUnitToMetre > 0) {
		return f, "", fmt.Errorf("%w: the DEM's CRS has no known linear unit; reproject the DEM to a metre or foot CRS", ErrInput)
	}
	if f.ToWork, err = crs.Transformer(in, work); err != nil {
		return f, "", err
	}
	if f.WorkToLonLat, err = crs.Transformer(work, LonLat); err != nil {
		return f, "", err
	}
	return f, work, nil
}

// crossSections samples the ground across the line at every station and
// widens, once, the sections that do not hold their catch points.
func crossSections(p *alignment.Profile, f alignment.Frames, dem DEM, g Ground, o Options) error {
	if !(o.HalfWidth > 0) || !(o.CrossStep > 0) || o.HalfWidth/o.CrossStep > 2000 {
		return fmt.Errorf("%w: cross-section half-width %g m and step %g m must be positive, at most 2000 steps", ErrInput, o.HalfWidth, o.CrossStep)
	}
	all := make([]int, len(p.Stations))
	for i := range all {
		all[i] = i
	}
	if err := sampleSections(p, f, g, all, o.HalfWidth, o.CrossStep); err != nil {
		return err
	}
	if o.Holds == nil {
		return nil
	}
	var narrow []int
	for i, s := range p.Stations {
		if !o.Holds(s.Cross.Offsets, s.Cross.Levels, s.Ground) {
			narrow = append(narrow, i)
		}
	}
	if len(narrow) == 0 {
		return nil
	}
	if err := sampleSections(p, f, g, narrow, 2*o.HalfWidth, o.CrossStep); err != nil {
		return err
	}
	for _, i := range narrow {
		p.Stations[i].Cross.Widened = true
	}
	return nil
}

// sampleSections samples the cross-sections of the stations idx, halfWidth
// metres each side every step metres. Points without ground at the ends of
// a section (beyond the DEM's edge, over nodata) shorten it to the run of
// valid points around the centre line, which always has ground.
func sampleSections(p *alignment.Profile, f alignment.Frames, g Ground, idx []int, halfWidth, step float64) error {
	m := int(math.Ceil(halfWidth/step - 1e-9))
	offsets := make([]float64, 2*m+1)
	for k := range offsets {
		offsets[k] = float64(k-m) * step
	}
	offsets[0], offsets[2*m] = -halfWidth, halfWidth
	per := len(offsets)
	xs, ys := make([]float64, len(idx)*per), make([]float64, len(idx)*per)
	for j, i := range idx {
		s := p.Stations[i]
		for k, off := range offsets {
			xs[j*per+k], ys[j*per+k] = s.CrossPoint(off, f.WorkUnitToMetre)
		}
	}
	if f.WorkToDEM != nil {
		if err := f.WorkToDEM.Transform(xs, ys); err != nil {
			return fmt.Errorf("alignment %q: cross-section points to the DEM CRS: %w", p.Name, err)
		}
	}
	z := make([]float64, len(xs))
	serr := g.Sample(xs, ys, z)
	for j, i := range idx {
		row := z[j*per : (j+1)*per]
		row[m] = p.Stations[i].Ground // the centre line is sampled at the station itself
		lo, hi := m, m
		for lo > 0 && finite(row[lo-1]) {
			lo--
		}
		for hi < per-1 && finite(row[hi+1]) {
			hi++
		}
		if lo == m || hi == m {
			return fmt.Errorf("%w: alignment %q: no ground beside the centre line at %s; the DEM ends or has no data there",
				ErrInput, p.Name, alignment.FormatStation(p.Stations[i].Chainage, false))
		}
		p.Stations[i].Cross = &alignment.CrossSection{
			Offsets: append([]float64(nil), offsets[lo:hi+1]...),
			Levels:  append([]float64(nil), row[lo:hi+1]...),
		}
	}
	if serr != nil && !anyNaN(z) {
		return fmt.Errorf("sample cross-sections along alignment %q: %w", p.Name, serr)
	}
	return nil
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// nearestChainage returns the index of the station nearest chainage ch (m),
// or −1 for a NaN chainage.
func nearestChainage(st []alignment.Station, ch float64) int {
	if math.IsNaN(ch) || len(st) == 0 {
		return -1
	}
	i := sort.Search(len(st), func(k int) bool { return st[k].Chainage >= ch })
	switch {
	case i == len(st):
		return i - 1
	case i > 0 && ch-st[i-1].Chainage < st[i].Chainage-ch:
		return i - 1
	}
	return i
}

func anyNaN(z []float64) bool {
	for _, v := range z {
		if !finite(v) {
			return true
		}
	}
	return false
}
