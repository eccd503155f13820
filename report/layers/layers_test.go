package layers_test

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"testing"
	"unicode/utf8"

	"canalstep/report/layers"
	"canalstep/report/layers/testdata/fixture"
)

// TestFixtureValid checks that the shared fixture passes Validate, hostile
// name and all: text is escaped by writers, not refused.
func TestFixtureValid(t *testing.T) {
	if err := layers.Validate(fixture.Layers()); err != nil {
		t.Fatal(err)
	}
}

// TestValidate checks that each kind of bad input is refused with a message
// naming it. Each case changes one thing in the fixture.
func TestValidate(t *testing.T) {
	tests := []struct {
		name   string
		change func(ls []layers.Layer) []layers.Layer
		want   string
	}{
		{"duplicate layer", func(ls []layers.Layer) []layers.Layer { return append(ls, ls[0]) }, `"centreline" used twice`},
		{"upper-case name", func(ls []layers.Layer) []layers.Layer { ls[0].Name = "Centre"; return ls }, "lower-case letter"},
		{"name with a quote", func(ls []layers.Layer) []layers.Layer { ls[0].Name = `a"b`; return ls }, "lower-case letter"},
		{"name too long", func(ls []layers.Layer) []layers.Layer { ls[0].Name = strings.Repeat("a", 64); return ls }, "64 bytes"},
		{"reserved prefix", func(ls []layers.Layer) []layers.Layer { ls[0].Name = "gpkg_x"; return ls }, "reserved"},
		{"reserved field", func(ls []layers.Layer) []layers.Layer { ls[0].Fields[0].Name = "fid"; return ls }, "reserved"},
		{"duplicate field", func(ls []layers.Layer) []layers.Layer { ls[0].Fields[1].Name = "alignment"; return ls }, "used twice"},
		{"unknown kind", func(ls []layers.Layer) []layers.Layer { ls[0].Kind = 9; return ls }, "geometry kind"},
		{"unknown type", func(ls []layers.Layer) []layers.Layer { ls[0].Fields[0].Type = 0; return ls }, "unknown type"},
		{"too many decimals", func(ls []layers.Layer) []layers.Layer { ls[0].Fields[1].Decimals = 13; return ls }, "13 decimals"},
		{"missing value", func(ls []layers.Layer) []layers.Layer {
			ls[1].Features[0].Values = ls[1].Features[0].Values[:2]
			return ls
		}, "2 values for 3 fields"},
		{"wrong type", func(ls []layers.Layer) []layers.Layer { ls[1].Features[0].Values[1] = layers.Int(3); return ls }, "type integer, want real"},
		{"zero value", func(ls []layers.Layer) []layers.Layer { ls[1].Features[0].Values[1] = layers.Value{}; return ls }, "want real"},
		{"infinite real", func(ls []layers.Layer) []layers.Layer {
			ls[1].Features[0].Values[1] = layers.Num(math.Inf(-1))
			return ls
		}, "out of range"},
		{"huge real", func(ls []layers.Layer) []layers.Layer { ls[1].Features[0].Values[1] = layers.Num(2e15); return ls }, "out of range"},
		{"NUL in text", func(ls []layers.Layer) []layers.Layer { ls[1].Features[0].Values[0] = layers.Str("a\x00"); return ls }, "NUL"},
		{"invalid UTF-8", func(ls []layers.Layer) []layers.Layer { ls[1].Features[0].Values[0] = layers.Str("a\xc3"); return ls }, "UTF-8"},
		{"text too long", func(ls []layers.Layer) []layers.Layer {
			ls[1].Features[0].Values[0] = layers.Str(strings.Repeat("x", layers.MaxTextBytes+1))
			return ls
		}, "at most 4096"},
		{"NaN coordinate", func(ls []layers.Layer) []layers.Layer { ls[1].Features[0].Parts[0][0][1] = math.NaN(); return ls }, "not finite"},
		{"point with two positions", func(ls []layers.Layer) []layers.Layer {
			ls[1].Features[0].Parts[0] = append(ls[1].Features[0].Parts[0], layers.Coord{1, 2})
			return ls
		}, "exactly one part"},
		{"line of one position", func(ls []layers.Layer) []layers.Layer {
			ls[0].Features[0].Parts[0] = ls[0].Features[0].Parts[0][:1]
			return ls
		}, "two distinct"},
		{"line of one repeated position", func(ls []layers.Layer) []layers.Layer {
			c := ls[0].Features[0].Parts[0][0]
			ls[0].Features[0].Parts[0] = []layers.Coord{c, c, c}
			return ls
		}, "two distinct"},
		{"open ring", func(ls []layers.Layer) []layers.Layer {
			r := ls[4].Features[0].Parts[0]
			r[len(r)-1][0] += 1
			return ls
		}, "not closed"},
		{"ring of three", func(ls []layers.Layer) []layers.Layer {
			ls[4].Features[0].Parts[0] = []layers.Coord{{0, 0}, {1, 0}, {0, 0}}
			return ls
		}, "3 positions, want 4"},
		{"flat ring", func(ls []layers.Layer) []layers.Layer {
			ls[4].Features[0].Parts[0] = []layers.Coord{{0, 0}, {1, 0}, {2, 0}, {0, 0}}
			return ls
		}, "no area"},
		{"polygon without rings", func(ls []layers.Layer) []layers.Layer { ls[4].Features[0].Parts = nil; return ls }, "1 to 4096 rings"},
	}
	for _, tc := range tests {
		err := layers.Validate(tc.change(fixture.Layers()))
		if err == nil || !errors.Is(err, layers.ErrInvalid) || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want ErrInvalid containing %q", tc.name, err, tc.want)
		}
	}
}

// TestFormatFixed checks fixed-decimal text: correct rounding of the binary
// value, trimming, and no "-0". Expected strings are exact decimal
// arithmetic on the binary values (0.125 and 2.675 are 0.125 and
// 2.67499999999999982236431605997495353221893310546875 in binary, from
// memory, checked by strconv with 60 digits below).
func TestFormatFixed(t *testing.T) {
	tests := []struct {
		v    float64
		dec  int
		trim bool
		want string
	}{
		{1234.5678, 3, false, "1234.568"},
		{12.5, 3, false, "12.500"},
		{12.5, 3, true, "12.5"},
		{3, 3, true, "3"},
		{-0.0004, 3, false, "0.000"},
		{-0.0004, 3, true, "0"},
		{math.Copysign(0, -1), 8, true, "0"},
		{-0.0006, 3, true, "-0.001"},
		{2.675, 2, false, "2.67"},
		{0.125, 2, false, "0.12"}, // ties go to even
		{15.144941936139, 8, true, "15.14494194"},
		{-180, 8, true, "-180"},
		{100, 0, true, "100"},
	}
	for _, tc := range tests {
		if got := string(layers.FormatFixed(nil, tc.v, tc.dec, tc.trim)); got != tc.want {
			t.Errorf("FormatFixed(%v, %d, %v) = %q, want %q", tc.v, tc.dec, tc.trim, got, tc.want)
		}
	}
	if s := strconv.FormatFloat(2.675, 'f', 60, 64); !strings.HasPrefix(s, "2.67499999999999982236431605997495353221893310546875") {
		t.Errorf("2.675 is %s in binary", s)
	}
}

// TestSignedArea checks the shoelace formula on exact cases: the unit
// square (area 1) both ways, and a 100 m × 20 m rectangle at UTM-sized
// coordinates (2000 m², exact in binary).
func TestSignedArea(t *testing.T) {
	sq := []layers.Coord{{0, 0}, {1, 0}, {1, 1}, {0, 1}, {0, 0}}
	if a := layers.SignedArea(sq); a != 1 {
		t.Errorf("counterclockwise unit square: %v, want 1", a)
	}
	rev := []layers.Coord{{0, 0}, {0, 1}, {1, 1}, {1, 0}, {0, 0}}
	if a := layers.SignedArea(rev); a != -1 {
		t.Errorf("clockwise unit square: %v, want -1", a)
	}
	big := []layers.Coord{{512000, 4652000}, {512100, 4652000}, {512100, 4652020}, {512000, 4652020}, {512000, 4652000}}
	if a := layers.SignedArea(big); a != 2000 {
		t.Errorf("100 m x 20 m: %v, want 2000", a)
	}
}

// TestOriented checks the right-hand rule: a clockwise exterior and a
// counterclockwise hole are reversed, in copies, and rings already right
// are shared.
func TestOriented(t *testing.T) {
	ext := []layers.Coord{{0, 0}, {0, 10}, {10, 10}, {10, 0}, {0, 0}} // clockwise
	hole := []layers.Coord{{2, 2}, {4, 2}, {4, 4}, {2, 4}, {2, 2}}    // counterclockwise
	in := [][]layers.Coord{ext, hole}
	out := layers.Oriented(in)
	if layers.SignedArea(out[0]) <= 0 || layers.SignedArea(out[1]) >= 0 {
		t.Errorf("areas %v, %v: want exterior > 0, hole < 0", layers.SignedArea(out[0]), layers.SignedArea(out[1]))
	}
	if in[0][1] != (layers.Coord{0, 10}) || in[1][1] != (layers.Coord{4, 2}) {
		t.Error("Oriented changed its input")
	}
	if out[0][0] != out[0][len(out[0])-1] {
		t.Error("reversed ring is not closed")
	}
	right := [][]layers.Coord{out[0], out[1]}
	if again := layers.Oriented(right); &again[0][0] != &right[0][0] || &again[1][0] != &right[1][0] {
		t.Error("rings already oriented were copied")
	}
}

// TestText checks the cleaning helper: what CheckText refuses becomes
// U+FFFD, the rest is kept, and long text is cut at a rune boundary.
func TestText(t *testing.T) {
	tests := []struct{ in, want string }{
		{"plain", "plain"},
		{fixture.HostileName, fixture.HostileName},
		{"a\x00b", "a\uFFFDb"},
		{"a\xffb", "a\uFFFDb"},
	}
	for _, tc := range tests {
		if got := layers.Text(tc.in); got != tc.want {
			t.Errorf("Text(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
	long := strings.Repeat("é", layers.MaxTextBytes) // 2 bytes each
	got := layers.Text(long)
	if len(got) != layers.MaxTextBytes || !utf8.ValidString(got) || layers.CheckText(got) != nil {
		t.Errorf("Text of %d bytes: %d bytes, valid %v", len(long), len(got), utf8.ValidString(got))
	}
}

// TestInvisible checks which characters writers escape: controls, the
// bidirectional controls of Unicode Standard Annex #9 (U+202A–U+202E,
// U+2066–U+2069), zero-width characters, the line and paragraph
// separators; not letters, spaces or emoji.
func TestInvisible(t *testing.T) {
	for _, r := range []rune{0x01, 0x1b, '\t', '\n', 0x7f, 0x85, 0x200b, 0x200d, 0x200e, 0x202a, 0x202e, 0x2066, 0x2069, 0x2028, 0x2029, 0xfeff, 0xe0001} {
		if !layers.Invisible(r) {
			t.Errorf("%U: not invisible", r)
		}
	}
	for _, r := range []rune{'a', ' ', 'é', '³', '<', 0x00a0, 0x1f30a, 0xfffd} {
		if layers.Invisible(r) {
			t.Errorf("%U: invisible", r)
		}
	}
}

// FuzzFormatFixed checks that the text parses back to the nearest value of
// that many decimals (within half a unit of the last place, plus one ulp of
// relative slack for the decimal-to-binary step), never reads "-0", and
// that Round agrees with it.
func FuzzFormatFixed(f *testing.F) {
	f.Add(1234.5678, uint8(3))
	f.Add(-0.0004, uint8(3))
	f.Add(2.675, uint8(2))
	f.Add(1e15, uint8(12))
	f.Fuzz(func(t *testing.T, v float64, d uint8) {
		dec := int(d % (layers.MaxDecimals + 1))
		if math.IsNaN(v) || math.IsInf(v, 0) || math.Abs(v) > layers.MaxRealMagnitude {
			t.Skip()
		}
		for _, trim := range []bool{false, true} {
			s := string(layers.FormatFixed(nil, v, dec, trim))
			p, err := strconv.ParseFloat(s, 64)
			if err != nil {
				t.Fatalf("%q: %v", s, err)
			}
			half := 0.5 * math.Pow(10, -float64(dec))
			if math.Abs(p-v) > half*(1+1e-9)+4*math.Abs(v)*0x1p-52 {
				t.Fatalf("FormatFixed(%v, %d) = %q, off by %g", v, dec, s, p-v)
			}
			if strings.HasPrefix(s, "-") && p == 0 {
				t.Fatalf("FormatFixed(%v, %d) = %q", v, dec, s)
			}
		}
		fl := layers.Field{Decimals: dec}
		if r := fl.Round(v); fmt.Sprint(r) != fmt.Sprint(mustParse(t, string(layers.FormatFixed(nil, v, dec, false)))) {
			t.Fatalf("Round(%v) = %v", v, r)
		}
	})
}

func mustParse(t *testing.T, s string) float64 {
	p, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// FuzzValidate builds a one-feature polygon layer from fuzzed numbers and
// text: Validate must not panic, and a valid ring must come out of Oriented
// counterclockwise.
func FuzzValidate(f *testing.F) {
	f.Add(0.0, 0.0, 10.0, 0.0, 10.0, 10.0, "name", 1.5)
	f.Add(0.0, 0.0, 0.0, 10.0, 10.0, 10.0, fixture.HostileName, math.NaN())
	f.Add(math.Inf(1), 0.0, 1.0, 1.0, 2.0, 2.0, "a\x00", 1e300)
	f.Fuzz(func(t *testing.T, x0, y0, x1, y1, x2, y2 float64, s string, v float64) {
		ring := []layers.Coord{{x0, y0}, {x1, y1}, {x2, y2}, {x0, y0}}
		ls := []layers.Layer{{
			Name: "footprint", Kind: layers.Polygon,
			Fields:   []layers.Field{{Name: "name", Type: layers.String}, {Name: "v", Type: layers.Real, Decimals: 3}},
			Features: []layers.Feature{layers.PolygonFeature([][]layers.Coord{ring}, layers.Str(s), layers.Num(v))},
		}}
		if err := layers.Validate(ls); err != nil {
			if !errors.Is(err, layers.ErrInvalid) {
				t.Fatalf("error %v does not wrap ErrInvalid", err)
			}
			return
		}
		if a := layers.SignedArea(layers.Oriented(ls[0].Features[0].Parts)[0]); !(a > 0) {
			t.Fatalf("oriented exterior ring has area %v", a)
		}
	})
}
