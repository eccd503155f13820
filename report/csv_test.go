package report

import (
	"bytes"
	"io"
	"math"
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
// 1 m), the size of the profile benchmark.
func BenchmarkWriteGroundCSV(b *testing.B) {
	p := &alignment.Profile{Stations: make([]alignment.Station, 40000)}
	for i := range p.Stations {
		f := float64(i)
		p.Stations[i] = alignment.Station{Chainage: 12345.67 + f, WorkX: 500000 + 0.7*f, WorkY: 4000000 + 0.3*f,
			Lon: 15.123456789 + 1e-6*f, Lat: 38.1234567 + 1e-6*f, Ground: 123.456 + 0.001*f}
	}
	b.ReportAllocs()
	for b.Loop() {
		if err := WriteGroundCSV(io.Discard, p, SI); err != nil {
			b.Fatal(err)
		}
	}
}
