package terrain_test

import (
	"math"
	"path/filepath"
	"strings"
	"testing"

	"canalstep/terrain"
)

// TestInvalidCellsFloat32 checks that cells holding values no DEM of the
// Earth can hold are treated as nodata, in both methods: the float32 fill
// values 3e38 and -3.4e38 (common practice, no source: what "missing" is
// written as when nodata is not set), ±Inf, NaN, a 1e9 spike and -32768
// written as a float. The surface around them is the plane 100 + c + r m,
// so every other sample has a value known by hand.
func TestInvalidCellsFloat32(t *testing.T) {
	const w, h = 16, 12
	g := planar(w, h, 100, 1, 1)
	specials := []struct {
		name string
		c, r int
		v    float32
	}{
		{"3e38", 2, 2, 3e38},
		{"-3.4e38", 5, 2, -3.4e38},
		{"+Inf", 8, 2, float32(math.Inf(1))},
		{"-Inf", 11, 2, float32(math.Inf(-1))},
		{"NaN", 2, 7, float32(math.NaN())},
		{"1e9 spike", 5, 7, 1e9},
		{"-32768 as float", 8, 7, -32768},
	}
	for _, s := range specials {
		g.Data[s.r*w+s.c] = s.v
	}
	path := mustWriteDEM(t, t.TempDir(), "specials.tif", g, terrain.WithTileSize(16))
	at := func(c, r float64) (float64, float64) { return fxX0 + (c+0.5)*fxCell, fxY0 - (r+0.5)*fxCell }

	for _, m := range []terrain.Method{terrain.Nearest, terrain.Bilinear} {
		d := mustOpen(t, path, terrain.Options{Method: m})
		for _, s := range specials {
			c, r := float64(s.c), float64(s.r)
			cases := []struct {
				what   string
				c, r   float64
				nan    bool
				want   float64 // m, when not NaN: the plane
				method terrain.Method
			}{
				{"on the cell", c + 0.2, r - 0.1, true, 0, m},
				{"next cell centre (zero weight)", c + 1, r, false, 100 + c + 1 + r, terrain.Bilinear},
				{"stencil corner on it", c - 0.5, r - 0.5, true, 0, terrain.Bilinear},
				{"nearest beside it", c - 0.6, r, false, 100 + c - 1 + r, terrain.Nearest},
			}
			for _, tc := range cases {
				if tc.method != m {
					continue
				}
				x, y := at(tc.c, tc.r)
				out := []float64{0}
				if err := d.Sample([]float64{x}, []float64{y}, out); err != nil {
					t.Fatalf("%v %s %s: %v", m, s.name, tc.what, err)
				}
				switch {
				case tc.nan && !math.IsNaN(out[0]):
					t.Errorf("%v, %s, %s: got %v m, want NaN", m, s.name, tc.what, out[0])
				case !tc.nan && math.Abs(out[0]-tc.want) > 1e-9: // exact plane, float64 rounding only
					t.Errorf("%v, %s, %s: got %v m, want %v m", m, s.name, tc.what, out[0], tc.want)
				}
			}
		}
		if got, want := d.Info().ValidRange, terrain.DefaultValidRange(); got != want {
			t.Errorf("Info().ValidRange = %v, want the default %v", got, want)
		}
	}
}

// TestInvalidInt16 checks -32768, the Int16 fill value (common practice, no
// source; SRTM tiles use it for voids), with and without the band's nodata
// set: NaN either way, in both methods.
func TestInvalidInt16(t *testing.T) {
	const w, h = 8, 8
	data := make([]int16, w*h)
	for i := range data {
		data[i] = int16(200 + i) // m
	}
	data[3*w+3] = -32768
	dir := t.TempDir()
	nd := -32768.0
	paths := map[string]string{
		"nodata set":   filepath.Join(dir, "nd.tif"),
		"nodata unset": filepath.Join(dir, "plain.tif"),
	}
	mustWriteInt16(t, paths["nodata set"], w, h, data, 1, &nd)
	mustWriteInt16(t, paths["nodata unset"], w, h, data, 1, nil)
	for what, p := range paths {
		for _, m := range []terrain.Method{terrain.Nearest, terrain.Bilinear} {
			d := mustOpen(t, p, terrain.Options{Method: m})
			if d.Info().HasNoData != (what == "nodata set") {
				t.Fatalf("%s: HasNoData = %v", what, d.Info().HasNoData)
			}
			x, y := cellCentre(3, 3)
			xs := []float64{x + 2, x - 5, x + 30}
			ys := []float64{y - 1, y + 5, y - 30}
			out := make([]float64, 3)
			if err := d.Sample(xs, ys, out); err != nil {
				t.Fatal(err)
			}
			// Point 3 sits on cell (6, 6)'s centre: 200 + 6·8 + 6 = 254 m.
			if !math.IsNaN(out[0]) || !math.IsNaN(out[1]) || out[2] != 254 {
				t.Errorf("%s, %v: got %v, want [NaN NaN 254]", what, m, out)
			}
		}
	}
}

// TestValidRangeUnits checks that the range applies to metres, after the
// band's scale and the vertical unit (international foot = 0.3048 m
// exactly, from memory), and that a range given is used as given.
func TestValidRangeUnits(t *testing.T) {
	dir := t.TempDir()
	one := func(name string, v float32, opts ...terrain.WriteOption) string {
		g := planar(4, 4, 0, 0, 0)
		for i := range g.Data {
			g.Data[i] = v
		}
		return mustWriteDEM(t, dir, name, g, opts...)
	}
	tests := []struct {
		name string
		path string
		opt  terrain.Options
		want float64 // m; NaN when invalid
	}{
		{"29000 ft = 8839.2 m", one("ft29.tif", 29000), terrain.Options{ZUnits: "ft"}, 29000 * 0.3048},
		{"30000 ft = 9144 m, over 9000", one("ft30.tif", 30000), terrain.Options{ZUnits: "ft"}, math.NaN()},
		{"30000 m in dm = 3000 m", one("dm.tif", 30000, terrain.WithScaleOffset(0.1, 0)), terrain.Options{}, 3000},
		{"-450 m, Dead Sea shore", one("low.tif", -450), terrain.Options{}, -450},
		{"-600 m, under -500", one("deep.tif", -600), terrain.Options{}, math.NaN()},
		{"-600 m, range widened", one("deep2.tif", -600), terrain.Options{ValidRange: &terrain.Range{Min: -11000, Max: 9000}}, -600},
		{"0 m, zero range admits 0", one("zero.tif", 0), terrain.Options{ValidRange: &terrain.Range{}}, 0},
		{"1 m, zero range", one("one.tif", 1), terrain.Options{ValidRange: &terrain.Range{}}, math.NaN()},
		{"offset moves into range", one("off.tif", 9500, terrain.WithScaleOffset(1, -1000)), terrain.Options{}, 8500},
	}
	x, y := cellCentre(1, 1)
	for _, tt := range tests {
		for _, m := range []terrain.Method{terrain.Nearest, terrain.Bilinear} {
			opt := tt.opt
			opt.Method = m
			d := mustOpen(t, tt.path, opt)
			out := []float64{0}
			if err := d.Sample([]float64{x + 3}, []float64{y}, out); err != nil {
				t.Fatal(err)
			}
			if math.IsNaN(tt.want) != math.IsNaN(out[0]) || !math.IsNaN(tt.want) && math.Abs(out[0]-tt.want) > 1e-9 {
				t.Errorf("%s, %v: got %v m, want %v m", tt.name, m, out[0], tt.want)
			}
		}
	}

	good := one("good.tif", 10)
	for _, r := range []terrain.Range{{Min: math.NaN(), Max: 1}, {Min: 0, Max: math.Inf(1)}, {Min: 5, Max: 4}} {
		d, err := terrain.Open(good, terrain.Options{ValidRange: &r})
		if err == nil {
			d.Close()
			t.Errorf("range %v accepted", r)
			continue
		}
		if !strings.Contains(err.Error(), "valid elevation range") {
			t.Errorf("range %v: error %q does not name the range", r, err)
		}
	}
}
