package index

import (
	"bytes"
	"errors"
	"flag"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"

	"canalstep/report/units"
	"canalstep/testdata/reftool"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/")

func ptr(v float64) *float64 { return &v }

// hostile is an alignment name that is a spreadsheet formula, markup, a
// control character and a bidi override at once.
const hostile = "=HYPERLINK(\"x\")<script>alert(1)</script>\x07\u202e"

// fixture is an index of eight jobs: three alternatives of a main canal
// (two of them tied on cost), two routes of one corridor with two
// alternatives each (one infeasible), and a failed job with a hostile name.
// The figures are made up for the test.
func fixture() *Index {
	plan := func(drops int, cut, fill, cost float64, saving *float64, share float64) *Figures {
		f := &Figures{Drops: drops, CutVolume: cut, FillVolume: fill, TotalCost: cost, Saving: saving, CommandShare: share}
		if saving != nil {
			f.SavingAgainst = "by_eye"
		}
		return f
	}
	rows := []Row{
		{Alignment: "Main canal", Alternative: "0.5", DropHeights: []float64{0.5}, Status: OK, Length: 2000, Plan: plan(6, 12000.25, 3000.5, 100000, ptr(5000), 0.9), Folder: "Main_canal/h0.5"},
		{Alignment: "Main canal", Alternative: "1", DropHeights: []float64{1}, Status: OK, Length: 2000, Plan: plan(3, 11000, 2500, 90000, ptr(-250.4), 0.85), Folder: "Main_canal/h1"},
		{Alignment: "Main canal", Alternative: "0.5,1", DropHeights: []float64{0.5, 1}, Status: OK, Length: 2000, Plan: plan(4, 10500, 2600, 90000, nil, 0.875), Folder: "Main_canal/h0.5_1"},
		{Alignment: "Lateral A north", Corridor: "Lateral A", Alternative: "0.5", DropHeights: []float64{0.5}, Status: OK, Length: 1000, Plan: plan(2, 4000, 1000, 50000, ptr(1000), 1), Folder: "Lateral_A_north/h0.5"},
		{Alignment: "Lateral A north", Corridor: "Lateral A", Alternative: "1", DropHeights: []float64{1}, Status: Infeasible, Reason: "no profile meets every constraint at 0+100 to 0+300", Length: 1000, Folder: "Lateral_A_north/h1"},
		{Alignment: "Lateral A south", Corridor: "Lateral A", Alternative: "0.5", DropHeights: []float64{0.5}, Status: OK, Length: 1200, Plan: plan(2, 3000, 900, 45000, ptr(2000), 0.95), Folder: "Lateral_A_south/h0.5"},
		{Alignment: "Lateral A south", Corridor: "Lateral A", Alternative: "1", DropHeights: []float64{1}, Status: OK, Length: 1200, Plan: plan(1, 3500, 800, 47000, ptr(0), 0.95), Folder: "Lateral_A_south/h1"},
		{Alignment: hostile, Alternative: "0.5", DropHeights: []float64{0.5}, Status: Failed, Reason: "-alignment leaves the DEM at 0+000 to 0+050 <b>"},
	}
	for i := range rows {
		rows[i].Job = i + 1
	}
	return New(units.SI, "batch-fixture", "", rows)
}

// TestRank checks the ranks of the fixture, worked out by hand: Main canal
// 1 m and 0.5,1 m tie at 90,000 and the earlier job wins; of corridor
// Lateral A, the south route's best (45,000) beats the north's (50,000).
func TestRank(t *testing.T) {
	rk := Rank(fixture().Rows)
	if want := []int{3, 1, 2, 1, 0, 1, 2, 0}; !slices.Equal(rk.Alternative, want) {
		t.Errorf("alternative ranks %v, want %v", rk.Alternative, want)
	}
	if want := []int{0, 0, 0, 2, 2, 1, 1, 0}; !slices.Equal(rk.Corridor, want) {
		t.Errorf("corridor ranks %v, want %v", rk.Corridor, want)
	}
}

// ExampleRank ranks two routes of one canal, each planned with two
// drop-height sets.
func ExampleRank() {
	row := func(job int, route, alt string, cost float64) Row {
		return Row{Job: job, Alignment: route, Corridor: "Lateral 3", Alternative: alt, Status: OK, Plan: &Figures{TotalCost: cost}}
	}
	rows := []Row{row(1, "east route", "0.5", 820), row(2, "east route", "1", 790), row(3, "west route", "0.5", 760), row(4, "west route", "1", 800)}
	rk := Rank(rows)
	for i, r := range rows {
		fmt.Printf("%s %s: alternative %d, route %d\n", r.Alignment, r.Alternative, rk.Alternative[i], rk.Corridor[i])
	}
	// Output:
	// east route 0.5: alternative 2, route 2
	// east route 1: alternative 1, route 2
	// west route 0.5: alternative 1, route 1
	// west route 1: alternative 2, route 1
}

func golden(t *testing.T, name string, got []byte) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		if err := os.MkdirAll("testdata", 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test -update to create it)", err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("%s differs from the golden file (go test -update rewrites it):\n%s", name, got)
	}
}

// TestWriteCSV: the fixture's index.csv as a golden file; formula cells
// quoted; in US units the columns say so and convert (1 yd³ =
// 0.764554857984 m³ and 1 ft = 0.3048 m exactly, by the international yard
// and pound agreement of 1959, NIST Handbook 44 Appendix C).
func TestWriteCSV(t *testing.T) {
	var b bytes.Buffer
	if err := WriteCSV(&b, fixture()); err != nil {
		t.Fatal(err)
	}
	golden(t, "index.csv", b.Bytes())
	if !strings.Contains(b.String(), "\n8,\"'=HYPERLINK") || strings.Contains(b.String(), "\x07") {
		t.Errorf("the formula name is not neutralised, or the control character kept:\n%s", b.String())
	}
	if !strings.Contains(b.String(), ",'-alignment leaves") {
		t.Errorf("the reason starting with - is not neutralised")
	}

	us := fixture()
	us.Units = "us"
	us.Rows[0].Plan.CutVolume = 764.554857984 // 1000 yd³
	us.Rows[0].Length = 1609.344              // 5280 ft
	b.Reset()
	if err := WriteCSV(&b, us); err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(b.String(), "\n")
	if !strings.Contains(lines[0], "drop_heights_ft,") || !strings.Contains(lines[0], "cut_volume_yd3") || !strings.Contains(lines[0], "length_ft") {
		t.Errorf("US header %q", lines[0])
	}
	if !strings.Contains(lines[1], ",5280.0,6,1000.0,") {
		t.Errorf("US row %q: want 5280.0 ft and 1000.0 yd³", lines[1])
	}
}

// TestWriteHTML: the fixture's page as a golden file; well-formed XML
// (xmllint), so that every tag closes and nothing is left unescaped; no
// script, no network address; the hostile name escaped; each job's link
// and the marks of the least-cost alternatives and the best route.
func TestWriteHTML(t *testing.T) {
	var b bytes.Buffer
	link := func(r Row) string {
		if r.Folder == "" {
			return ""
		}
		return r.Folder + "/summary.json"
	}
	if err := WriteHTML(&b, Page{Index: fixture(), Link: link}); err != nil {
		t.Fatal(err)
	}
	page := b.String()
	golden(t, "index.html", b.Bytes())
	for _, bad := range []string{"<script", "\x07", "http://", "https://", "src="} {
		if strings.Contains(strings.ReplaceAll(page, `xmlns="http://www.w3.org/`, ""), bad) {
			t.Errorf("page holds %q", bad)
		}
	}
	for _, want := range []string{
		`<a href="Main_canal/h1/summary.json">`,
		`1 <span class="mark">least cost</span>`,
		`Lateral A <span class="mark">best route</span>`,
		"&lt;script&gt;alert(1)&lt;/script&gt;",
		"8 jobs: 6 ok, 1 infeasible, 1 failed",
		"<svg ", "SAFETY AND RESPONSIBILITY NOTICE",
	} {
		if !strings.Contains(page, want) {
			t.Errorf("page lacks %q", want)
		}
	}
	if n := strings.Count(page, "<circle "); n != 6 {
		t.Errorf("%d dots in the chart, want one per ok job (6)", n)
	}
	if n := strings.Count(page, "<rect "); n != 3 {
		t.Errorf("%d bars, want one per alternative (0.5, 1, 0.5,1)", n)
	}
	xmllint := reftool.Need(t, "xmllint")
	path := filepath.Join(t.TempDir(), "index.html")
	if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	if out, err := exec.Command(xmllint, "--noout", path).CombinedOutput(); err != nil {
		t.Errorf("xmllint: %v\n%s", err, out)
	}
}

// TestWriteHTMLEmpty: a batch without a plan says so instead of a chart.
func TestWriteHTMLEmpty(t *testing.T) {
	ix := fixture()
	ix.Rows = ix.Rows[7:]
	var b bytes.Buffer
	if err := WriteHTML(&b, Page{Index: ix}); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(b.String(), "nothing to chart") || strings.Contains(b.String(), "<svg") {
		t.Errorf("empty chart not said:\n%s", b.String())
	}
}

// TestJSONRoundTrip: what WriteJSON writes, ReadJSON reads back the same.
func TestJSONRoundTrip(t *testing.T) {
	var b bytes.Buffer
	ix := fixture()
	if err := WriteJSON(&b, ix); err != nil {
		t.Fatal(err)
	}
	back, err := ReadJSON(bytes.NewReader(b.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(back, ix) {
		t.Errorf("read back differs:\n%+v\n%+v", back, ix)
	}
}

// TestReadJSONRefuses: hostile or broken indexes are refused with ErrIndex.
func TestReadJSONRefuses(t *testing.T) {
	base := func() *Index { return fixture() }
	for _, tc := range []struct {
		name string
		edit func(ix *Index)
		raw  string
	}{
		{name: "folder up", edit: func(ix *Index) { ix.Rows[0].Folder = "../etc" }},
		{name: "absolute folder", edit: func(ix *Index) { ix.Rows[0].Folder = "/etc/x" }},
		{name: "three elements", edit: func(ix *Index) { ix.Rows[0].Folder = "a/b/c" }},
		{name: "hidden folder", edit: func(ix *Index) { ix.Rows[0].Folder = "Main/.git" }},
		{name: "renumbered", edit: func(ix *Index) { ix.Rows[1].Job = 7 }},
		{name: "status", edit: func(ix *Index) { ix.Rows[1].Status = "great" }},
		{name: "figures on failed", edit: func(ix *Index) { ix.Rows[7].Plan = &Figures{} }},
		{name: "no figures on ok", edit: func(ix *Index) { ix.Rows[0].Plan = nil }},
		{name: "format", edit: func(ix *Index) { ix.Format = "other/1" }},
		{name: "units", edit: func(ix *Index) { ix.Units = "cubits" }},
		{name: "unknown member", raw: `{"format":"canalstep-batch-index/1","units":"si","batch":"","caution":"","jobs":[],"extra":1}`},
		{name: "trailing data", raw: `{"format":"canalstep-batch-index/1","units":"si","batch":"","caution":"","jobs":[]} {}`},
		{name: "not json", raw: `index`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			data := []byte(tc.raw)
			if tc.edit != nil {
				ix := base()
				tc.edit(ix)
				var b bytes.Buffer
				if err := WriteJSON(&b, ix); err != nil {
					t.Fatal(err)
				}
				data = b.Bytes()
			}
			if _, err := ReadJSON(bytes.NewReader(data)); !errors.Is(err, ErrIndex) {
				t.Errorf("err %v, want ErrIndex", err)
			}
		})
	}
}

// shards splits the fixture into n shard indexes by job number.
func shards(n int) []Part {
	var parts []Part
	for k := range n {
		ix := fixture()
		ix.Shard = fmt.Sprintf("%d/%d", k+1, n)
		for i := range ix.Rows {
			if i%n != k {
				r := &ix.Rows[i]
				r.Status, r.Reason, r.Length, r.Plan, r.Folder = OtherShard, "", 0, nil, ""
			}
		}
		parts = append(parts, Part{Name: fmt.Sprintf("shard-%d", k+1), Index: ix})
	}
	return parts
}

// TestMerge: three shards merge to the whole index, byte for byte, in any
// order; a job in two parts and parts of different batches are refused; a
// missing shard leaves its jobs Missing.
func TestMerge(t *testing.T) {
	var whole bytes.Buffer
	if err := WriteJSON(&whole, fixture()); err != nil {
		t.Fatal(err)
	}
	parts := shards(3)
	for _, order := range [][]int{{0, 1, 2}, {2, 0, 1}} {
		var ps []Part
		for _, i := range order {
			ps = append(ps, parts[i])
		}
		m, missing, err := Merge(ps)
		if err != nil || len(missing) > 0 {
			t.Fatalf("merge %v: %v, missing %v", order, err, missing)
		}
		var b bytes.Buffer
		if err := WriteJSON(&b, m); err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(b.Bytes(), whole.Bytes()) {
			t.Errorf("merged %v differs from the whole index:\n%s", order, b.String())
		}
	}

	if _, _, err := Merge([]Part{parts[0], parts[1], parts[0]}); !errors.Is(err, ErrIndex) || !strings.Contains(err.Error(), "is in both shard-1 and shard-1") {
		t.Errorf("overlap: %v", err)
	}
	other := shards(3)[1]
	other.Index.Batch = "another"
	if _, _, err := Merge([]Part{parts[0], other}); !errors.Is(err, ErrIndex) || !strings.Contains(err.Error(), "different batches") {
		t.Errorf("other batch: %v", err)
	}
	renamed := shards(3)[1]
	renamed.Index.Rows[4].Alternative = "2"
	if _, _, err := Merge([]Part{parts[0], renamed}); !errors.Is(err, ErrIndex) || !strings.Contains(err.Error(), "job 5") {
		t.Errorf("other job list: %v", err)
	}

	m, missing, err := Merge([]Part{parts[0], parts[2]})
	if err != nil {
		t.Fatal(err)
	}
	if want := []int{2, 5, 8}; !slices.Equal(missing, want) {
		t.Errorf("missing %v, want %v", missing, want)
	}
	if r := m.Rows[1]; r.Status != Missing || r.Alignment != "Main canal" || r.Alternative != "1" || r.Folder != "" {
		t.Errorf("missing row %+v", r)
	}
	if got := m.CountText(); got != "8 jobs: 5 ok, 3 missing" {
		t.Errorf("counts %q", got)
	}
}

// FuzzReadJSON: ReadJSON never panics, and what it accepts writes back and
// reads again to the same index.
func FuzzReadJSON(f *testing.F) {
	var b bytes.Buffer
	if err := WriteJSON(&b, fixture()); err != nil {
		f.Fatal(err)
	}
	f.Add(b.Bytes())
	f.Add([]byte(`{"format":"canalstep-batch-index/1","units":"us","batch":"x","caution":"","jobs":[{"job":1,"status":"failed","folder":"a/b"}]}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		ix, err := ReadJSON(bytes.NewReader(data))
		if err != nil {
			return
		}
		var out bytes.Buffer
		if err := WriteJSON(&out, ix); err != nil {
			t.Fatal(err)
		}
		again, err := ReadJSON(&out)
		if err != nil {
			t.Fatalf("written index not readable: %v", err)
		}
		if !reflect.DeepEqual(again, ix) {
			t.Fatalf("round trip changed the index")
		}
		if err := WriteCSV(&out, ix); err != nil {
			t.Fatal(err)
		}
		if err := WriteHTML(&out, Page{Index: ix}); err != nil {
			t.Fatal(err)
		}
	})
}
