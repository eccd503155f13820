package report

import (
	"bytes"
	"io"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"canalstep/alignment"
)

// TestFixed checks the fixed-decimal formatting every CSV uses: correct
// rounding of the decimal value, no "-0.000" (a surveyor reads it as a
// sign error), NaN as an empty field (spreadsheets read it as missing).
// Expected strings are exact decimal arithmetic.
func TestFixed(t *testing.T) {
	tests := []struct {
		v    float64
		prec int
		want string
	}{
		{1234.5678, 3, "1234.568"},
		{-1.5, 1, "-1.5"},
		{-0.0004, 3, "0.000"},
		{math.Copysign(0, -1), 2, "0.00"},
		{-0.0006, 3, "-0.001"},
		{21.496112481, 8, "21.49611248"},
		{math.NaN(), 3, ""},
	}
	for _, tc := range tests {
		if got := fixed(tc.v, tc.prec); got != tc.want {
			t.Errorf("fixed(%v, %d) = %q, want %q", tc.v, tc.prec, got, tc.want)
		}
	}
}

// TestFixedMatchesStrconv checks the fast path of appendFixed against
// strconv's correctly rounded formatting (the reference; only "-0…" differs,
// by design) over random values of every magnitude the CSVs meet, and over
// values at and next to decimal ties, where the fast path must give way.
func TestFixedMatchesStrconv(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	var vals []float64
	for range 40000 {
		vals = append(vals, (rng.Float64()-0.5)*math.Pow(10, float64(rng.IntN(14)-3)))
	}
	for _, v := range []float64{0.5, 1.5, 2.5, -0.5, 0.0005, 1.0005, 2.675, 1.005, 0.125, -0.125, 4000000.0005, 15.123456785,
		1 << 36, -(1 << 36), 1e11, 6.8719476735e10, math.MaxFloat64, math.SmallestNonzeroFloat64, math.Inf(1), math.Inf(-1), 0} {
		vals = append(vals, v, math.Nextafter(v, math.Inf(1)), math.Nextafter(v, math.Inf(-1)))
	}
	for _, v := range vals {
		for prec := range 11 {
			if got, want := fixed(v, prec), strconvFixed(v, prec); got != want {
				t.Fatalf("fixed(%v, %d) = %q, strconv gives %q", v, prec, got, want)
			}
		}
	}
}

// strconvFixed is fixed's reference: strconv's correctly rounded decimal
// formatting, with the sign of a value that rounds to zero dropped.
func strconvFixed(v float64, prec int) string {
	s := strconv.FormatFloat(v, 'f', prec, 64)
	if strings.Trim(s, "-0.") == "" {
		s = strings.TrimPrefix(s, "-")
	}
	return s
}

// FuzzFixed checks appendFixed against strconv for any value and precision.
func FuzzFixed(f *testing.F) {
	f.Add(2.675, 2)
	f.Add(-0.0004, 3)
	f.Fuzz(func(t *testing.T, v float64, prec int) {
		prec = min(max(prec, 0), 12)
		want := strconvFixed(v, prec)
		if math.IsNaN(v) {
			want = ""
		}
		if got := fixed(v, prec); got != want {
			t.Errorf("fixed(%v, %d) = %q, strconv gives %q", v, prec, got, want)
		}
	})
}

// TestWriteGroundCSVLabels checks that a station's label is written as the
// corridor stage set it when it is in the units' notation, and formatted
// from the chainage when it is not (a metric label in a US run) or absent.
func TestWriteGroundCSVLabels(t *testing.T) {
	p := &alignment.Profile{Stations: []alignment.Station{
		{Chainage: 381, Label: "0+381.00"},
		{Chainage: 381, Label: "12+50.00"},
		{Chainage: 381},
	}}
	for _, tc := range []struct {
		u    Units
		want []string
	}{
		{SI, []string{"0+381.00", "0+381.00", "0+381.00"}},
		{US, []string{"12+50.00", "12+50.00", "12+50.00"}},
	} {
		var b bytes.Buffer
		if err := WriteGroundCSV(&b, p, tc.u); err != nil {
			t.Fatal(err)
		}
		lines := strings.Split(strings.TrimSpace(b.String()), "\n")[1:]
		for i, l := range lines {
			if got := l[:strings.IndexByte(l, ',')]; got != tc.want[i] {
				t.Errorf("%v: row %d label %q, want %q", tc.u, i, got, tc.want[i])
			}
		}
	}
}

// TestWriteGroundCSV checks the header, the units conversion at the edge
// (1250 ft = 381 m exactly, by the definition of the foot) and the row
// layout.
func TestWriteGroundCSV(t *testing.T) {
	p := &alignment.Profile{Stations: []alignment.Station{{Chainage: 381, WorkX: 500000.1234, WorkY: 4000000, Lon: 15.5, Lat: -36.25, Ground: 30.48}}}
	var b bytes.Buffer
	if err := WriteGroundCSV(&b, p, US); err != nil {
		t.Fatal(err)
	}
	want := "station,chainage_ft,easting,northing,lon,lat,ground_ft\n12+50.00,1250.000,500000.123,4000000.000,15.50000000,-36.25000000,100.000\n"
	if b.String() != want {
		t.Errorf("got\n%s\nwant\n%s", b.String(), want)
	}
}

// BenchmarkWriteGroundCSV writes a 40,000-station ground profile (40 km at
// 1 m), the size of the profile benchmark, its stations labelled as the
// corridor stage labels them.
func BenchmarkWriteGroundCSV(b *testing.B) {
	p := &alignment.Profile{Stations: make([]alignment.Station, 40000)}
	for i := range p.Stations {
		f := float64(i)
		p.Stations[i] = alignment.Station{Chainage: 12345.67 + f, WorkX: 500000 + 0.7*f, WorkY: 4000000 + 0.3*f,
			Lon: 15.123456789 + 1e-6*f, Lat: 38.1234567 + 1e-6*f, Ground: 123.456 + 0.001*f}
		p.Stations[i].Label = alignment.FormatStation(p.Stations[i].Chainage, false)
	}
	b.ReportAllocs()
	for b.Loop() {
		if err := WriteGroundCSV(io.Discard, p, SI); err != nil {
			b.Fatal(err)
		}
	}
}
