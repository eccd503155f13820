package html

import (
	"bytes"
	"crypto/sha256"
	"embed"
	"encoding/hex"
	"errors"
	"fmt"
	"html/template"
	"io"
	"strings"

	"canalstep/alignment"
	"canalstep/planner"
	"canalstep/report/textsafe"
	"canalstep/report/units"
)

// Report is what one report.html shows: one alignment's plan, how it was
// made and what it was compared with.
type Report struct {
	// Name is the alignment's name as the user gave it.
	Name string
	// Profile is the stationed, sampled alignment; nil when it is not at
	// hand (the work CRS and the cross-section count are then left out).
	Profile *alignment.Profile
	// Result is the planner's result; nil when planning failed before the
	// optimiser ran (PlanErr says why).
	Result *planner.Result
	// PlanErr is the planner's error: nil for an optimal plan, an
	// *planner.InfeasibleError when no profile meets the constraints.
	PlanErr error
	// Alternatives are the drop-height sets of a comparison, nil when none
	// ran; infeasible ones are listed with their reason.
	Alternatives []planner.Alternative
	Provenance   Provenance
	Units        units.System
	// Caution is the safety notice, shown under the title and again at
	// the end; its first line is its heading. Write refuses an empty one.
	Caution string
	// Words words the planner's findings in Units; a nil function falls
	// back to the planner's own SI wording.
	Words Words
}

// Provenance says where every number of the report came from.
type Provenance struct {
	Version     string      // canalstep's version
	CommandLine string      // the command as it was run
	Inputs      []InputFile // the input files, in the caller's order
	DEMCRS      string      // the DEM's CRS: an authority code or WKT
	DEMCellSize float64     // m; 0 when unknown
	// InputsDate is the date of the inputs (for instance the newest input
	// file's modification date) as YYYY-MM-DD, chosen by the caller: the
	// report carries no wall-clock time, so reruns are byte-identical.
	InputsDate string
}

// InputFile is one input file: what it is for, where it was read, its
// size and its SHA-256 as lower-case hex.
type InputFile struct {
	Role, Path, SHA256 string
	Bytes              int64
}

// NewInputFile reads r to its end and returns its size and SHA-256 with
// the role and path given.
func NewInputFile(role, path string, r io.Reader) (InputFile, error) {
	h := sha256.New()
	n, err := io.Copy(h, r)
	if err != nil {
		return InputFile{}, fmt.Errorf("hash %s %s: %w", role, textsafe.Terminal(path), err)
	}
	return InputFile{Role: role, Path: path, SHA256: hex.EncodeToString(h.Sum(nil)), Bytes: n}, nil
}

// Words words the planner's typed findings for people, in the report's
// units (the report package's FormatViolation, FormatWarning and
// ErrorText). Warnings of the drops are worded here, grouped by drop,
// since their texts are unit-free.
type Words struct {
	Violation func(planner.Violation) string // nil: Violation.String (SI)
	Warning   func(planner.Warning) string   // nil: kind, chainage (m) and text
	Error     func(error) string             // nil: err.Error()
}

func (w Words) violation(v planner.Violation) string {
	if w.Violation != nil {
		return w.Violation(v)
	}
	return v.String()
}

func (w Words) warning(x planner.Warning) string {
	if w.Warning != nil {
		return w.Warning(x)
	}
	s := strings.ReplaceAll(string(x.Kind), "_", " ") + fmt.Sprintf(" at chainage %.2f m", x.From)
	if x.To != x.From {
		s += fmt.Sprintf(" to %.2f m", x.To)
	}
	if x.Text != "" {
		s += ": " + x.Text
	}
	return s
}

func (w Words) error(err error) string {
	if err == nil {
		return ""
	}
	if w.Error != nil {
		return w.Error(err)
	}
	return err.Error()
}

// ErrNoCaution is returned by Write for a report without its safety
// notice.
var ErrNoCaution = errors.New("html: the report needs its safety notice (Report.Caution)")

//go:embed report.tmpl
var files embed.FS

// page is the report's template; parsed once, it is only read afterwards
// and html/template allows concurrent executions.
var page = template.Must(template.New("report.tmpl").ParseFS(files, "report.tmpl"))

// Write writes the report as one HTML5 document to w. The same report
// gives the same bytes.
func Write(w io.Writer, r Report) error {
	if strings.TrimSpace(r.Caution) == "" {
		return ErrNoCaution
	}
	v := newView(&r)
	var b bytes.Buffer
	b.Grow(v.sizeHint())
	if err := page.Execute(&b, v); err != nil {
		return fmt.Errorf("html: %w", err)
	}
	_, err := w.Write(b.Bytes())
	return err
}

// Length caps of user text shown in the report (characters, after
// escaping): long enough for any real value, short enough that a hostile
// one cannot flood the page (common practice, no source).
const (
	maxName = 200
	maxPath = 1000
	maxLine = 4000
)

// visible makes user text safe to show: control, bidi and invisible
// characters become visible escapes (textsafe.Clip) and the text is cut to
// n characters. html/template then escapes the markup.
func visible(s string, n int) string { return textsafe.Clip(s, n) }

// visibleLines is visible for multi-line text (a WKT), line by line.
func visibleLines(s string, n int) []string {
	var out []string
	for _, l := range strings.Split(strings.ReplaceAll(s, "\r\n", "\n"), "\n") {
		if strings.TrimSpace(l) == "" {
			continue
		}
		out = append(out, visible(l, n))
	}
	return out
}
