package main

import (
	"canalstep/report"
	"canalstep/report/units"
)

// Thin adapters for the section and drop commands, which read plain float
// flags in the --units unit and convert them here; everything about units
// lives in package units.

func parseUnits(s string) (report.Units, error) {
	u, err := units.Parse(s)
	if err != nil {
		return u, usagef("--%v", err)
	}
	return u, nil
}

// unitLength is the length of one input length unit in metres.
func unitLength(u report.Units) float64 { return u.ToSI(units.Length, 1) }

// unitFlow is the size of one input discharge unit in m³/s.
func unitFlow(u report.Units) float64 { return u.ToSI(units.Flow, 1) }

func flowUnit(u report.Units) string { return u.FlowUnit() }

func velocityUnit(u report.Units) string { return u.VelocityUnit() }
