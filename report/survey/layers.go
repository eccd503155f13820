package survey

import (
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"

	"canalstep/alignment"
	"canalstep/planner"
	"canalstep/report/geojson"
	"canalstep/report/gpkg"
	"canalstep/report/layers"
	"canalstep/report/units"
)

// Frame is the CRS the layers' coordinates are given in.
type Frame int

// Frames of the layers.
const (
	// LonLat is WGS 84 longitude and latitude in degrees (plan.geojson).
	LonLat Frame = iota + 1
	// DEMCRS is the DEM's CRS (plan.gpkg): the work CRS for a projected
	// DEM, lon/lat on the DEM's datum for a geographic one.
	DEMCRS
)

// Layer names, in the order Layers returns them.
const (
	LayerCentreline = "centreline"
	LayerDrops      = "drops"
	LayerOfftakes   = "offtakes"
	LayerStakes     = "stakes"
	LayerFootprint  = "footprint"
)

// maxSagitta is the most (m) a chord of the centre line may stand off its
// arc in the layers: a centimetre, below what a GIS map shows (common
// practice, no source).
const maxSagitta = 0.01

// maxArcPoints bounds the points one arc of the centre line is drawn with.
const maxArcPoints = 10000

// column is one attribute of a layer: its name, quantity (for the unit
// suffix and symbol), type, decimals and description.
type column struct {
	name string
	q    units.Quantity
	typ  layers.Type
	dec  int
	doc  string
}

// fields names the columns in u's units: Length columns become chainage_m
// or chainage_ft; text, counts and ratios keep their name.
func fields(u units.System, cols []column) []layers.Field {
	out := make([]layers.Field, len(cols))
	for i, c := range cols {
		f := layers.Field{Name: c.name, Type: c.typ, Doc: c.doc, Decimals: c.dec}
		if c.typ == layers.Real && c.q != units.Ratio {
			f.Name, f.Unit = u.Column(c.name, c.q), u.Symbol(c.q)
		}
		out[i] = f
	}
	return out
}

func text(s string) layers.Value { return layers.Str(layers.Text(s)) }

var centrelineCols = []column{
	{"alignment", units.Ratio, layers.String, 0, "alignment name"},
	{"length", units.Length, layers.Real, 3, "length along the route"},
	{"start_chainage", units.Length, layers.Real, 3, "chainage of the first station"},
	{"end_chainage", units.Length, layers.Real, 3, "chainage of the last station"},
	{"flow", units.Flow, layers.Real, 3, "design discharge"},
	{"bed_width", units.Length, layers.Real, 3, "bed width"},
	{"side_slope", units.Ratio, layers.Real, 2, "inner side slope, horizontal per vertical"},
	{"roughness", units.Ratio, layers.Real, 4, "Manning n"},
	{"drops", units.Ratio, layers.Integer, 0, "number of drop structures"},
	{"curves", units.Ratio, layers.Integer, 0, "number of horizontal curves"},
	{"curve_radius", units.Length, layers.Real, 3, "radius of the horizontal curves, null for none"},
	{"start_invert", units.Length, layers.Real, 3, "bed level at the first station"},
	{"end_invert", units.Length, layers.Real, 3, "bed level at the last station"},
	{"cut_volume", units.Volume, layers.Real, 1, "cut volume"},
	{"fill_volume", units.Volume, layers.Real, 1, "fill volume"},
	{"earthwork_cost", units.Ratio, layers.Real, 2, "earthwork cost, in the currency of the unit costs"},
	{"drop_cost", units.Ratio, layers.Real, 2, "cost of the drops, in the currency of the unit costs"},
	{"total_cost", units.Ratio, layers.Real, 2, "total cost, in the currency of the unit costs"},
	{"command_share", units.Ratio, layers.Real, 4, "fraction of stations whose design water surface stands at or above the ground"},
	{"max_velocity", units.Velocity, layers.Real, 3, "highest mean velocity"},
}

var dropCols = []column{
	{"alignment", units.Ratio, layers.String, 0, "alignment name"},
	{"drop", units.Ratio, layers.Integer, 0, "drop number from upstream"},
	{"station", units.Ratio, layers.String, 0, "station label of the drop"},
	{"chainage", units.Length, layers.Real, 3, "chainage of the drop wall"},
	{"height", units.Length, layers.Real, 3, "bed fall"},
	{"upstream_invert", units.Length, layers.Real, 3, "bed level upstream"},
	{"downstream_invert", units.Length, layers.Real, 3, "bed level downstream"},
	{"crest_level", units.Length, layers.Real, 3, "crest level"},
	{"basin_floor", units.Length, layers.Real, 3, "stilling basin floor level"},
	{"basin_length", units.Length, layers.Real, 3, "stilling basin length from the drop wall"},
	{"basin_width", units.Length, layers.Real, 3, "stilling basin and crest width"},
	{"end_sill", units.Length, layers.Real, 3, "end sill height above the basin floor"},
	{"wall_height", units.Length, layers.Real, 3, "basin side-wall height above the floor"},
	{"transition_length", units.Length, layers.Real, 3, "outlet transition length"},
	{"jump_state", units.Ratio, layers.String, 0, "where the hydraulic jump stands at the design flow"},
	{"warnings", units.Ratio, layers.Integer, 0, "number of warnings about the drop"},
}

var offtakeCols = []column{
	{"alignment", units.Ratio, layers.String, 0, "alignment name"},
	{"name", units.Ratio, layers.String, 0, "offtake name"},
	{"station", units.Ratio, layers.String, 0, "label of the canal station nearest the offtake, where the point is drawn"},
	{"chainage", units.Length, layers.Real, 3, "chainage of that station"},
	{"distance", units.Length, layers.Real, 3, "distance from the offtake point to the centre line, null when unknown"},
	{"command_level", units.Length, layers.Real, 3, "lowest water level the offtake needs"},
	{"water_surface", units.Length, layers.Real, 3, "design water surface at the offtake"},
	{"margin", units.Length, layers.Real, 3, "water surface minus command level"},
}

var stakeCols = []column{
	{"point", units.Ratio, layers.String, 0, "point id"},
	{"kind", units.Ratio, layers.String, 0, "what the point marks"},
	{"drop", units.Ratio, layers.Integer, 0, "drop number of a structure point, 0 for a section point"},
	{"station", units.Ratio, layers.String, 0, "station label"},
	{"chainage", units.Length, layers.Real, 3, "chainage"},
	{"offset", units.Length, layers.Real, 3, "offset from the centre line, negative left looking downstream"},
	{"ground", units.Length, layers.Real, 3, "ground level (the DEM's vertical datum)"},
	{"design_level", units.Length, layers.Real, 3, "level of the design surface"},
	{"cut_fill", units.Length, layers.Real, 3, "ground minus design level: positive cut, negative fill"},
	{"slope_h_per_v", units.Ratio, layers.Real, 2, "horizontal per vertical of the face the point marks, null where none"},
	{"note", units.Ratio, layers.String, 0, "remark for the surveyor"},
}

var footprintCols = []column{
	{"alignment", units.Ratio, layers.String, 0, "alignment name"},
	{"area", units.Area, layers.Real, 1, "land take between the catch lines"},
	{"stations", units.Ratio, layers.Integer, 0, "stations whose catch points bound the area"},
	{"beyond_section", units.Ratio, layers.Integer, 0, "of them, stations with a catch point beyond the sampled cross-section"},
}

// Layers returns the plan's layers in frame f: the centre line (the route,
// its arcs drawn to within 1 cm) with the design figures, the drops (at
// the drop wall on the centre line), the offtakes (at their canal station),
// the stake points and the footprint (land take; no feature when fewer than
// two stations have catch points). Lengths and levels are in in.Units, the
// unit in each field's name.
func Layers(in *Input, stakes []Stake, f Frame) ([]layers.Layer, error) {
	if err := in.check(); err != nil {
		return nil, err
	}
	if f != LonLat && f != DEMCRS {
		return nil, fmt.Errorf("%w: unknown frame %d", ErrInput, int(f))
	}
	fp, err := NewFootprint(in)
	if err != nil {
		return nil, err
	}
	r, p, u := in.Result, in.Corridor.Profile, in.Units
	name := text(p.Name)
	L := func(v float64) layers.Value { return layers.Num(u.Length(v)) }

	// Every position in the work CRS, transformed in one call.
	var xs, ys []float64
	add := func(cs []layers.Coord) int {
		at := len(xs)
		for _, c := range cs {
			xs, ys = append(xs, c[0]), append(ys, c[1])
		}
		return at
	}
	line := routeLine(in.Corridor.Route)
	lineAt := add(line)
	dropAt := len(xs)
	for _, d := range r.Drops {
		s := &r.Stations[d.Station]
		add([]layers.Coord{{s.WorkX, s.WorkY}})
	}
	offAt := len(xs)
	offs := r.Command.Offtakes
	offStation := make([]int, len(offs))
	for k, o := range offs {
		offStation[k] = nearest(r.Stations, o.Chainage)
		s := &r.Stations[offStation[k]]
		add([]layers.Coord{{s.WorkX, s.WorkY}})
	}
	ringAt := add(fp.Ring)
	t := in.Corridor.Frames.WorkToLonLat
	if f == DEMCRS {
		t = in.Corridor.Frames.WorkToDEM
	}
	if err := transform(t, xs, ys); err != nil {
		return nil, fmt.Errorf("survey: layers of alignment %q: %w", p.Name, err)
	}
	pos := func(k int) layers.Coord { return layers.Coord{xs[k], ys[k]} }
	span := func(at, n int) []layers.Coord {
		out := make([]layers.Coord, n)
		for k := range out {
			out[k] = pos(at + k)
		}
		return out
	}

	first, last := &r.Stations[0], &r.Stations[len(r.Stations)-1]
	radius := math.NaN()
	if len(in.Corridor.Route.Curves) > 0 {
		radius = in.Corridor.Route.Radius
	}
	tot := r.Totals
	centre := layers.LineFeature(span(lineAt, len(line)), name,
		L(in.Corridor.Route.Length), L(first.Chainage), L(last.Chainage),
		layers.Num(u.FromSI(units.Flow, r.Record.Flow)), L(r.Record.BottomWidth), layers.Num(r.Record.SideSlope),
		layers.Num(r.Record.Roughness), layers.Int(int64(tot.DropCount)), layers.Int(int64(len(in.Corridor.Route.Curves))),
		L(radius), L(first.Invert), L(last.Invert),
		layers.Num(u.Volume(tot.CutVolume)), layers.Num(u.Volume(tot.FillVolume)),
		layers.Num(tot.EarthworkCost), layers.Num(tot.DropCost), layers.Num(tot.TotalCost),
		layers.Num(tot.CommandShare), layers.Num(u.Velocity(tot.MaxVelocity)))

	drops := make([]layers.Feature, len(r.Drops))
	for k, d := range r.Drops {
		drops[k] = layers.PointFeature(pos(dropAt+k), name, layers.Int(int64(k+1)), layers.Str(u.Station(d.Chainage)),
			L(d.Chainage), L(d.Height), L(d.UpstreamInvert), L(d.DownstreamInvert), L(d.CrestLevel), L(d.BasinFloor),
			L(d.BasinLength), L(d.BasinWidth), L(d.EndSill), L(d.WallHeight), L(d.TransitionLength),
			layers.Str(string(d.JumpState)), layers.Int(int64(len(d.Warnings))))
	}

	distance := map[string]float64{}
	for _, o := range in.Corridor.Offtakes {
		distance[o.Name] = o.Distance
	}
	offtakes := make([]layers.Feature, len(offs))
	for k, o := range offs {
		dist, ok := distance[o.Name]
		if !ok {
			dist = math.NaN()
		}
		s := &r.Stations[offStation[k]]
		offtakes[k] = layers.PointFeature(pos(offAt+k), name, text(o.Name), layers.Str(u.Station(s.Chainage)),
			L(s.Chainage), L(dist), L(o.Level), L(o.WaterSurface), L(o.Margin))
	}

	st := make([]layers.Feature, len(stakes))
	for k := range stakes {
		s := &stakes[k]
		c := layers.Coord{s.Lon, s.Lat}
		if f == DEMCRS {
			c = layers.Coord{s.DEMX, s.DEMY}
		}
		st[k] = layers.PointFeature(c, text(s.ID), layers.Str(string(s.Kind)), layers.Int(int64(s.Drop)),
			layers.Str(s.Station), L(s.Chainage), L(s.Offset), L(s.Ground), L(s.Design), L(s.CutFill()),
			layers.Num(s.Slope), layers.Str(s.Note))
	}

	var foot []layers.Feature
	if fp.Ring != nil {
		foot = append(foot, layers.PolygonFeature([][]layers.Coord{span(ringAt, len(fp.Ring))}, name,
			layers.Num(u.Area(fp.Area)), layers.Int(int64(fp.Stations)), layers.Int(int64(fp.Beyond))))
	}

	return []layers.Layer{
		{Name: LayerCentreline, Kind: layers.LineString, Fields: fields(u, centrelineCols), Features: []layers.Feature{centre}},
		{Name: LayerDrops, Kind: layers.Point, Fields: fields(u, dropCols), Features: drops},
		{Name: LayerOfftakes, Kind: layers.Point, Fields: fields(u, offtakeCols), Features: offtakes},
		{Name: LayerStakes, Kind: layers.Point, Fields: fields(u, stakeCols), Features: st},
		{Name: LayerFootprint, Kind: layers.Polygon, Fields: fields(u, footprintCols), Features: foot},
	}, nil
}

// routeLine is the route's centre line in the work CRS: the straights'
// ends and each arc drawn with chords standing off it by at most
// maxSagitta.
func routeLine(r *alignment.Route) []layers.Coord {
	u := r.UnitToMetre
	if u == 0 {
		u = 1
	}
	out := []layers.Coord{{r.Elements[0].Start[0], r.Elements[0].Start[1]}}
	for _, e := range r.Elements {
		if e.Curve != 0 {
			// Chord of angle θ stands R·(1 − cos(θ/2)) off its arc
			// (circle geometry, from memory).
			step := 2 * math.Acos(1-math.Min(maxSagitta/e.Radius, 1))
			k := int(math.Min(math.Ceil(math.Abs(e.Turn)/step), maxArcPoints))
			theta0 := math.Atan2(e.Start[0]-e.Centre[0], e.Start[1]-e.Centre[1])
			for j := 1; j < k; j++ {
				a := theta0 + e.Turn*float64(j)/float64(k)
				out = append(out, layers.Coord{e.Centre[0] + e.Radius/u*math.Sin(a), e.Centre[1] + e.Radius/u*math.Cos(a)})
			}
		}
		if end := (layers.Coord{e.End[0], e.End[1]}); end != out[len(out)-1] {
			out = append(out, end)
		}
	}
	return out
}

// nearest returns the index of the station nearest chainage ch (m).
func nearest(st []planner.StationResult, ch float64) int {
	k := sort.Search(len(st), func(i int) bool { return st[i].Chainage >= ch })
	switch {
	case k == len(st):
		return k - 1
	case k > 0 && ch-st[k-1].Chainage < st[k].Chainage-ch:
		return k - 1
	}
	return k
}

// WritePlanGeoJSON writes the plan's layers as one RFC 7946
// FeatureCollection in WGS 84 lon/lat (plan.geojson).
func WritePlanGeoJSON(w io.Writer, in *Input, stakes []Stake) error {
	ls, err := Layers(in, stakes, LonLat)
	if err != nil {
		return err
	}
	return geojson.Write(w, ls)
}

// WritePlanGPKG writes the plan's layers as a new GeoPackage at path
// (plan.gpkg) in the DEM's CRS (Source.DEMEPSG, else Source.DEMCRS; for a
// projected DEM, else the work CRS), with in.Source.Date as every table's
// last_change, in one transaction. path must not exist.
func WritePlanGPKG(path string, in *Input, stakes []Stake) error {
	ls, err := Layers(in, stakes, DEMCRS)
	if err != nil {
		return err
	}
	crs := in.Source.DEMCRS
	switch {
	case in.Source.DEMEPSG > 0:
		crs = "EPSG:" + strconv.Itoa(in.Source.DEMEPSG)
	case crs == "" && !in.geographic():
		crs = in.Corridor.Profile.WorkCRS
	case crs == "":
		return fmt.Errorf("%w: plan.gpkg needs the geographic DEM's CRS (Source.DEMCRS)", ErrInput)
	}
	return gpkg.Write(path, ls, gpkg.Options{CRS: crs, Date: in.Source.Date})
}
