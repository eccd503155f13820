package alignment

import (
	"math"
	"testing"

	"github.com/paulmach/orb"
)

func TestUTMZoneEPSG(t *testing.T) {
	// Zone = floor((lon+180)/6)+1, EPSG 326zz north / 327zz south, and the
	// Norway and Svalbard exceptions: from memory (DMA TM 8358.2, "The
	// Universal Grids", 1989). (15°E, 36°N) → 32633 is also PROJ's answer:
	// cs2cs OGC:CRS84 EPSG:32633 puts it on the central meridian (500000 m);
	// TestUTMZoneAgainstCs2cs checks more points the same way.
	for _, tt := range []struct {
		lon, lat float64
		want     int
	}{
		{15, 36, 32633},
		{-180, 0, 32601},
		{180, 10, 32660},
		{179.9, -10, 32760},
		{0, 0, 32631},
		{-0.0001, 0, 32630},
		{-73.98, 40.75, 32618},
		{151.2, -33.9, 32756},
		{190, 0, 32602},  // wraps to 170°W
		{-186, 0, 32660}, // wraps to 174°E
		{5, 60, 32632},   // south-west Norway: zone 32, not 31
		{2, 60, 32631},
		{5, 64, 32631}, // north of the Norway exception
		{5, 78, 32631}, // Svalbard
		{10, 78, 32633},
		{25, 78, 32635},
		{40, 78, 32637},
		{45, 78, 32638},
		{10, 85, 32632}, // north of 84°: no exception (UTM undefined there)
		{math.NaN(), 0, 0},
		{0, 91, 0},
		{math.Inf(1), 0, 0},
	} {
		if got := UTMZoneEPSG(tt.lon, tt.lat); got != tt.want {
			t.Errorf("UTMZoneEPSG(%v, %v) = %d, want %d", tt.lon, tt.lat, got, tt.want)
		}
	}
}

func TestLooksGeographic(t *testing.T) {
	for _, tt := range []struct {
		line orb.LineString
		want bool
	}{
		{orb.LineString{{15, 36}, {15.1, 36.1}}, true},
		{orb.LineString{{-180, -90}, {180, 90}}, true},
		{orb.LineString{{15, 36}, {500000, 4000000}}, false},
		{orb.LineString{{15, 91}}, false},
		{orb.LineString{{math.NaN(), 0}}, false},
		{nil, false},
	} {
		if got := LooksGeographic(tt.line); got != tt.want {
			t.Errorf("LooksGeographic(%v) = %v, want %v", tt.line, got, tt.want)
		}
	}
}
