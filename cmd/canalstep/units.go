package main

import (
	"strings"

	"canalstep/report"
)

// Unit handling at the command line's edge: values inside canalstep are SI;
// --units us reads and prints feet and cubic feet per second.

// unitLength is the length of one input length unit in metres.
func unitLength(u report.Units) float64 {
	if u == report.US {
		return report.FootM
	}
	return 1
}

// parseUnits reads the --units flag.
func parseUnits(s string) (report.Units, error) {
	switch strings.ToLower(s) {
	case "si", "metric", "m":
		return report.SI, nil
	case "us", "ft":
		return report.US, nil
	}
	return report.SI, usagef("--units must be si or us, got %q", s)
}

// CfsM3 is one cubic foot per second in m³/s (exact by definition).
const CfsM3 = 0.028316846592

// unitFlow is the size of one input discharge unit in m³/s.
func unitFlow(u report.Units) float64 {
	if u == report.US {
		return CfsM3
	}
	return 1
}

// flowUnit and velocityUnit are the symbols of the output units.
func flowUnit(u report.Units) string {
	if u == report.US {
		return "cfs"
	}
	return "m³/s"
}

func velocityUnit(u report.Units) string { return u.LengthUnit() + "/s" }
