package html_test

import (
	"io"
	"testing"

	"canalstep/report/html"
	"canalstep/report/units"
)

// BenchmarkWrite5km writes the report of a 5 km plan of the fictional
// scheme (501 stations every 10 m with ground cross-sections): five
// long-section sheets, the mass haul and a cross-section at every drop and
// every 500 m.
func BenchmarkWrite5km(b *testing.B) {
	f := newFixture(b, 501, 9, 0, "Main canal", "North offtake")
	if f.err != nil {
		b.Fatal(f.err)
	}
	r := f.report(b, units.SI, nil)
	size := len(write(b, r))
	b.ReportAllocs()
	for b.Loop() {
		if err := html.Write(io.Discard, r); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(size), "bytes/report")
	b.ReportMetric(float64(f.result.Totals.DropCount), "drops")
}
