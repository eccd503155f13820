// Package html writes report.html, the reviewer's report of one planned
// alignment: one self-contained HTML5 file that a reviewer reads and signs
// off.
//
// The file fetches nothing: its styles are inline, its figures are inline
// SVG drawn here, it carries no script, and a Content-Security-Policy meta
// element forbids every fetch and every script, so a browser opens it
// offline exactly as written. Its bytes depend only on the report's data:
// no wall-clock time, no map order, so reruns are byte-identical. The
// markup is also well-formed XML (polyglot HTML5), which the tests parse.
//
// Every text that comes from a user (alignment and offtake names, paths,
// the command line, the DEM's CRS, error texts that quote them) is made
// visible with textsafe.Clip (control, bidi and invisible characters become
// escapes such as \x1b or \u202e) and escaped by html/template.
//
// The report holds, in order: the title and the safety notice; the
// provenance (version, command line, input files with their SHA-256, DEM
// CRS and cell size, the inputs' date); the design criteria; the section
// results; the totals; both baselines with their broken constraints and the
// saving against the best feasible one; the command of the land; the
// reaches; a sheet per drop, with warnings that several drops share listed
// once; the long section in sheets of a stated length with a data band; the
// mass-haul diagram; cross-sections at every drop and at a stated interval;
// the alternatives of a comparison; the warnings; and the safety notice
// again. Everything is in the report's unit system (package units).
package html
