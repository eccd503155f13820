package report

import (
	"bytes"
	"image/png"
	"path/filepath"
	"strings"
	"testing"
)

// testAlternatives are made-up results of four drop-height alternatives
// (invented numbers, demo only).
func testAlternatives() AlternativesChart {
	return AlternativesChart{
		Name:     "Test branch",
		Currency: "EUR",
		Alternatives: []Alternative{
			{Label: "0.5", CutVolume: 41200, FillVolume: 23800, EarthworkCost: 402000, DropCost: 615000, TotalCost: 1017000},
			{Label: "1.0", CutVolume: 48900, FillVolume: 20100, EarthworkCost: 441000, DropCost: 388000, TotalCost: 829000},
			{Label: "1.5", CutVolume: 60300, FillVolume: 17400, EarthworkCost: 512000, DropCost: 301000, TotalCost: 813000},
			{Label: "0.5,1.0,1.5", CutVolume: 39700, FillVolume: 16800, EarthworkCost: 371000, DropCost: 352000, TotalCost: 723000},
		},
	}
}

func TestAlternativesChart(t *testing.T) {
	t.Parallel()
	dir := *plotDir
	if dir == "" {
		dir = t.TempDir()
	}
	c := testAlternatives()
	total := c
	total.Alternatives = append([]Alternative(nil), c.Alternatives...)
	for i := range total.Alternatives {
		total.Alternatives[i].EarthworkCost, total.Alternatives[i].DropCost = 0, 0
	}
	many := c
	for i := 0; i < 3; i++ {
		many.Alternatives = append(many.Alternatives, c.Alternatives...)
	}
	us := c
	us.Units = US
	for _, tc := range []struct {
		name string
		c    AlternativesChart
	}{{"alternatives.png", c}, {"alternatives_total.png", total}, {"alternatives_many.png", many}, {"alternatives_us.png", us}} {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(dir, tc.name)
			if err := WriteAlternativesChart(path, tc.c); err != nil {
				t.Fatal(err)
			}
			cfg, err := png.DecodeConfig(bytes.NewReader(mustRead(t, path)))
			if err != nil {
				t.Fatal(err)
			}
			// 20 × 16 cm at 96 dpi.
			if cfg.Width != 756 || cfg.Height != 605 {
				t.Errorf("size %d×%d px, want 756×605", cfg.Width, cfg.Height)
			}
		})
	}
	var svg bytes.Buffer
	if err := RenderAlternativesChart(&svg, "svg", c); err != nil {
		t.Fatal(err)
	}
	checkSVG(t, svg.Bytes())
	for _, want := range []string{"0.5,1.0,1.5", "thousand EUR", "(least)"} {
		if !strings.Contains(svg.String(), want) {
			t.Errorf("SVG lacks the text %q", want)
		}
	}
}

func TestAlternativesChartBadInput(t *testing.T) {
	var buf bytes.Buffer
	if err := RenderAlternativesChart(&buf, "png", AlternativesChart{Name: "x"}); err == nil {
		t.Error("no alternatives: want an error")
	}
	c := testAlternatives()
	c.Alternatives[1].FillVolume = -1
	if err := RenderAlternativesChart(&buf, "png", c); err == nil || !strings.Contains(err.Error(), `"1.0"`) {
		t.Errorf("negative volume: got %v, want an error naming the alternative", err)
	}
}
