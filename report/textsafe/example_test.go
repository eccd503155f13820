package textsafe_test

import (
	"fmt"

	"canalstep/report/textsafe"
)

// A name read from a GeoJSON file that would colour the terminal red and
// reverse the rest of the line is shown with its controls made visible.
func ExampleTerminal() {
	name := "Main\x1b[31m canal \u202elanac"
	fmt.Printf("alignment %s: no DEM cells under it\n", textsafe.Terminal(name))
	// Output: alignment Main\x1b[31m canal \u202elanac: no DEM cells under it
}

// Clip cuts a long value at a whole character or escape and says so.
func ExampleClip() {
	fmt.Println(textsafe.Clip("Northern distributary canal, reach 4", 20))
	fmt.Println(textsafe.Clip("bad\x00value", 6))
	// Output:
	// Northern distributa…
	// bad…
}

// XMLText escapes a name for SVG, HTML or LandXML text and attributes, and
// drops what XML cannot hold.
func ExampleXMLText() {
	name := "A & B <branch>\x00\x1b"
	fmt.Printf("<text data-name=\"%s\">%s</text>\n", textsafe.XMLText(name), textsafe.XMLText(name))
	// Output: <text data-name="A &amp; B &lt;branch&gt;">A &amp; B &lt;branch&gt;</text>
}

// XMLChars only drops what XML cannot hold, for libraries that escape
// markup themselves (gonum/plot's SVG canvas).
func ExampleXMLChars() {
	fmt.Printf("%q\n", textsafe.XMLChars("Main <canal>\x1b[0m\ufffe"))
	// Output: "Main <canal>[0m"
}

// CSVCell neutralises a formula in a name cell but leaves numbers and
// station labels alone.
func ExampleCSVCell() {
	for _, cell := range []string{"=HYPERLINK(\"x\")", "-12.5", "0+250.00", "@SUM(A1)", "Main canal"} {
		fmt.Println(textsafe.CSVCell(cell))
	}
	// Output:
	// '=HYPERLINK("x")
	// -12.5
	// 0+250.00
	// '@SUM(A1)
	// Main canal
}
