package main

import (
	"errors"
	"fmt"
	"math"
	"os"

	"github.com/paulmach/orb"
	flag "github.com/spf13/pflag"

	"canalstep/alignment"
	"canalstep/report"
	"canalstep/terrain"
)

// groundFlags are the flags every command that reads a DEM along alignments
// shares: profile, plan and compare.
type groundFlags struct {
	dem, alignment, alignmentCRS string
	spacing, startChainage       float64 // in the --units length unit
	zUnits, interp               string
}

func (g *groundFlags) register(fs *flag.FlagSet) {
	fs.StringVar(&g.dem, "dem", "", "DEM raster: any file GDAL opens, including /vsi… paths (required)")
	fs.StringVar(&g.alignment, "alignment", "", "GeoJSON file with one or more alignments (required)")
	fs.StringVar(&g.alignmentCRS, "alignment-crs", "", "CRS of the alignment coordinates, e.g. EPSG:32634 (default: WGS 84 lon/lat as RFC 7946 says, or the file's legacy crs member)")
	fs.Float64Var(&g.spacing, "spacing", 10, "station spacing along the alignment (m, or ft with --units us)")
	fs.Float64Var(&g.startChainage, "start-chainage", 0, "chainage of the first point (m, or ft with --units us)")
	fs.StringVar(&g.zUnits, "z-units", "m", "vertical unit of the DEM values: m, ft or us-ft")
	fs.StringVar(&g.interp, "interp", "bilinear", "DEM interpolation: bilinear or nearest")
}

// profile is one alignment stationed and sampled: the input of every
// per-alignment job.
type profile struct {
	name     string              // alignment name as in the file
	folder   string              // output folder name (alignment.SafeName)
	stations []alignment.Station // chainage in m, X/Y in the DEM's CRS
	ground   []float64           // ground elevation at each station, m
}

// chainages returns the stations' chainages in metres.
func (p profile) chainages() []float64 {
	ch := make([]float64, len(p.stations))
	for i, s := range p.stations {
		ch[i] = s.Chainage
	}
	return ch
}

// groundSet is what loadProfiles read: the DEM's description, how many DEM
// blocks sampling decoded, and one profile per alignment.
type groundSet struct {
	info     terrain.Info
	blocks   int
	profiles []profile
}

// loadProfiles reads the alignments and the DEM, stations every alignment and
// samples the ground. It writes nothing, so a caller that fails on any
// alignment leaves no output behind. Spacing and start chainage are read in
// u's length unit.
func loadProfiles(g groundFlags, u report.Units) (groundSet, error) {
	if g.dem == "" {
		return groundSet{}, usagef("--dem is required: give the DEM raster to sample")
	}
	if g.alignment == "" {
		return groundSet{}, usagef("--alignment is required: give the GeoJSON file with the canal alignment")
	}
	// Station positions default to round numbers of the unit system:
	// every 10 m, or every 10 ft with --units us.
	spacing, start := g.spacing*unitLength(u), g.startChainage*unitLength(u)
	if !(spacing > 0) || math.IsInf(spacing, 0) {
		return groundSet{}, usagef("--spacing must be a positive number of %s, got %v", u.LengthUnit(), g.spacing)
	}
	if math.IsNaN(start) || math.IsInf(start, 0) {
		return groundSet{}, usagef("--start-chainage must be a finite number of %s", u.LengthUnit())
	}
	var method terrain.Method
	switch g.interp {
	case "bilinear":
		method = terrain.Bilinear
	case "nearest":
		method = terrain.Nearest
	default:
		return groundSet{}, usagef("--interp must be bilinear or nearest, got %q", g.interp)
	}
	switch g.zUnits {
	case "m", "ft", "us-ft":
	default:
		return groundSet{}, usagef("--z-units must be m, ft or us-ft, got %q", g.zUnits)
	}

	data, err := os.ReadFile(g.alignment)
	if err != nil {
		return groundSet{}, fmt.Errorf("cannot read the alignment file: %w", err)
	}
	aligns, err := alignment.Read(data)
	if err != nil {
		return groundSet{}, fmt.Errorf("alignment file %s: %w", g.alignment, err)
	}

	dem, err := terrain.Open(g.dem, terrain.Options{ZUnits: g.zUnits, Method: method})
	if err != nil {
		return groundSet{}, err
	}
	defer dem.Close()
	info := dem.Info()

	profiles := make([]profile, 0, len(aligns))
	for _, a := range aligns {
		p, err := loadProfile(dem, info, a, g.alignmentCRS, spacing, start, u)
		if err != nil {
			return groundSet{}, err
		}
		profiles = append(profiles, p)
	}
	return groundSet{info: info, blocks: dem.BlocksRead(), profiles: profiles}, nil
}

// loadProfile stations one alignment and samples the DEM under it.
// spacing and start are in metres.
func loadProfile(dem *terrain.DEM, info terrain.Info, a alignment.Alignment, crsFlag string, spacing, start float64, u report.Units) (profile, error) {
	f, closeFrames, err := framesFor(info, a, crsFlag)
	if err != nil {
		return profile{}, fmt.Errorf("alignment %q: %w", a.Name, err)
	}
	defer closeFrames()
	st, err := alignment.Stations(a, f, spacing, start)
	if err != nil {
		return profile{}, err
	}
	xs, ys := make([]float64, len(st)), make([]float64, len(st))
	for i, s := range st {
		xs[i], ys[i] = s.X, s.Y
	}
	z := make([]float64, len(st))
	us := u == report.US
	if err := dem.Sample(xs, ys, z); err != nil {
		var out *terrain.OutsideError
		if errors.As(err, &out) {
			return profile{}, fmt.Errorf("alignment %q leaves the DEM at %s: extend the DEM or shorten the alignment",
				a.Name, alignment.Ranges(st, out.Indices, us))
		}
		return profile{}, fmt.Errorf("sample the DEM along alignment %q: %w", a.Name, err)
	}
	var nodata []int
	for i, v := range z {
		if math.IsNaN(v) {
			nodata = append(nodata, i)
		}
	}
	if len(nodata) > 0 {
		return profile{}, fmt.Errorf("alignment %q crosses DEM cells without data at %s: fill the gaps (e.g. gdal_fillnodata.py) or move the alignment",
			a.Name, alignment.Ranges(st, nodata, us))
	}
	return profile{name: a.Name, folder: alignment.SafeName(a.Name), stations: st, ground: z}, nil
}

// lonLatCRS is WGS 84 in lon/lat order, the CRS of RFC 7946 GeoJSON.
const lonLatCRS = "OGC:CRS84"

// framesFor builds the coordinate frames of one alignment. Chainage is
// measured in the DEM's CRS when it is projected, else in a transverse
// Mercator projection centred on the alignment, whose grid distances match
// the ellipsoid's to a few parts per million over a canal's extent. The returned function releases the transforms.
func framesFor(info terrain.Info, a alignment.Alignment, crsFlag string) (alignment.Frames, func(), error) {
	var f alignment.Frames
	var open []*terrain.Transform
	closeAll := func() {
		for _, t := range open {
			t.Close()
		}
	}
	newT := func(src, dst string) (*terrain.Transform, error) {
		t, err := terrain.NewTransform(src, dst)
		if err != nil {
			return nil, err
		}
		open = append(open, t)
		return t, nil
	}
	fail := func(err error) (alignment.Frames, func(), error) {
		closeAll()
		return alignment.Frames{}, func() {}, err
	}

	in := crsFlag
	if in == "" {
		in = a.CRS
	}
	if in == "" {
		if !alignment.LooksGeographic(a.Line) {
			return fail(usagef("coordinates are not WGS 84 lon/lat as RFC 7946 requires; give --alignment-crs EPSG:n for projected coordinates"))
		}
		in = lonLatCRS
	}
	if _, err := terrain.CRSInfo(in); err != nil {
		return fail(usagef("alignment CRS: %v; give an EPSG code such as EPSG:32634", err))
	}

	work := info.CRSWKT
	f.WorkUnitToMetre = info.LinearUnitToMetre
	if info.Geographic {
		// Station in a transverse Mercator projection centred on the
		// alignment (scale 1 on its central meridian), sample back in lon/lat.
		toLL, err := newT(in, lonLatCRS)
		if err != nil {
			return fail(err)
		}
		ll := append(orb.LineString(nil), a.Line...)
		xs, ys := make([]float64, len(ll)), make([]float64, len(ll))
		for i, p := range ll {
			xs[i], ys[i] = p[0], p[1]
		}
		if err := toLL.Transform(xs, ys); err != nil {
			return fail(fmt.Errorf("locate the alignment in lon/lat: %w", err))
		}
		for i := range ll {
			ll[i] = orb.Point{xs[i], ys[i]}
		}
		def, ok := alignment.LocalTransverseMercator(ll)
		if !ok {
			return fail(errors.New("cannot set up a local projection for the alignment; reproject the DEM to a projected CRS"))
		}
		work = def
		f.WorkUnitToMetre = 1
		if f.WorkToDEM, err = newT(work, info.CRSWKT); err != nil {
			return fail(err)
		}
	} else if !(f.WorkUnitToMetre > 0) {
		return fail(errors.New("the DEM's CRS has no known linear unit; reproject the DEM to a metre or foot CRS"))
	}
	var err error
	if f.ToWork, err = newT(in, work); err != nil {
		return fail(err)
	}
	if f.WorkToLonLat, err = newT(work, lonLatCRS); err != nil {
		return fail(err)
	}
	return f, closeAll, nil
}
