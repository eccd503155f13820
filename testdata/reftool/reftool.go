// Package reftool finds the reference tools from Debian that canalstep's
// tests check against (gdallocationinfo, cs2cs, geod, glpsol, ...). A missing
// tool fails the test when CI is set (scripts/test.sh installs them all) and
// skips it elsewhere, naming the package to install.
package reftool

import (
	"os"
	"os/exec"
	"testing"
)

// debianPackage names the Debian package that ships each tool.
var debianPackage = map[string]string{
	"gdallocationinfo": "gdal-bin", "gdalinfo": "gdal-bin", "gdalsrsinfo": "gdal-bin", "gdal_translate": "gdal-bin",
	"cs2cs": "proj-bin", "geod": "proj-bin", "glpsol": "glpk-utils", "cbc": "coinor-cbc",
	"xmllint": "libxml2-utils", "ogrinfo": "gdal-bin", "ogr2ogr": "gdal-bin",
	"chromium": "chromium", "pdfinfo": "poppler-utils", "pdftotext": "poppler-utils", "pdftoppm": "poppler-utils",
}

// Need returns the path of the tool called name.
func Need(tb testing.TB, name string) string {
	tb.Helper()
	p, err := exec.LookPath(name)
	if err == nil {
		return p
	}
	pkg := debianPackage[name]
	if pkg == "" {
		pkg = "its Debian package"
	}
	if os.Getenv("CI") != "" {
		tb.Fatalf("%s is needed for this check: install %s (scripts/test.sh does): %v", name, pkg, err)
	}
	tb.Skipf("%s not installed (install %s)", name, pkg)
	return ""
}
