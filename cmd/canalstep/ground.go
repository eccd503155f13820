package main

import (
	"errors"
	"math"

	flag "github.com/spf13/pflag"

	"canalstep/alignment"
	"canalstep/planner/corridor"
	"canalstep/report/textsafe"
	"canalstep/report/units"
	"canalstep/terrain"
)

// The adapters where terrain meets the corridor stage.
var (
	_ corridor.Ground = (*terrain.DEM)(nil)
	_ corridor.CRS    = terrainCRS{}
)

// terrainCRS gives the corridor stage terrain's transforms.
type terrainCRS struct{}

func (terrainCRS) Transformer(src, dst string) (alignment.Transformer, error) {
	return terrain.SharedTransform(src, dst)
}

func (terrainCRS) Describe(def string) (bool, float64, error) {
	c, err := terrain.CRSInfo(def)
	return c.Geographic, c.LinearUnitToMetre, err
}

// groundFlags are the flags every command that reads a DEM along
// alignments shares: profile, plan, compare and batch.
type groundFlags struct {
	sys                          *units.System
	dem, alignment, alignmentCRS string
	spacing, startChainage       float64 // m (units.Value)
	zUnits, interp               string
	minZ, maxZ                   float64 // valid elevations, m
	curveRadius                  float64 // m; 0: polyline
}

func newGroundFlags(sys *units.System) *groundFlags {
	r := terrain.DefaultValidRange()
	return &groundFlags{sys: sys, spacing: 10, zUnits: "m", interp: "bilinear", minZ: r.Min, maxZ: r.Max}
}

func (g *groundFlags) register(fs *flag.FlagSet) {
	fs.StringVar(&g.dem, "dem", "", "DEM raster: a GeoTIFF/COG, VRT or other elevation format GDAL reads, including /vsi… paths (required)")
	fs.StringVar(&g.alignment, "alignment", "", "GeoJSON file with one or more alignments, and offtakes as Point features (required)")
	fs.StringVar(&g.alignmentCRS, "alignment-crs", "", "CRS of the alignment coordinates, e.g. EPSG:32634 (default: WGS 84 lon/lat as RFC 7946 says, or the file's legacy crs member)")
	L := units.Length
	fs.Var(units.NewValue(&g.spacing, L, g.sys).Within(0.01, 10000, false), "spacing", "station spacing along the alignment; [0.01, 10000] m")
	fs.Var(units.NewValue(&g.startChainage, L, g.sys).Within(-1e9, 1e9, false), "start-chainage", "chainage of the first point")
	fs.StringVar(&g.zUnits, "z-units", g.zUnits, "vertical unit of the DEM values: m, ft or us-ft")
	fs.StringVar(&g.interp, "interp", g.interp, "DEM interpolation: bilinear or nearest")
	fs.Var(units.NewValue(&g.minZ, L, g.sys).Within(-11000, 9000, false), "min-elevation", "lowest plausible ground elevation; DEM values below it are treated as missing")
	fs.Var(units.NewValue(&g.maxZ, L, g.sys).Within(-11000, 9000, false), "max-elevation", "highest plausible ground elevation; DEM values above it are treated as missing")
	fs.Var(units.NewValue(&g.curveRadius, L, g.sys).Within(0, 1e6, false), "curve-radius", "fit circular curves of this radius at the alignment's vertices (or a feature's curve_radius property); 0: a polyline")
}

// scheme is the alignment file read and checked.
type scheme struct {
	alignment.Scheme
}

// readScheme reads the alignment file.
func (g *groundFlags) readScheme() (scheme, error) {
	if g.alignment == "" {
		return scheme{}, usagef("--alignment is required: give the GeoJSON file with the canal alignment")
	}
	data, err := readInput(g.alignment, "alignment file", maxAlignmentBytes)
	if err != nil {
		return scheme{}, err
	}
	sc, err := alignment.ReadScheme(data)
	if err != nil {
		return scheme{}, inputf("alignment file %s: %v", textsafe.Terminal(g.alignment), err)
	}
	return scheme{sc}, nil
}

// openDEM opens the DEM with the flags' options.
func (g *groundFlags) openDEM() (*terrain.DEM, error) {
	if g.dem == "" {
		return nil, usagef("--dem is required: give the DEM raster to sample")
	}
	var method terrain.Method
	switch g.interp {
	case "bilinear":
		method = terrain.Bilinear
	case "nearest":
		method = terrain.Nearest
	default:
		return nil, usagef("--interp must be bilinear or nearest, got %q", textsafe.Clip(g.interp, 80))
	}
	switch g.zUnits {
	case "m", "ft", "us-ft":
	default:
		return nil, usagef("--z-units must be m, ft or us-ft, got %q", textsafe.Clip(g.zUnits, 80))
	}
	if !(g.minZ < g.maxZ) {
		return nil, usagef("--min-elevation must be below --max-elevation")
	}
	r := terrain.Range{Min: g.minZ, Max: g.maxZ}
	dem, err := terrain.Open(g.dem, terrain.Options{ZUnits: g.zUnits, Method: method, ValidRange: &r})
	if err != nil {
		if errors.Is(err, terrain.ErrBadDEM) {
			return nil, usageError{err}
		}
		return nil, err
	}
	return dem, nil
}

// describeDEM turns terrain's description into the corridor's.
func describeDEM(info terrain.Info) corridor.DEM {
	gt := info.GeoTransform
	x0, x1 := gt[0], gt[0]+gt[1]*float64(info.Width)
	y0, y1 := gt[3], gt[3]+gt[5]*float64(info.Height)
	cell := info.CellX * info.LinearUnitToMetre
	if info.Geographic {
		cell = info.CellX * 111_320 // degrees of latitude to metres, for the sampling step only (common practice, no source)
	}
	return corridor.DEM{CRS: info.CRSWKT, Geographic: info.Geographic, UnitToMetre: info.LinearUnitToMetre,
		CellSize: cell, Extent: [4]float64{math.Min(x0, x1), math.Min(y0, y1), math.Max(x0, x1), math.Max(y0, y1)}}
}

// corridorOptions are the stationing options of the flags.
func (g *groundFlags) corridorOptions() corridor.Options {
	return corridor.Options{Spacing: g.spacing, Start: g.startChainage, US: *g.sys == units.US,
		AlignmentCRS: g.alignmentCRS, CurveRadius: g.curveRadius, MaxOfftakeDistance: maxOfftakeDistance}
}

// maxOfftakeDistance is how far (m) an offtake may lie from its alignment
// (common practice, no source: a turnout stands on the canal bank).
const maxOfftakeDistance = 100.0

// crossStep is the spacing (m) of cross-section samples on a DEM of cell
// size cell (m): half a cell, between 0.25 and 2 m (common practice, no
// source: bilinear ground is piecewise quadratic across a cell).
func crossStep(cell float64) float64 {
	return math.Min(2, math.Max(0.25, cell/2))
}

// servedBy returns the offtakes of sc that serve alignment a: those naming
// it or its corridor, and every offtake when the file has one alignment. An
// offtake that names no alignment in a file of several is an error.
func servedBy(sc scheme, a alignment.Alignment) ([]alignment.Offtake, error) {
	var out []alignment.Offtake
	for _, o := range sc.Offtakes {
		switch {
		case o.Alignment == a.Name || (o.Alignment != "" && o.Alignment == a.Overrides.Corridor):
			out = append(out, o)
		case o.Alignment == "" && len(sc.Alignments) == 1:
			out = append(out, o)
		case o.Alignment == "":
			return nil, inputf("offtake %q does not name the alignment it serves and the file has %d alignments; give it an \"alignment\" property",
				textsafe.Terminal(o.Name), len(sc.Alignments))
		}
	}
	return out, nil
}
