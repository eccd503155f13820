package terrain

// The demo scheme: terrain and canal routes generated here, in pure Go,
// deterministic from a seed. Everything in this file is invented for the
// demo; no numbers in it describe a real place.

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
)

// The fictional demo scheme and its coordinate frame.
const (
	// DemoSchemeName names the fictional irrigation scheme of the demo.
	DemoSchemeName = "Vennakor Fan irrigation scheme"

	// DemoEPSG is the demo's projected CRS: WGS 84 / UTM zone 34N (metres).
	DemoEPSG = 32634

	// DemoNoData is the nodata value of the demo grid.
	DemoNoData = -9999.0
)

// Layout of the demo grid: 600 × 800 cells of 10 m (6 km east–west, 8 km
// north–south) whose top-left corner sits at a made-up easting and northing
// of UTM zone 34N.
const (
	fanCols    = 600
	fanRows    = 800
	fanCell    = 10.0      // m
	fanWest    = 538000.0  // easting of the west edge, m
	fanNorth   = 4626000.0 // northing of the north edge, m
	fanApexE   = fanWest + 3000
	fanApexN   = fanNorth + 1500 // the apex lies 1.5 km north of the grid
	fanApexZ   = 520.0           // m
	fanSlope0  = 0.025           // radial ground slope at the apex (m/m)
	fanConcave = 1.0e-6          // 1/m: the slope eases by 2·fanConcave per metre of radius
)

// Fixed features of the fan (angles in radians from due south, positive
// towards the east; radii in metres from the apex). The seed moves them only
// slightly, so the demo routes meet them whatever the seed.
var (
	fanGullies = []struct{ angle, depth, halfWidth float64 }{
		{-0.32, 2.6, 70}, {0.05, 2.0, 60}, {0.35, 2.4, 80},
	}
	fanRisers = []struct{ radius, height, width float64 }{
		{4200, 4.0, 45}, {6800, 3.0, 40},
	}
	// A void in the DEM (a flooded borrow pit, say) in the south-east
	// corner, well away from the routes.
	fanVoid = struct{ e, n, radius float64 }{fanWest + 5450, fanNorth - 7350, 260}
)

// SyntheticFan returns the demo DEM: an alluvial fan falling south from an
// apex north of the grid, about 140 m over 8 km. Its radial slope eases
// from about 2.6 % near the head to 0.9 % at the toe (a concave fan
// profile), with two terrace risers across the fan, three shallow radial
// gullies, gentle undulations of up to about a metre and 2 cm of surface
// noise, and a small nodata void in the south-east corner. The same seed
// always gives the same grid, cell for cell.
//
// The grid is 600 × 800 cells of 10 m in [DemoEPSG], north-up, elevations in
// metres, nodata [DemoNoData]. It takes a few tens of milliseconds.
func SyntheticFan(seed uint64) Grid {
	rng := rand.New(rand.NewPCG(seed, 0x5eed_fa11))
	type wave struct{ kx, ky, amp, phase float64 }
	waves := make([]wave, 6)
	for i := range waves {
		length := 300 + 1200*rng.Float64() // m
		dir := 2 * math.Pi * rng.Float64()
		k := 2 * math.Pi / length
		waves[i] = wave{
			kx: k * math.Cos(dir), ky: k * math.Sin(dir),
			amp:   0.25 + 0.6*length/1500, // longer waves are higher, ≤ 0.85 m
			phase: 2 * math.Pi * rng.Float64(),
		}
	}
	type gully struct{ angle, depth, halfWidth, wobble, phase float64 }
	gullies := make([]gully, len(fanGullies))
	for i, g := range fanGullies {
		gullies[i] = gully{
			angle: g.angle + 0.01*(rng.Float64()-0.5), depth: g.depth, halfWidth: g.halfWidth,
			wobble: 0.015 + 0.01*rng.Float64(), phase: 2 * math.Pi * rng.Float64(),
		}
	}
	type riser struct{ radius, height, width, wave, phase float64 }
	risers := make([]riser, len(fanRisers))
	for i, r := range fanRisers {
		risers[i] = riser{
			radius: r.radius + 40*(rng.Float64()-0.5), height: r.height, width: r.width,
			wave: 60 + 60*rng.Float64(), phase: 2 * math.Pi * rng.Float64(),
		}
	}

	g := Grid{
		Width: fanCols, Height: fanRows,
		GeoTransform: [6]float64{fanWest, fanCell, 0, fanNorth, 0, -fanCell},
		EPSG:         DemoEPSG,
		NoData:       DemoNoData, HasNoData: true,
		Data: make([]float32, fanCols*fanRows),
	}
	for row := range fanRows {
		n := fanNorth - (float64(row)+0.5)*fanCell
		for col := range fanCols {
			e := fanWest + (float64(col)+0.5)*fanCell
			noise := 0.04 * (rng.Float64() - 0.5) // drawn for every cell, so the stream stays aligned
			if math.Hypot(e-fanVoid.e, n-fanVoid.n) < fanVoid.radius {
				g.Data[row*fanCols+col] = float32(DemoNoData)
				continue
			}
			de, dn := e-fanApexE, n-fanApexN
			r := math.Hypot(de, dn)
			theta := math.Atan2(de, -dn) // from south, positive east
			z := fanApexZ - fanSlope0*r + fanConcave*r*r
			for _, w := range waves {
				z += w.amp * math.Sin(w.kx*de+w.ky*dn+w.phase)
			}
			for _, rs := range risers {
				rr := rs.radius + rs.wave*math.Sin(3*theta+rs.phase)
				z -= rs.height / (1 + math.Exp(-(r-rr)/rs.width))
			}
			for _, gl := range gullies {
				axis := gl.angle + gl.wobble*math.Sin(r/900+gl.phase)
				d := r * (theta - axis) / gl.halfWidth // across the gully, in half-widths
				if d > -4 && d < 4 {
					z -= gl.depth * math.Exp(-d*d)
				}
			}
			g.Data[row*fanCols+col] = float32(z + noise)
		}
	}
	return g
}

// DemoAlignment is one canal route of the demo scheme; its vertices are
// easting, northing in metres of [DemoEPSG], from the head of the canal
// downstream.
type DemoAlignment struct {
	Name     string
	Vertices [][2]float64
	// Main is true for the main canal, which runs across the fan near its
	// head; the others are branches down the fan.
	Main bool
	// Corridor names the canal a route is one candidate of ("" for a
	// canal with one route); Flow (m³/s) and BottomWidth (m) are the
	// route's own design values, 0 for the scheme's design.
	Corridor          string
	Flow, BottomWidth float64
}

// demoRoutes lays the three branch canals out from the head reach near the
// fan's apex obliquely down the fan, each crossing one gully and both
// terrace risers (or the upper one), then the main canal across the fan's
// head that feeds them, and a second candidate route for the middle branch:
// polar waypoints (angle from due south, radius from the apex) joined by
// smooth arcs. The branches carry less water than the main canal.
var demoRoutes = []struct {
	name     string
	from, to [2]float64 // angle (rad), radius (m)
	bend     float64    // sideways bow of the route, rad
	vertices int
	main     bool
	corridor string
	flow, b  float64 // m³/s, m; 0: the scheme's design
}{
	{"West Branch", [2]float64{-0.12, 1900}, [2]float64{-0.40, 6600}, 0.03, 11, false, "", 1.2, 1.5},
	{"Middle Branch", [2]float64{0.24, 2000}, [2]float64{-0.14, 7400}, -0.03, 13, false, "Middle lateral", 1.2, 1.5},
	{"East Branch", [2]float64{0.10, 2300}, [2]float64{0.50, 5600}, 0.02, 10, false, "", 1.0, 1.5},
	{"Main Canal", [2]float64{-0.45, 1800}, [2]float64{0.45, 2150}, 0.0, 9, true, "", 0, 0},
	{"Middle Branch east route", [2]float64{0.26, 2050}, [2]float64{0.02, 7200}, 0.05, 13, false, "Middle lateral", 1.2, 1.5},
}

// Properties are the route's GeoJSON properties: its name and, where set,
// its corridor, flow (m³/s) and bottom width (m).
func (a DemoAlignment) Properties() map[string]any {
	p := map[string]any{"name": a.Name}
	if a.Corridor != "" {
		p["corridor"] = a.Corridor
	}
	if a.Flow > 0 {
		p["flow"] = a.Flow
	}
	if a.BottomWidth > 0 {
		p["bottom_width"] = a.BottomWidth
	}
	return p
}

// DemoAlignments returns the demo's canal routes in [DemoEPSG] metres,
// rounded to the centimetre. They do not depend on the seed of
// [SyntheticFan]: the seed changes the ground's details, not the layout.
func DemoAlignments() []DemoAlignment {
	out := make([]DemoAlignment, 0, len(demoRoutes))
	for _, r := range demoRoutes {
		a := DemoAlignment{Name: r.name, Main: r.main, Corridor: r.corridor, Flow: r.flow, BottomWidth: r.b}
		for i := range r.vertices {
			t := float64(i) / float64(r.vertices-1)
			theta := r.from[0] + t*(r.to[0]-r.from[0]) + r.bend*math.Sin(math.Pi*t)
			rad := r.from[1] + t*(r.to[1]-r.from[1])
			e := fanApexE + rad*math.Sin(theta)
			n := fanApexN - rad*math.Cos(theta)
			a.Vertices = append(a.Vertices, [2]float64{math.Round(e*100) / 100, math.Round(n*100) / 100})
		}
		out = append(out, a)
	}
	return out
}

// DemoAlignmentsGeoJSON returns [DemoAlignments] as a GeoJSON
// FeatureCollection of LineStrings, each with a "name" property. The
// coordinates are projected ([DemoEPSG] metres), which RFC 7946 does not
// provide for, so the collection carries the legacy "crs" member
// {"type":"name","properties":{"name":"urn:ogc:def:crs:EPSG::32634"}}; a
// reader that ignores it must be told the CRS (EPSG:32634). The bytes are
// the same on every call.
func DemoAlignmentsGeoJSON() []byte {
	type geometry struct {
		Type        string       `json:"type"`
		Coordinates [][2]float64 `json:"coordinates"`
	}
	type feature struct {
		Type       string         `json:"type"`
		Properties map[string]any `json:"properties"`
		Geometry   geometry       `json:"geometry"`
	}
	type crsMember struct {
		Type       string            `json:"type"`
		Properties map[string]string `json:"properties"`
	}
	fc := struct {
		Type     string    `json:"type"`
		Name     string    `json:"name"`
		CRS      crsMember `json:"crs"`
		Features []feature `json:"features"`
	}{
		Type: "FeatureCollection",
		Name: DemoSchemeName,
		CRS: crsMember{Type: "name", Properties: map[string]string{
			"name": fmt.Sprintf("urn:ogc:def:crs:EPSG::%d", DemoEPSG),
		}},
	}
	for _, a := range DemoAlignments() {
		fc.Features = append(fc.Features, feature{
			Type:       "Feature",
			Properties: a.Properties(),
			Geometry:   geometry{Type: "LineString", Coordinates: a.Vertices},
		})
	}
	b, err := json.MarshalIndent(fc, "", " ")
	if err != nil {
		panic(fmt.Sprintf("terrain: encode demo alignments: %v", err)) // plain structs always encode
	}
	return append(b, '\n')
}

// DemoOfftake is an offtake of the demo scheme: a turnout beside a branch
// canal whose water must stand Margin metres above the ground at E, N
// (metres of [DemoEPSG]).
type DemoOfftake struct {
	Name, Alignment string
	E, N            float64
	Margin          float64 // m
}

// demoOfftakes place each turnout beside a demo canal: on the segment
// after the given vertex, at a fraction of it, offset sideways (m, positive
// to the left of the flow).
var demoOfftakes = []struct {
	name, alignment string
	vertex          int
	along, left     float64
	margin          float64
}{
	{"West Branch turnout W1", "West Branch", 3, 0.5, 8, 0.30},
	{"Middle Branch turnout M1", "Middle Branch", 5, 0.4, 8, 0.30},
	{"Middle Branch turnout M2", "Middle Branch", 9, 0.6, -8, 0.25},
	{"East Branch turnout E1", "East Branch", 4, 0.5, 8, 0.30},
}

// DemoOfftakes returns the demo's turnouts, rounded to the centimetre.
func DemoOfftakes() []DemoOfftake {
	routes := map[string]DemoAlignment{}
	for _, a := range DemoAlignments() {
		routes[a.Name] = a
	}
	var out []DemoOfftake
	for _, o := range demoOfftakes {
		v := routes[o.alignment].Vertices
		a, b := v[o.vertex], v[o.vertex+1]
		de, dn := b[0]-a[0], b[1]-a[1]
		l := math.Hypot(de, dn)
		e := a[0] + o.along*de - o.left*dn/l
		n := a[1] + o.along*dn + o.left*de/l
		out = append(out, DemoOfftake{Name: o.name, Alignment: o.alignment,
			E: math.Round(e*100) / 100, N: math.Round(n*100) / 100, Margin: o.margin})
	}
	return out
}
