package survey

import (
	"io"
	"testing"
)

// BenchmarkStakes times the stake points of the projected plan (121
// stations, 3 drops): the section points and the two batched transforms.
func BenchmarkStakes(b *testing.B) {
	in := build(b, "projected", scenarios()["projected"])
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Stakes(in); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkPlanGeoJSON times the layers of the projected plan written as
// GeoJSON: footprint, centre line, one transform and the writer.
func BenchmarkPlanGeoJSON(b *testing.B) {
	in := build(b, "projected", scenarios()["projected"])
	st := stakesOf(b, in)
	b.ReportAllocs()
	for b.Loop() {
		if err := WritePlanGeoJSON(io.Discard, in, st); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkStakesCSV times stakes.csv of the projected plan.
func BenchmarkStakesCSV(b *testing.B) {
	in := build(b, "projected", scenarios()["projected"])
	st := stakesOf(b, in)
	h, err := NewHeader(in)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		if err := WriteStakesCSV(io.Discard, st, h); err != nil {
			b.Fatal(err)
		}
	}
}
