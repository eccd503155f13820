package main

import (
	"context"
	"os"
)

// The section of the demo's canal, as the README shows it: 2.5 m³/s in a
// 2 m bed with 1.5:1 sides and n = 0.025, between 0.45 and 0.9 m/s. At the
// velocity limit the flow area is Q/V = 2.778 m² (continuity), so the
// normal depth solves (2 + 1.5 y) y = 2.778: y = 0.849 m, the top width
// 2 + 2·1.5·y = 4.546 m and the wetted perimeter 2 + 2·y·√(1 + 1.5²) =
// 5.060 m (exact geometry; the slopes come from Manning's formula).
func Example_section() {
	run(context.Background(), []string{"section", "--flow", "2.5", "--bottom-width", "2", "--side-slope", "1.5",
		"--roughness", "0.025", "--max-velocity", "0.9", "--min-velocity", "0.45"}, os.Stdout, os.Stderr)
	// Output:
	// Canal section, uniform flow (SI units)
	//   discharge                    2.5 m³/s
	//   bottom width                 2.000 m
	//   side slope                   1.5 H : 1 V
	//   Manning n                    0.025
	//   permissible velocity         0.900 m/s
	//   steepest slope (V at limit)  1.1262e-03 m/m
	//   non-silting velocity         0.450 m/s
	//   flattest slope (V at limit)  1.7026e-04 m/m
	//   design slope (steepest)      1.1262e-03 m/m
	//   normal depth                 0.849 m
	//   critical depth               0.478 m
	//   mean velocity                0.900 m/s
	//   Froude number                0.368 (subcritical)
	//   flow area                    2.778 m²
	//   wetted perimeter             5.060 m
	//   top width                    4.546 m
	//   hydraulic radius             0.549 m
	//   hydraulic depth              0.611 m
	//   specific energy              0.890 m
	//   freeboard                    0.682 m
	//   bank height above bed        1.530 m
	// Freeboard rule: USBR F = sqrt(C·y), C = 0.548 m interpolated in log Q between 1.5 ft at 20 cfs and 2.5 ft at 3000 cfs (Chow 1959 ch. 7 citing USBR).
}
