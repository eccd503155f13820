package report

import (
	"io"
	"testing"
)

// BenchmarkLongSection renders a 10,000-station long section (50 km at
// 5 m, with its drops and lower panel).
func BenchmarkLongSection(b *testing.B) {
	s := testSection(10001, 50000)
	b.Logf("%d drops", len(s.Drops))
	for _, f := range []string{"png", "svg"} {
		b.Run(f, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if err := RenderLongSection(io.Discard, f, s); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkGroundProfile renders a 40,001-point ground profile (40 km at
// 1 m), the size `canalstep profile` meets on long alignments.
func BenchmarkGroundProfile(b *testing.B) {
	x, z := testGround(40001, 40000, true)
	g := GroundProfile{Name: "bench", Chainage: x, Ground: z}
	b.ReportAllocs()
	for b.Loop() {
		if err := RenderGroundProfile(io.Discard, "png", g); err != nil {
			b.Fatal(err)
		}
	}
}
