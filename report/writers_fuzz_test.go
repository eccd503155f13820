package report

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"encoding/xml"
	"io"
	"math"
	"os"
	"path/filepath"
	"sync"
	"testing"
	"unicode/utf8"

	"canalstep/alignment"
	"canalstep/planner"
	"canalstep/planner/hydraulics"
)

// dirStager writes a folder's files straight into a directory (tests only).
type dirStager string

func (d dirStager) WriteFile(name string, write func(io.Writer) error) error {
	return WriteFileAtomic(filepath.Join(string(d), name), write)
}

func (d dirStager) Path(name string) (string, error) { return filepath.Join(string(d), name), nil }

var _ Stager = dirStager("")

var (
	smallOnce sync.Once
	smallRes  *planner.Result
	smallProf *alignment.Profile
)

// smallPlan is a 60-station plan on synthetic falling ground (demo-style
// data, not a published case), planned once per test binary.
func smallPlan(tb testing.TB) (*alignment.Profile, *planner.Result) {
	smallOnce.Do(func() {
		c, g := make([]float64, 60), make([]float64, 60)
		for i := range c {
			c[i] = 10 * float64(i)
			g[i] = 100 - 0.012*c[i] + 0.4*math.Sin(c[i]/70)
		}
		d := planner.DefaultDesign()
		d.Flow, d.Section, d.Roughness = 1, hydraulics.Section{BottomWidth: 1, SideSlope: 1.5}, 0.025
		d.MaxVelocity, d.MinVelocity, d.DropHeights = 0.9, 0.3, []float64{0.5, 1}
		st := planner.LevelProfile(c, g)
		r, err := planner.Optimize(planner.Problem{Stations: st, Design: d})
		if err != nil {
			panic(err)
		}
		smallRes, smallProf = r, &alignment.Profile{Name: "small", Folder: "small", Stations: st}
	})
	if smallRes == nil {
		tb.Fatal("no small plan")
	}
	return smallProf, smallRes
}

// FuzzWriters runs a plan whose alignment name is arbitrary text (control
// characters, bidi overrides, markup, invalid UTF-8) through every writer
// of a plan folder: the SVG must stay well-formed XML, the CSVs and the
// JSON must parse, and no writer may fail or panic.
func FuzzWriters(f *testing.F) {
	for _, s := range []string{"Main canal", "a\x1b[31mred\x07\r\x00b", "x\u202egnp.exe", "<script>alert(1)</script>&\"'", "\xff\xfe", "=HYPERLINK(\"x\")"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, name string) {
		p0, r := smallPlan(t)
		p := *p0
		p.Name = name
		dir := t.TempDir()
		if err := WritePlan(dirStager(dir), &p, r, nil, SI); err != nil {
			t.Fatalf("WritePlan: %v", err)
		}
		svg, err := os.ReadFile(filepath.Join(dir, "profile.svg"))
		if err != nil {
			t.Fatal(err)
		}
		dec := xml.NewDecoder(bytes.NewReader(svg))
		for {
			if _, err := dec.Token(); err == io.EOF {
				break
			} else if err != nil {
				t.Fatalf("profile.svg is not well-formed XML for name %q: %v", name, err)
			}
		}
		for _, f := range []string{"stations.csv", "drops.csv", "ground.csv"} {
			b, err := os.ReadFile(filepath.Join(dir, f))
			if err != nil {
				t.Fatal(err)
			}
			if _, err := csv.NewReader(bytes.NewReader(b)).ReadAll(); err != nil {
				t.Fatalf("%s: %v", f, err)
			}
		}
		b, err := os.ReadFile(filepath.Join(dir, "summary.json"))
		if err != nil {
			t.Fatal(err)
		}
		var m map[string]any
		if err := json.Unmarshal(b, &m); err != nil || !utf8.Valid(b) {
			t.Fatalf("summary.json: %v", err)
		}
	})
}
