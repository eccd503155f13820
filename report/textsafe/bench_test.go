package textsafe

import (
	"strings"
	"testing"
)

// A station label line of an SVG long section: the typical XMLText input.
func BenchmarkXMLText(b *testing.B) {
	s := "Main canal <reach 2> & drop at 0+250.00"
	b.ReportAllocs()
	b.SetBytes(int64(len(s)))
	for b.Loop() {
		_ = XMLText(s)
	}
}

// A hostile 1 MB value: Terminal reads only what it shows, so the cost is
// that of 80 characters, not of the megabyte.
func BenchmarkTerminalHuge(b *testing.B) {
	s := strings.Repeat("\x1b[31m\u202e", 1<<20/8)
	b.ReportAllocs()
	for b.Loop() {
		_ = Terminal(s)
	}
}

func BenchmarkCSVCell(b *testing.B) {
	cells := []string{"Main canal", "-12.5", "=1+1", "0+250.00"}
	b.ReportAllocs()
	for b.Loop() {
		for _, c := range cells {
			_ = CSVCell(c)
		}
	}
}
