package survey

import (
	"bytes"
	"errors"
	"math"
	"strings"
	"testing"

	"canalstep/planner"
	"canalstep/report/units"
)

// scenarios are the plans the checks run on, by key.
func scenarios() map[string]scenario {
	return map[string]scenario{"projected": projected(true), "geographic": geographic(), "sharp": sharpAngle()}
}

// TestCs2cs transforms every stake point's easting and northing from the
// work CRS to lon/lat with PROJ's cs2cs (the reference tool) and compares
// the result with the lon and lat columns of stakes.csv as written. On the
// ground the two must agree to 1 mm (the figure), measured with the
// WGS 84 radii of curvature at the point (groundMetres: 1 mm is about
// 9.0e-9° of latitude and 1.27e-8° of longitude at 45°N). The columns keep
// 1e-9°, which rounds by at most 0.056 mm north and 0.039 mm east at 45°N,
// 0.07 mm together.
//
// A second pass feeds cs2cs the easting and northing columns as written
// (rounded to 1 mm, up to 0.71 mm off): they agree with the lon/lat columns
// to 0.71 + 0.07 = 0.78 mm, within the 1 mm a user checking the file sees.
func TestCs2cs(t *testing.T) {
	for _, key := range []string{"projected", "geographic"} {
		t.Run(key, func(t *testing.T) {
			in := build(t, key, scenarios()[key])
			st := stakesOf(t, in)
			tab := writeTable(t, in, st)
			if len(tab.rows) != len(st) {
				t.Fatalf("%d rows, %d stakes", len(tab.rows), len(st))
			}
			def := "EPSG:32634"
			if in.geographic() {
				def = in.Corridor.Profile.WorkCRS // the local transverse Mercator, a PROJ string
			}
			xs, ys := make([]float64, len(st)), make([]float64, len(st))
			cx, cy := make([]float64, len(st)), make([]float64, len(st))
			for k := range st {
				xs[k], ys[k] = st[k].X, st[k].Y
				cx[k], cy[k] = tab.num(t, k, "easting_m"), tab.num(t, k, "northing_m")
				if d := math.Hypot(cx[k]-xs[k], cy[k]-ys[k]); d > 0.0005*math.Sqrt2+1e-9 {
					t.Errorf("stake %s: easting/northing columns %.4f m from the point: more than the millimetre rounding", st[k].ID, d)
				}
			}
			for pass, pts := range [][2][]float64{{xs, ys}, {cx, cy}} {
				limit := []float64{0.001, 0.001}[pass]
				lon, lat := cs2cs(t, def, pts[0], pts[1])
				worst, at, catches := 0.0, "", 0
				for k := range st {
					d := groundMetres(lon[k], lat[k], tab.num(t, k, "lon"), tab.num(t, k, "lat"))
					if d > worst {
						worst, at = d, st[k].ID
					}
					if d > limit {
						t.Errorf("pass %d stake %s: cs2cs gives %.9f %.9f, the columns %s %s: %.2f mm apart, more than %.1f mm",
							pass, st[k].ID, lon[k], lat[k], tab.str(t, k, "lon"), tab.str(t, k, "lat"), d*1000, limit*1000)
					}
					if st[k].Kind == CatchLeft || st[k].Kind == CatchRight {
						catches++
					}
				}
				t.Logf("%s pass %d (%s coordinates): %d stakes (%d catch points), largest cs2cs difference %.3f mm at %s",
					key, pass, []string{"exact", "written"}[pass], len(st), catches, worst*1000, at)
			}
		})
	}
}

// TestCatchOnGround checks that each catch point lies on the ground: on
// the cross-section line the planner used (the same piecewise-linear
// section, so to 1e-9 m), and on the synthetic ground surface itself at the
// point's DEM coordinates. The surface is sampled every 1 m across the
// line; linear interpolation between samples errs by at most h²/8·|f″|
// (the interpolation error bound, from memory), with h = 1 m and
// |f″| ≤ 0.3·(1/37² + 1/53²) = 3.3e-4 m⁻¹ here, so 4e-5 m; the test allows
// 1 mm. Catch points beyond the sampled section (ground taken level) are
// counted, not checked against the surface.
func TestCatchOnGround(t *testing.T) {
	for key, sc := range scenarios() {
		t.Run(key, func(t *testing.T) {
			in := build(t, key, sc)
			worst, n, beyond := 0.0, 0, 0
			for _, s := range stakesOf(t, in) {
				if s.Kind != CatchLeft && s.Kind != CatchRight {
					continue
				}
				n++
				st := stationAt(t, in, s.Chainage)
				if g := groundAt(&st.Station, s.Offset); math.Abs(g-s.Design) > 1e-9 {
					t.Errorf("%s: design level %.6f m, the cross-section %.6f m there", s.ID, s.Design, g)
				}
				if s.Note == noteCatchBeyond {
					beyond++
					continue
				}
				d := math.Abs(sc.ground(s.DEMX, s.DEMY) - s.Design)
				worst = math.Max(worst, d)
				if d > 0.001 {
					t.Errorf("%s: design level %.4f m, the ground there %.4f m", s.ID, s.Design, sc.ground(s.DEMX, s.DEMY))
				}
			}
			if n == 0 {
				t.Fatal("no catch points")
			}
			t.Logf("%s: %d catch points (%d beyond the section), largest distance from the surface %.2g m", key, n, beyond, worst)
		})
	}
}

// writeTable writes in's stake list and reads it back.
func writeTable(t *testing.T, in *Input, st []Stake) table {
	t.Helper()
	h, err := NewHeader(in)
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := WriteStakesCSV(&b, st, h); err != nil {
		t.Fatal(err)
	}
	return readTable(t, b.String())
}

func stationAt(t *testing.T, in *Input, chainage float64) *planner.StationResult {
	t.Helper()
	for i := range in.Result.Stations {
		if in.Result.Stations[i].Chainage == chainage {
			return &in.Result.Stations[i]
		}
	}
	t.Fatalf("no station at chainage %v", chainage)
	return nil
}

// TestSectionStakes checks the section points against the stations: the
// centre-line stake is the station itself (coordinates, lon/lat, ground,
// invert), the others lie on the station's cross-section line at their
// offset (|P − station| = |offset|, exact plane geometry), the top of bank
// at b/2 + z·H and the hinge W further out (the template, reference sheet
// §6.1), with the design levels and slopes of the faces they mark.
func TestSectionStakes(t *testing.T) {
	in := build(t, "projected", scenarios()["projected"])
	tpl := in.Result.Record.Template
	st := stakesOf(t, in)
	i := -1
	for _, s := range st {
		if s.Drop != 0 {
			continue
		}
		if s.Kind == CatchLeft {
			i++
		}
		r := &in.Result.Stations[i]
		if s.Chainage != r.Chainage || s.Station != r.Label {
			t.Fatalf("%s at chainage %v label %q, want station %d at %v %q", s.ID, s.Chainage, s.Station, i, r.Chainage, r.Label)
		}
		if d := math.Hypot(s.X-r.WorkX, s.Y-r.WorkY); math.Abs(d-math.Abs(s.Offset)) > 1e-6 {
			t.Errorf("%s lies %.6f m from its station, offset %.6f m", s.ID, d, s.Offset)
		}
		top := tpl.BedWidth/2 + tpl.SideSlope*r.BankHeight
		switch s.Kind {
		case Centreline:
			if s.X != r.WorkX || s.Y != r.WorkY || s.Ground != r.Ground || s.Design != r.Invert {
				t.Errorf("%s: (%v, %v) ground %v design %v, station (%v, %v) ground %v invert %v",
					s.ID, s.X, s.Y, s.Ground, s.Design, r.WorkX, r.WorkY, r.Ground, r.Invert)
			}
			if math.Abs(s.Lon-r.Lon) > 1e-12 || math.Abs(s.Lat-r.Lat) > 1e-12 {
				t.Errorf("%s at %.12f %.12f, station at %.12f %.12f", s.ID, s.Lon, s.Lat, r.Lon, r.Lat)
			}
		case TopOfBankLeft, TopOfBankRight:
			if math.Abs(math.Abs(s.Offset)-top) > 1e-12 || s.Design != r.TopOfBank || s.Slope != tpl.SideSlope {
				t.Errorf("%s: offset %v design %v slope %v; want ±%v, %v, %v", s.ID, s.Offset, s.Design, s.Slope, top, r.TopOfBank, tpl.SideSlope)
			}
		case BankHingeLeft, BankHingeRight:
			if math.Abs(math.Abs(s.Offset)-top-tpl.BankTopWidth) > 1e-12 || s.Design != r.TopOfBank {
				t.Errorf("%s: offset %v design %v; want ±%v, %v", s.ID, s.Offset, s.Design, top+tpl.BankTopWidth, r.TopOfBank)
			}
		case CatchLeft:
			if s.Offset != r.CatchLeft.Offset || s.Design != r.CatchLeft.Level || s.CutFill() != 0 {
				t.Errorf("%s: offset %v level %v cut/fill %v; catch %+v", s.ID, s.Offset, s.Design, s.CutFill(), r.CatchLeft)
			}
		case CatchRight:
			if s.Offset != r.CatchRight.Offset || s.Design != r.CatchRight.Level {
				t.Errorf("%s: offset %v level %v; catch %+v", s.ID, s.Offset, s.Design, r.CatchRight)
			}
		}
		if s.Kind != Centreline && (s.Offset < 0) != strings.HasSuffix(string(s.Kind), "_left") {
			t.Errorf("%s (%s) has offset %v", s.ID, s.Kind, s.Offset)
		}
	}
	if i != len(in.Result.Stations)-1 {
		t.Errorf("stakes cover %d stations of %d", i+1, len(in.Result.Stations))
	}
}

// TestDropLayout checks each drop's structure points by plane geometry
// (exact analytic case): the four basin corners form a rectangle of the
// basin's length × width (sides, diagonals √(L² + W²)), its axis along the
// tangent at the drop station; the crest ends stand over the upstream
// corners, the end sill over the downstream ones, the transition ends one
// transition length further at the canal's water-surface width b + 2·z·y
// apart. Distances are to 1e-6 m: rounding at coordinates of 5e6 m is
// 1e-9 m.
func TestDropLayout(t *testing.T) {
	in := build(t, "projected", scenarios()["projected"])
	st := stakesOf(t, in)
	if len(in.Result.Drops) < 2 {
		t.Fatalf("the scenario has %d drops; want at least 2 to check", len(in.Result.Drops))
	}
	u := in.unit()
	for x, d := range in.Result.Drops {
		pts := map[Kind]Stake{}
		for _, s := range st {
			if s.Drop == x+1 {
				pts[s.Kind] = s
			}
		}
		if len(pts) != 10 {
			t.Fatalf("drop %d has %d structure points, want 10", x+1, len(pts))
		}
		dist := func(a, b Kind) float64 { return math.Hypot(pts[a].X-pts[b].X, pts[a].Y-pts[b].Y) * u }
		W, L, T := d.BasinWidth, d.BasinLength, d.TransitionLength
		yn := in.Result.Reaches[x+1].NormalDepth
		top := in.Result.Record.BottomWidth + 2*in.Result.Record.SideSlope*yn
		for _, c := range []struct {
			a, b Kind
			want float64
		}{
			{BasinUpstreamLeft, BasinUpstreamRight, W}, {BasinUpstreamRight, BasinDownstreamRt, L},
			{BasinDownstreamRt, BasinDownstreamLeft, W}, {BasinDownstreamLeft, BasinUpstreamLeft, L},
			{BasinUpstreamLeft, BasinDownstreamRt, math.Hypot(W, L)}, {BasinUpstreamRight, BasinDownstreamLeft, math.Hypot(W, L)},
			{CrestLeft, BasinUpstreamLeft, 0}, {CrestRight, BasinUpstreamRight, 0},
			{EndSillLeft, BasinDownstreamLeft, 0}, {EndSillRight, BasinDownstreamRt, 0},
			{TransitionEndLeft, TransitionEndRight, top},
		} {
			if got := dist(c.a, c.b); math.Abs(got-c.want) > 1e-6 {
				t.Errorf("drop %d: %s to %s is %.9f m, want %.9f m", x+1, c.a, c.b, got, c.want)
			}
		}
		// The axis (left side, upstream to downstream) runs along the
		// tangent at the drop station; the transition ends lie T beyond.
		s := &in.Result.Stations[d.Station]
		b1, b4, te := pts[BasinUpstreamLeft], pts[BasinDownstreamLeft], pts[TransitionEndLeft]
		if az := math.Atan2(b4.X-b1.X, b4.Y-b1.Y); math.Abs(math.Remainder(az-s.Azimuth, 2*math.Pi)) > 1e-9 {
			t.Errorf("drop %d: basin axis at azimuth %.9f, the tangent %.9f", x+1, az, s.Azimuth)
		}
		along := ((te.X-b4.X)*math.Sin(s.Azimuth) + (te.Y-b4.Y)*math.Cos(s.Azimuth)) * u
		if math.Abs(along-T) > 1e-6 {
			t.Errorf("drop %d: transition ends %.6f m beyond the basin, want %.6f m", x+1, along, T)
		}
		for k, want := range map[Kind]float64{CrestLeft: d.CrestLevel, CrestRight: d.CrestLevel, BasinUpstreamLeft: d.BasinFloor,
			BasinDownstreamRt: d.BasinFloor, EndSillLeft: d.BasinFloor + d.EndSill} {
			if pts[k].Design != want {
				t.Errorf("drop %d %s: design level %v, want %v", x+1, k, pts[k].Design, want)
			}
		}
		// On a spacing station the crest ends lie on the cross-section
		// at ±W/2, and Route.Locate must find them there.
		if s.Mark == 0 {
			for _, k := range []Kind{CrestLeft, CrestRight} {
				p := pts[k]
				if math.Abs(p.Chainage-d.Chainage) > 1e-6 || math.Abs(math.Abs(p.Offset)-W/2) > 1e-6 {
					t.Errorf("drop %d %s: chainage %.6f offset %.6f, want %.6f ±%.6f", x+1, k, p.Chainage, p.Offset, d.Chainage, W/2)
				}
			}
		}
		t.Logf("drop %d at %s: basin %.3f × %.3f m, transition %.3f m, ends %.3f m apart", x+1, s.Label, L, W, T, top)
	}
}

// TestIDs checks that point ids are unique and follow the scheme, and that
// a repeated id gets a suffix.
func TestIDs(t *testing.T) {
	in := build(t, "projected", scenarios()["projected"])
	seen := map[string]bool{}
	for _, s := range stakesOf(t, in) {
		if seen[s.ID] {
			t.Errorf("id %s used twice", s.ID)
		}
		seen[s.ID] = true
	}
	for _, id := range []string{"C0+000.00", "XL0+010.00", "HR0+010.00", "D1-B3", "D2-TL"} {
		if !seen[id] {
			t.Errorf("no stake %s", id)
		}
	}
	st := []Stake{{ID: "C0+001.00"}, {ID: "C0+001.00"}, {ID: "C0+001.00/2"}, {ID: "C0+001.00"}}
	uniqueIDs(st)
	var got []string
	for _, s := range st {
		got = append(got, s.ID)
	}
	if want := "C0+001.00 C0+001.00/2 C0+001.00/2/2 C0+001.00/3"; strings.Join(got, " ") != want {
		t.Errorf("ids %v, want %s", got, want)
	}
}

// TestUSUnits writes the stake list in US units: lengths and levels in
// feet (1 ft = 0.3048 m exactly), 100-ft station labels, the easting and
// northing still in the CRS's metres.
func TestUSUnits(t *testing.T) {
	si := build(t, "projected", scenarios()["projected"])
	us := *si
	us.Units = units.US
	st := stakesOf(t, &us)
	tab := writeTable(t, &us, st)
	for _, col := range []string{"chainage_ft", "offset_ft", "easting_m", "northing_m", "ground_ft", "design_level_ft", "cut_fill_ft"} {
		if _, ok := tab.head[col]; !ok {
			t.Errorf("no column %s", col)
		}
	}
	for k := range st {
		if got, want := tab.num(t, k, "chainage_ft"), st[k].Chainage/0.3048; math.Abs(got-want) > 0.0005 {
			t.Fatalf("row %d: chainage %v ft, want %v", k, got, want)
		}
		if got, want := tab.num(t, k, "ground_ft"), st[k].Ground/0.3048; math.Abs(got-want) > 0.0005 {
			t.Fatalf("row %d: ground %v ft, want %v", k, got, want)
		}
	}
	found := false
	for k := range st {
		if st[k].Kind == CatchLeft && st[k].Chainage == 100 {
			found = true
			if id, lab := tab.str(t, k, "point"), tab.str(t, k, "station"); id != "XL3+28.08" || lab != "3+28.08" {
				t.Errorf("point %q station %q at 100 m, want XL3+28.08 at 3+28.08 (328.08 ft)", id, lab)
			}
		}
	}
	if !found {
		t.Error("no catch point at 100 m")
	}
}

// TestRefused checks that an infeasible or missing plan gives no stakes.
func TestRefused(t *testing.T) {
	in := build(t, "projected", scenarios()["projected"])
	bad := *in
	r := *in.Result
	r.Status = planner.Infeasible
	bad.Result = &r
	for name, x := range map[string]*Input{"infeasible": &bad, "nil": nil, "no corridor": {Result: in.Result}} {
		if _, err := Stakes(x); !errors.Is(err, ErrInput) {
			t.Errorf("%s: error %v, want ErrInput", name, err)
		}
	}
}

// TestWorkUnit names the work CRS units: GDAL's US survey foot is
// 0.304800609601219 m (1200/3937, NIST Handbook 44 Appendix C, from
// memory), the international foot 0.3048 m.
func TestWorkUnit(t *testing.T) {
	for _, c := range []struct {
		u      float64
		suffix string
		ok     bool
	}{{1, "_m", true}, {0.304800609601219, "_usft", true}, {1200.0 / 3937, "_usft", true}, {0.3048, "_ft", true}, {0.3047997, "", false}} {
		got, err := workUnit(c.u)
		if (err == nil) != c.ok || got.suffix != c.suffix {
			t.Errorf("workUnit(%v) = %+v, %v; want suffix %q", c.u, got, err, c.suffix)
		}
	}
}
