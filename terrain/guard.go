package terrain

import (
	"bytes"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"unicode"
)

// Errors by which [Open] refuses a DEM as input. Every error Open returns
// for the path or the file given (not for the options) matches ErrBadDEM
// with errors.Is, and those below match their own sentinel too; a missing
// file also matches fs.ErrNotExist. A CLI maps ErrBadDEM to its bad-input
// exit code.
var (
	// ErrBadDEM marks every error that says the DEM given cannot be used
	// as it is: the path, the file, its format or its georeferencing.
	ErrBadDEM = errors.New("unusable DEM")
	// ErrFormatRefused: a raster format outside the allow-list (see
	// [DEMDrivers]), or a GDAL connection string such as MEM:::… in place
	// of a file name.
	ErrFormatRefused = errors.New("raster format or data source not accepted")
	// ErrVRTRefused: a VRT that uses something canalstep never lets GDAL
	// do (raw bands, Python pixel functions, sources that are not raster
	// files), or one too large or too deeply nested to inspect.
	ErrVRTRefused = errors.New("VRT content not accepted")
	// ErrNotAFile: a directory, device, pipe, empty file or system
	// pseudo-file given as a DEM or named by a VRT.
	ErrNotAFile = errors.New("not a raster file")
)

// refusal is an error by which Open turns a DEM down. It matches ErrBadDEM
// and, when set, its kind.
type refusal struct {
	kind error
	msg  string
}

func (e *refusal) Error() string { return e.msg }

func (e *refusal) Unwrap() []error {
	if e.kind == nil {
		return []error{ErrBadDEM}
	}
	return []error{e.kind, ErrBadDEM}
}

func refuse(kind error, format string, args ...any) error {
	return &refusal{kind: kind, msg: fmt.Sprintf(format, args...)}
}

// Limits of the inspection, so that a hostile VRT cannot make it read or
// loop without end.
const (
	maxVRTBytes = 16 << 20 // size of one VRT file, bytes (16 MiB)
	maxVRTDepth = 4        // VRT files in a chain of VRTs naming VRTs
	maxChecked  = 100_000  // files checked for one DEM, sources and side-cars of all levels
	sniffBytes  = 1024     // the header GDAL reads to identify a file
)

// role is what a checked file is to the DEM; it words the fix.
type role int

const (
	asDEM     role = iota // the path given to Open
	asSource              // a file a VRT names
	asSidecar             // an overview, mask or .aux file GDAL may open beside another
)

func (r role) fix() string {
	switch r {
	case asSource:
		return "point the VRT at a raster file"
	case asSidecar:
		return "delete that file or rebuild it with gdaladdo"
	}
	return "give the path of a raster file"
}

// vsiAllowed are the GDAL virtual file systems a DEM or a VRT source may
// use: in-memory files, archives and object stores. Refused: /vsisubfile/,
// /vsisparse/ and /vsicrypt/ (byte ranges of other files), /vsistdin/ and
// the rest.
var vsiAllowed = []string{"/vsimem/", "/vsizip/", "/vsigzip/", "/vsitar/", "/vsicurl/",
	"/vsis3/", "/vsigs/", "/vsiaz/", "/vsiadls/", "/vsioss/", "/vsiswift/", "/vsiwebhdfs/"}

// vsiWrappers are the allowed file systems whose path continues with the
// path of another file (an archive).
var vsiWrappers = []string{"/vsizip/", "/vsigzip/", "/vsitar/"}

// systemDirs hold pseudo-files (process memory, devices) that must never be
// read as rasters.
var systemDirs = []string{"/proc", "/sys", "/dev"}

// checkDEM inspects the DEM at path before GDAL opens it: the path must
// name a regular, non-empty raster file (locally or through an allowed
// /vsi file system), never a connection string such as MEM:::…; a VRT is
// read (bounded) and refused when it uses raw bands, Python pixel
// functions, open options or sources that fail the same checks, which
// apply to nested VRTs in turn. Overview, mask and .aux files that GDAL
// may open beside a file are checked too.
func checkDEM(path string) error {
	in := inspector{open: map[string]bool{}, checked: map[string]int{}, dirs: map[string][]string{}}
	return in.check(path, "DEM "+showName(path), 0, asDEM)
}

// inspector carries the state of one checkDEM.
type inspector struct {
	open    map[string]bool     // VRTs being inspected: the chain from the DEM down
	checked map[string]int      // file → deepest VRT level at which it was checked
	dirs    map[string][]string // folder → its entries, for side-car lookups
}

// check checks the file name at VRT level level (0 for the DEM, 1 for the
// sources of a top-level VRT, …). about words the file in messages, its
// name included.
func (in *inspector) check(name, about string, level int, r role) error {
	fix := r.fix()
	vsi, problem, kind := classify(name)
	if problem != "" {
		return refuse(kind, "%s %s", about, withFix(problem, fix))
	}

	size, key, err := statFile(name, vsi)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			if r == asDEM {
				return refuse(fs.ErrNotExist, "cannot open DEM %s: No such file or directory; check the path", showName(name))
			}
			return refuse(fs.ErrNotExist, "%s does not exist; fix the path in the VRT or restore the file", about)
		}
		var np *notPlain
		if errors.As(err, &np) {
			return refuse(ErrNotAFile, "%s %s; %s", about, np.what, np.fix(fix))
		}
		return refuse(nil, "%s cannot be read: %v", about, err)
	}
	if in.open[key] {
		return refuse(ErrVRTRefused, "%s is a VRT that names itself, directly or through other VRTs; remove that source", about)
	}
	// A file that passed at this level or a deeper one passes again; met
	// at a deeper level than before, a VRT has fewer levels left to nest.
	if done, ok := in.checked[key]; ok && done >= level {
		return nil
	}
	if len(in.checked) >= maxChecked {
		return refuse(ErrVRTRefused, "%s names more than %d files through its VRTs, more than canalstep inspects; build a smaller VRT over the canal's area (gdalbuildvrt -te …) or convert it to a GeoTIFF",
			rootOf(about), maxChecked)
	}
	in.checked[key] = level

	for _, sc := range in.sidecars(name, vsi) {
		if err := in.check(sc, about+": its side-car file "+showName(baseName(sc)), level, asSidecar); err != nil {
			return err
		}
	}

	head, err := readHead(name, vsi, sniffBytes)
	if err != nil {
		return refuse(nil, "%s cannot be read: %v", about, err)
	}
	if !bytes.Contains(head, []byte("<VRTDataset")) && !strings.EqualFold(extOf(name), ".vrt") {
		if r == asDEM {
			return nil // GDALOpenEx with the allow-list decides the format
		}
		switch identify(name) {
		case "":
			return refuse(ErrFormatRefused, "%s is not in a raster format canalstep reads (%s); convert it with gdal_translate -of GTiff and point to the GeoTIFF",
				about, formatList())
		case "VRT": // GDAL sees a VRT we did not: refuse rather than guess
			return refuse(ErrVRTRefused, "%s is a VRT canalstep cannot inspect; %s", about, fix)
		}
		return nil
	}

	if level+1 > maxVRTDepth {
		return refuse(ErrVRTRefused, "%s is a VRT nested more than %d deep; flatten the VRTs (gdalbuildvrt over the rasters themselves) or convert to a GeoTIFF",
			about, maxVRTDepth)
	}
	if size > maxVRTBytes {
		return refuse(ErrVRTRefused, "%s is a VRT of %.1f MiB, over canalstep's %d MiB limit; build a VRT over the canal's area only (gdalbuildvrt -te …) or convert it to a GeoTIFF",
			about, float64(size)/(1<<20), maxVRTBytes>>20)
	}
	data, err := readHead(name, vsi, maxVRTBytes+1)
	if err != nil {
		return refuse(nil, "%s cannot be read: %v", about, err)
	}
	if len(data) > maxVRTBytes {
		return refuse(ErrVRTRefused, "%s is a VRT over canalstep's %d MiB limit; build a VRT over the canal's area only (gdalbuildvrt -te …) or convert it to a GeoTIFF",
			about, maxVRTBytes>>20)
	}
	in.open[key] = true
	defer delete(in.open, key)
	return in.inspectVRT(data, name, about, level+1)
}

// rootOf returns the "DEM path" part of a subject.
func rootOf(subject string) string {
	if i := strings.Index(subject, ": "); i >= 0 {
		return subject[:i]
	}
	return subject
}

// withFix joins a problem and the fix for it, unless the problem already
// says how to fix it (it holds a ';').
func withFix(problem, fix string) string {
	if strings.Contains(problem, ";") {
		return problem
	}
	return problem + "; " + fix
}

// classify checks the form of a file name without touching the file. It
// returns whether the name is a /vsi path, or a problem (worded to follow
// the subject, with its own fix after a ';' where the usual one would not
// do) and its sentinel.
func classify(name string) (vsi bool, problem string, kind error) {
	switch {
	case name == "":
		return false, "is an empty file name", ErrNotAFile
	case strings.IndexByte(name, 0) >= 0:
		return false, "contains a NUL byte", ErrFormatRefused
	case hasPrefixFold(name, "MEM:"):
		return false, "is a MEM::: dataset (process memory named by its address), which canalstep refuses", ErrFormatRefused
	case strings.Contains(strings.ToLower(name), "<vrtdataset"):
		return false, "is VRT XML written in place of a file name, which canalstep refuses; write it to a .vrt file and give that file's path", ErrFormatRefused
	case hasPrefixFold(name, "http://") || hasPrefixFold(name, "https://") || hasPrefixFold(name, "ftp://"):
		return false, "is a URL, which canalstep does not hand to GDAL as it is; prefix it with /vsicurl/ to read it over HTTP", ErrFormatRefused
	case strings.HasPrefix(name, "/vsi"):
		for _, p := range vsiAllowed {
			if strings.HasPrefix(name, p) {
				return true, innerProblem(name, p), ErrFormatRefused
			}
		}
		fsys := name
		if i := strings.IndexAny(name[1:], "/?"); i >= 0 {
			if fsys = name[:i+1]; name[i+1] == '/' {
				fsys = name[:i+2]
			}
		}
		return true, fmt.Sprintf("uses GDAL's %s file system, which canalstep refuses (allowed: %s)", fsys, strings.Join(vsiAllowed, " ")), ErrFormatRefused
	}
	if p := connectionPrefix(name); p != "" {
		return false, fmt.Sprintf("is a GDAL connection string (%s…), not a file name, which canalstep refuses", p), ErrFormatRefused
	}
	if underSystemDir(name) {
		return false, "is a system file (under /proc, /sys or /dev), not a raster", ErrNotAFile
	}
	return false, "", nil
}

// innerProblem checks the file an archive path (/vsizip/… and the like)
// reads: another allowed /vsi path or a file outside the system folders.
func innerProblem(name, prefix string) string {
	if !slices.Contains(vsiWrappers, prefix) {
		return ""
	}
	inner := strings.TrimPrefix(strings.TrimPrefix(name, prefix), "{")
	if strings.HasPrefix(inner, "/vsi") {
		if _, p, _ := classify(inner); p != "" {
			return "reads an archive that " + p
		}
		return ""
	}
	if underSystemDir(inner) {
		return "reads an archive under /proc, /sys or /dev, which canalstep refuses"
	}
	return ""
}

// connectionPrefix returns the driver prefix ("HDF5:", "vrt:") of a GDAL
// connection string, or "". A one-letter prefix is a drive letter.
func connectionPrefix(name string) string {
	i := strings.IndexByte(name, ':')
	if i < 2 {
		return ""
	}
	for j, r := range name[:i] {
		if !(r == '_' || r < unicode.MaxASCII && (unicode.IsLetter(r) || j > 0 && unicode.IsDigit(r))) {
			return ""
		}
	}
	return name[:i+1]
}

// underSystemDir reports whether a local path lies under /proc, /sys or
// /dev, as written (relative paths are taken from the working folder).
func underSystemDir(name string) bool {
	abs, err := filepath.Abs(name)
	if err != nil {
		return false
	}
	for _, d := range systemDirs {
		if abs == d || strings.HasPrefix(abs, d+"/") {
			return true
		}
	}
	return false
}

// notPlain is the error statFile returns for a path that exists but is not
// a regular, non-empty file outside the system folders.
type notPlain struct {
	what  string
	isDir bool
}

func (e *notPlain) Error() string { return e.what }

func (e *notPlain) fix(fix string) string {
	if e.isDir {
		return "give the raster file inside it (for an Arc/Info binary grid, its hdr.adf)"
	}
	return fix
}

// statFile checks that name is a regular, non-empty file and returns its
// size and the key under which the inspector remembers it: the real path of
// a local file, the name itself on a /vsi file system.
func statFile(name string, vsi bool) (size int64, key string, err error) {
	if vsi {
		kind, size, err := vsiStat(name)
		switch {
		case err != nil:
			return 0, "", fs.ErrNotExist
		case kind == folder:
			return 0, "", &notPlain{what: "is a directory, not a raster file", isDir: true}
		case kind != regularFile:
			return 0, "", &notPlain{what: "is not a regular file"}
		case size == 0:
			return 0, "", &notPlain{what: "is empty (0 bytes)"}
		}
		return size, name, nil
	}
	fi, err := os.Stat(name)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			return 0, "", fs.ErrNotExist
		}
		var pe *fs.PathError
		if errors.As(err, &pe) {
			err = pe.Err
		}
		return 0, "", err
	}
	real, err := filepath.EvalSymlinks(name)
	if err == nil {
		real, err = filepath.Abs(real)
	}
	if err != nil {
		return 0, "", err
	}
	switch {
	case underSystemDir(real):
		return 0, "", &notPlain{what: "leads to a system file (under /proc, /sys or /dev), not a raster"}
	case fi.IsDir():
		return 0, "", &notPlain{what: "is a directory, not a raster file", isDir: true}
	case !fi.Mode().IsRegular():
		return 0, "", &notPlain{what: "is a device, pipe or socket, not a raster file"}
	case fi.Size() == 0:
		return 0, "", &notPlain{what: "is empty (0 bytes)"}
	}
	return fi.Size(), real, nil
}

// readHead reads at most n bytes from the start of the file.
func readHead(name string, vsi bool, n int) ([]byte, error) {
	if vsi {
		return vsiReadHead(name, n)
	}
	f, err := os.Open(name)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return io.ReadAll(io.LimitReader(f, int64(n)))
}

// sidecarSuffixes are the files GDAL may open beside a raster x.tif:
// x.tif.ovr (overviews), x.tif.msk (mask), x.tif.aux and x.aux (Erdas
// auxiliary files with overviews). GDAL matches them regardless of case.
var sidecarSuffixes = []string{".ovr", ".msk", ".aux"}

// sidecars returns the side-car files of name that exist.
func (in *inspector) sidecars(name string, vsi bool) []string {
	dir, base := splitDir(name)
	cands := make([]string, 0, 2*len(sidecarSuffixes)+2)
	for _, s := range sidecarSuffixes {
		cands = append(cands, base+s)
	}
	if stem := strings.TrimSuffix(base, extOf(base)); stem != base {
		cands = append(cands, stem+".aux")
	}
	entries, listed := in.dirs[dir]
	if !listed {
		entries = listDir(dir, vsi)
		in.dirs[dir] = entries
	}
	var found []string
	if entries == nil && vsi { // a store that cannot be listed: try the usual spellings
		for _, c := range cands {
			for _, p := range []string{joinDir(dir, c), joinDir(dir, c[:len(c)-4]+strings.ToUpper(c[len(c)-4:]))} {
				if kind, _, err := vsiStat(p); err == nil && kind == regularFile {
					found = append(found, p)
				}
			}
		}
		return found
	}
	for _, e := range entries {
		for _, c := range cands {
			if strings.EqualFold(e, c) {
				found = append(found, joinDir(dir, e))
				break
			}
		}
	}
	return found
}

// listDir lists a folder, or returns nil when it cannot.
func listDir(dir string, vsi bool) []string {
	if vsi {
		return vsiReadDir(dir)
	}
	if dir == "" {
		dir = "."
	}
	es, err := os.ReadDir(dir)
	if err != nil {
		return nil
	}
	names := make([]string, len(es))
	for i, e := range es {
		names[i] = e.Name()
	}
	return names
}

// splitDir splits a GDAL file name at its last slash, as GDAL's CPLGetPath
// and CPLGetFilename do.
func splitDir(name string) (dir, base string) {
	i := strings.LastIndexByte(name, '/')
	if i < 0 {
		return "", name
	}
	return name[:i], name[i+1:]
}

func joinDir(dir, base string) string {
	if dir == "" {
		return base
	}
	return dir + "/" + base
}

func baseName(name string) string {
	_, b := splitDir(name)
	return b
}

// extOf returns the extension of the last element of name, with its dot.
func extOf(name string) string {
	b := baseName(name)
	if i := strings.LastIndexByte(b, '.'); i > 0 {
		return b[i:]
	}
	return ""
}

// vrtElements are the VRT elements (lower case) canalstep accepts: those
// of GDAL's VRT format for sourced, derived (C pixel functions) and warped
// rasters, as gdalbuildvrt, gdal_translate -of VRT and gdalwarp -of VRT
// write them (GDAL's data/gdalvrt.xsd and its VRT documentation). Left
// out, so refused: what names further datasets that the checks would not
// see (geolocation, RPC and vertical-shift elements), open options, pixel
// function code, pansharpening and every element not listed.
var vrtElements = setOf(
	// Dataset and band.
	"vrtdataset", "srs", "geotransform", "gcplist", "gcp", "metadata", "mdi", "maskband", "vrtrasterband",
	"overviewlist", "overview", "blockxsize", "blockysize", "colorinterp", "nodatavalue", "hidenodatavalue",
	"colortable", "entry", "description", "unittype", "offset", "scale", "categorynames", "category",
	"gdalrasterattributetable", "fielddefn", "name", "type", "usage", "row", "f",
	"histograms", "histitem", "histmin", "histmax", "bucketcount", "includeoutofrange", "approximate", "histcounts",
	"pixelfunctiontype", "pixelfunctionlanguage", "pixelfunctionarguments", "sourcetransfertype", "subclass",
	// Sources.
	"simplesource", "complexsource", "averagedsource", "kernelfilteredsource", "nodatafrommasksource",
	"sourcefilename", "sourceband", "sourceproperties", "srcrect", "dstrect", "scaleoffset", "scaleratio",
	"nodata", "usemaskband", "lut", "colortablecomponent", "exponent", "srcmin", "srcmax", "dstmin", "dstmax",
	"resampling", "kernel", "size", "coefs", "maskvaluethreshold", "remappedvalue", "nodatamaskvalue",
	// Warped datasets: the warp options and the image-to-image transformers
	// whose definitions are all inline.
	"gdalwarpoptions", "warpmemorylimit", "resamplealg", "workingdatatype", "option", "sourcedataset",
	"transformer", "approxtransformer", "maxerror", "basetransformer", "genimgprojtransformer",
	"srcgeotransform", "srcinvgeotransform", "dstgeotransform", "dstinvgeotransform",
	"reprojecttransformer", "reprojectiontransformer", "sourcesrs", "targetsrs", "options",
	"srcgcptransformer", "dstgcptransformer", "gcptransformer", "srctpstransformer", "dsttpstransformer",
	"tpstransformer", "order", "reversed", "refine", "refinement", "tolerance", "minimumgcps",
	"bandlist", "bandmapping", "src", "dst", "srcnodatareal", "srcnodataimag", "dstnodatareal",
	"dstnodataimag", "srcalphaband", "dstalphaband", "cutline", "cutlineblenddist",
)

func setOf(names ...string) map[string]bool {
	m := make(map[string]bool, len(names))
	for _, n := range names {
		m[n] = true
	}
	return m
}

// vrtSource is a file a VRT names.
type vrtSource struct {
	name     string
	relative bool // relativeToVRT
}

// inspectVRT inspects the XML of the VRT file vrtName at VRT level level.
// GDAL matches VRT element and attribute names without regard to case, and
// takes a value from an attribute or a child element alike, so every
// element and attribute is looked at under both forms.
func (in *inspector) inspectVRT(data []byte, vrtName, about string, level int) error {
	data = bytes.TrimPrefix(data, []byte("\xef\xbb\xbf"))
	var (
		srcs       []vrtSource
		stack      []string
		collect    = -1 // depth of the element whose text is being collected
		collectRel bool
		text       strings.Builder
	)
	bad := func(format string, args ...any) error {
		return refuse(ErrVRTRefused, about+" "+format, args...)
	}
	value := func(name, v string, rel bool) error {
		switch name {
		case "sourcefilename", "sourcedataset":
			srcs = append(srcs, vrtSource{name: v, relative: rel})
		case "subclass":
			switch strings.ToLower(v) {
			case "vrtsourcedrasterband", "vrtderivedrasterband", "vrtwarpedrasterband", "vrtwarpeddataset":
			case "vrtrawrasterband":
				return bad("uses a VRTRawRasterBand, which reads raw bytes from any file, and canalstep refuses it; convert the raw file with gdal_translate -of GTiff and point the VRT at the GeoTIFF")
			default:
				return bad("uses the VRT type %s, which canalstep does not accept; convert it with gdal_translate -of GTiff", strconv.Quote(shorten(v)))
			}
		case "pixelfunctionlanguage":
			switch strings.ToLower(v) {
			case "", "c":
			case "python":
				return bad("uses a Python pixel function, which canalstep never runs; compute the band beforehand (gdal_calc.py) and point the VRT at the result")
			default:
				return bad("uses a pixel function in %s, which canalstep does not accept; compute the band beforehand (gdal_calc.py)", strconv.Quote(shorten(v)))
			}
		case "pixelfunctioncode":
			return bad("carries pixel function code, which canalstep never runs; compute the band beforehand (gdal_calc.py) and point the VRT at the result")
		case "openoptions":
			return bad("passes open options to its sources, which canalstep does not accept; remove the <OpenOptions> elements")
		}
		return nil
	}

	dec := xml.NewDecoder(bytes.NewReader(data))
	for {
		tok, err := dec.Token()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return bad("is not well-formed VRT XML (%v); repair it or rebuild it with gdalbuildvrt", err)
		}
		switch t := tok.(type) {
		case xml.StartElement:
			if collect >= 0 {
				return bad("has markup inside <%s>; write a plain value there", stack[collect])
			}
			name := strings.ToLower(t.Name.Local)
			rel := false
			for _, a := range t.Attr {
				an := strings.ToLower(a.Name.Local)
				if an == "relativetovrt" {
					rel = atoi(a.Value) != 0
					continue
				}
				if strings.Contains(an, "geoloc") || strings.Contains(an, "rpc") || strings.Contains(an, "shiftgrid") {
					return bad("has an attribute %s, which canalstep does not accept in a VRT; convert the VRT with gdal_translate -of GTiff", shorten(a.Name.Local))
				}
				if err := value(an, a.Value, false); err != nil {
					return err
				}
			}
			switch name {
			case "sourcefilename", "sourcedataset", "subclass", "pixelfunctionlanguage":
				collect, collectRel = len(stack), rel
				text.Reset()
			case "pixelfunctioncode", "openoptions":
				return value(name, "", false)
			default:
				if !vrtElements[name] {
					return bad("uses <%s>, which canalstep does not accept in a VRT; convert the VRT with gdal_translate -of GTiff", shorten(t.Name.Local))
				}
			}
			stack = append(stack, name)
		case xml.EndElement:
			if len(stack) == 0 {
				return bad("is not well-formed VRT XML; repair it or rebuild it with gdalbuildvrt")
			}
			if collect == len(stack)-1 {
				if err := value(stack[collect], text.String(), collectRel); err != nil {
					return err
				}
				collect = -1
			}
			stack = stack[:len(stack)-1]
		case xml.CharData:
			if collect >= 0 {
				text.Write(t)
			}
		case xml.Comment, xml.ProcInst:
			if collect >= 0 {
				return bad("has markup inside <%s>; write a plain value there", stack[collect])
			}
		case xml.Directive:
			return bad("has a DTD or other <!…> directive, which canalstep does not accept in a VRT; remove it")
		}
	}

	// The form of every source name first, so that the message can say
	// which source is at fault.
	for i, s := range srcs {
		if _, problem, kind := classify(s.name); problem != "" {
			if kind == ErrFormatRefused {
				kind = ErrVRTRefused // the VRT names it; the VRT is what is refused
			}
			return refuse(kind, "%s: source %d %s", about, i+1, withFix(problem, asSource.fix()))
		}
	}
	// A second fence against parser differences between Go and GDAL: no
	// form of these may appear anywhere in the file.
	low := bytes.ToLower(data)
	switch {
	case bytes.Contains(low, []byte("mem:::")):
		return bad("names a MEM::: dataset, which canalstep refuses; point the VRT at raster files")
	case bytes.Contains(low, []byte("&#")):
		return bad("uses XML character references (&#…;), which canalstep does not accept in a VRT; write the characters themselves")
	case bytes.Contains(low, []byte("vrtrawrasterband")):
		return value("subclass", "VRTRawRasterBand", false)
	case bytes.Contains(low, []byte("pixelfunctionlanguage")) && bytes.Contains(low, []byte("python")):
		return value("pixelfunctionlanguage", "Python", false)
	case bytes.Contains(low, []byte("x_dataset")) || bytes.Contains(low, []byte("y_dataset")) || bytes.Contains(low, []byte("rpc_dem")):
		return bad("names geolocation or RPC elevation datasets, which GDAL would open unchecked; convert the VRT with gdal_translate -of GTiff")
	}

	dir, _ := splitDir(vrtName)
	for i, s := range srcs {
		name := s.name
		if s.relative && dir != "" && !isAbsGDAL(name) {
			name = dir + "/" + name
		}
		if err := in.check(name, fmt.Sprintf("%s: source %d (%s)", about, i+1, showName(s.name)), level, asSource); err != nil {
			return err
		}
	}
	return nil
}

// isAbsGDAL reports whether GDAL takes name as absolute (CPLIsFilenameRelative).
func isAbsGDAL(name string) bool {
	return strings.HasPrefix(name, "/") || strings.HasPrefix(name, `\`) ||
		len(name) > 2 && name[1] == ':' && (name[2] == '/' || name[2] == '\\')
}

// atoi parses like C's atoi, which GDAL uses for relativeToVRT: leading
// blanks, an optional sign, then digits; anything else ends the number.
func atoi(s string) int {
	s = strings.TrimLeft(s, " \t\n\r\v\f")
	neg := false
	if s != "" && (s[0] == '-' || s[0] == '+') {
		neg, s = s[0] == '-', s[1:]
	}
	n := 0
	for _, c := range []byte(s) {
		if c < '0' || c > '9' || n > 1e8 {
			break
		}
		n = n*10 + int(c-'0')
	}
	if neg {
		return -n
	}
	return n
}

func hasPrefixFold(s, prefix string) bool {
	return len(s) >= len(prefix) && strings.EqualFold(s[:len(prefix)], prefix)
}

// showName returns a file name fit for a one-line message: as it is when it
// is short and printable, else quoted and cut.
func showName(s string) string {
	const max = 160
	plain := len(s) <= max
	for _, r := range s {
		if !unicode.IsPrint(r) {
			plain = false
			break
		}
	}
	if plain {
		return s
	}
	if len(s) > max {
		s = s[:max] + "…"
	}
	return strconv.Quote(s)
}
