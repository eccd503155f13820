package landxml_test

import (
	"fmt"
	"math"
	"os"
	"time"

	"canalstep/report/landxml"
)

// Example writes a 120 m straight with one drop of 0.8 m at station 60 m
// and one stake point, in metres on UTM zone 33N.
func Example() {
	a := landxml.Point{Easting: 512000, Northing: 4652000}
	b := landxml.Point{Easting: 512120, Northing: 4652000}
	doc := &landxml.Document{
		Date: time.Date(2024, 3, 9, 0, 0, 0, 0, time.UTC), // the inputs' date
		Unit: landxml.Meter,
		CRS:  landxml.CRS{EPSG: 32633},
		Alignments: []landxml.Alignment{{
			Name:     "Lateral 2",
			Segments: []landxml.Segment{landxml.LineSegment(a, b)},
			Profile: landxml.Profile{Name: "design bed", Points: []landxml.ProfilePoint{
				{Station: 0, Elevation: 50.00},
				{Station: 60, Elevation: 49.97},
				{Station: 60, Elevation: 49.17}, // the drop: same station, crest first
				{Station: 120, Elevation: 49.14},
			}},
			Stakes: []landxml.Stake{{Name: "L2-0", Code: "CL", Point: a, Elevation: math.NaN()}},
		}},
	}
	if err := landxml.Write(os.Stdout, doc); err != nil {
		fmt.Println(err)
	}
	// Output:
	// <?xml version="1.0" encoding="UTF-8"?>
	// <!-- Preliminary design aid only: site survey, geotechnical and structural review and a licensed engineer's approval are required before construction; local codes govern. Drops and hydraulic jumps are drowning hazards: fence them, sign them, allow no public access. -->
	// <LandXML xmlns="http://www.landxml.org/schema/LandXML-1.2" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance" xsi:schemaLocation="http://www.landxml.org/schema/LandXML-1.2 http://www.landxml.org/schema/LandXML-1.2/LandXML-1.2.xsd" version="1.2" date="2024-03-09" time="00:00:00" language="English" readOnly="false">
	//   <Units>
	//     <Metric linearUnit="meter" areaUnit="squareMeter" volumeUnit="cubicMeter" temperatureUnit="celsius" pressureUnit="milliBars" angularUnit="decimal degrees" directionUnit="decimal degrees"/>
	//   </Units>
	//   <CoordinateSystem epsgCode="32633"/>
	//   <Application name="canalstep" desc="irrigation canal design aid: preliminary design only"/>
	//   <Alignments>
	//     <Alignment name="Lateral 2" length="120.0000" staStart="0.0000">
	//       <CoordGeom>
	//         <Line staStart="0.0000" length="120.0000"><Start>4652000.0000 512000.0000</Start><End>4652000.0000 512120.0000</End></Line>
	//       </CoordGeom>
	//       <Profile name="design bed">
	//         <ProfAlign name="design bed">
	//           <PVI>0.0000 50.0000</PVI>
	//           <PVI desc="drop crest">60.0000 49.9700</PVI>
	//           <PVI desc="drop toe">60.0010 49.1700</PVI>
	//           <PVI>120.0000 49.1400</PVI>
	//         </ProfAlign>
	//       </Profile>
	//     </Alignment>
	//   </Alignments>
	//   <CgPoints name="Lateral 2" desc="stake points">
	//     <CgPoint name="L2-0" code="CL">4652000.0000 512000.0000</CgPoint>
	//   </CgPoints>
	// </LandXML>
}
