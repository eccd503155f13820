package index

import (
	"html/template"
	"io"
	"math"
	"path"
	"strconv"

	"canalstep/report/textsafe"
	"canalstep/report/units"
)

// Page is index.html's content beyond the index: where each job's report
// is.
type Page struct {
	Index *Index
	// Link returns the address of row r's report relative to the batch
	// folder (its report.html, or its summary.json while it has none), or
	// "" for none.
	Link func(r Row) string
}

// WriteHTML writes index.html: a self-contained page (no script, no
// network: styles and the chart inline) with the job counts, the safety
// notice, an overview chart of the cost per km of every planned job by
// alternative, the routes of each corridor ranked, and the table of jobs,
// each linked to its report, the least-cost alternative of each alignment
// and the best route of each corridor marked. Every name and reason is
// escaped (html/template) after removing the characters XML forbids.
func WriteHTML(w io.Writer, p Page) error {
	u, err := p.Index.System()
	if err != nil {
		return err
	}
	v := pageView{Title: "canalstep batch index", Counts: p.Index.CountText(), Shard: p.Index.Shard,
		Caution: p.Index.Caution, LengthUnit: u.LengthUnit(), VolumeUnit: u.VolumeUnit(), PerKm: perKmName(u)}
	rk := Rank(p.Index.Rows)
	for i, r := range p.Index.Rows {
		if !r.Listed() {
			continue
		}
		jr := jobView{Job: r.Job, Alignment: clean(r.Alignment), Corridor: clean(r.Corridor), Alternative: r.Alternative,
			Status: r.Status, Reason: clean(r.Reason), BestAlternative: rk.Alternative[i] == 1,
			BestRoute: rk.Corridor[i] == 1 && rk.Alternative[i] == 1, CorridorRank: rk.Corridor[i]}
		if r.Length > 0 {
			jr.Length = Fixed(u.Length(r.Length), 0)
		}
		if p.Link != nil {
			jr.Link = p.Link(r)
			jr.LinkText = path.Base(jr.Link)
		}
		if f := r.Plan; f != nil {
			jr.Drops = strconv.Itoa(f.Drops)
			jr.Cut, jr.Fill = Fixed(u.Volume(f.CutVolume), 0), Fixed(u.Volume(f.FillVolume), 0)
			jr.Cost = Fixed(f.TotalCost, 0)
			if r.Length > 0 {
				jr.CostPerKm = Fixed(f.TotalCost/perKm(u, r.Length), 0)
			}
			if f.Saving != nil {
				jr.Saving = Fixed(*f.Saving, 0) + " (" + clean(f.SavingAgainst) + ")"
			}
			jr.Command = Fixed(100*f.CommandShare, 0) + " %"
		}
		v.Jobs = append(v.Jobs, jr)
		if jr.BestAlternative && r.Corridor != "" {
			v.Routes = append(v.Routes, routeView{Corridor: jr.Corridor, Rank: rk.Corridor[i], Alignment: jr.Alignment,
				Alternative: r.Alternative, Cost: jr.Cost, CostPerKm: jr.CostPerKm})
		}
	}
	sortRoutes(v.Routes)
	v.Chart = newChart(p.Index, u)
	return pageTemplate.Execute(w, v)
}

// clean removes what XML forbids; html/template escapes the rest.
func clean(s string) string { return textsafe.XMLChars(s) }

// perKm returns a length in metres in the unit costs per length are shown
// per: km, or miles in US units.
func perKm(u units.System, m float64) float64 {
	if u == units.US {
		return m / 1609.344 // international mile, exact
	}
	return m / 1000
}

func perKmName(u units.System) string {
	if u == units.US {
		return "mile"
	}
	return "km"
}

type pageView struct {
	Title, Counts, Shard, Caution string
	LengthUnit, VolumeUnit, PerKm string
	Chart                         chartView
	Routes                        []routeView
	Jobs                          []jobView
}

type jobView struct {
	Job                                               int
	Alignment, Corridor, Alternative, Status, Reason  string
	Length, Drops, Cut, Fill, Cost, CostPerKm, Saving string
	Command, Link, LinkText                           string
	BestAlternative, BestRoute                        bool
	CorridorRank                                      int
}

type routeView struct {
	Corridor, Alignment, Alternative, Cost, CostPerKm string
	Rank                                              int
}

// sortRoutes orders the routes by corridor (first appearance) then rank.
func sortRoutes(rs []routeView) {
	first := map[string]int{}
	for i, r := range rs {
		if _, ok := first[r.Corridor]; !ok {
			first[r.Corridor] = i
		}
	}
	// Insertion sort: stable, and the lists are short.
	for i := 1; i < len(rs); i++ {
		for k := i; k > 0; k-- {
			a, b := rs[k-1], rs[k]
			if first[a.Corridor] < first[b.Corridor] || (a.Corridor == b.Corridor && a.Rank <= b.Rank) {
				break
			}
			rs[k-1], rs[k] = b, a
		}
	}
}

// The overview chart's layout, in SVG user units (px).
const (
	chartW, chartH                    = 760.0, 340.0
	plotL, plotR, plotTop, plotBottom = 84.0, 16.0, 24.0, 64.0
)

type chartView struct {
	Empty            bool
	W, H             string
	Title            string
	AxisX0, AxisX1   string
	AxisY0, AxisY1   string
	Ticks            []tickView
	Bars             []barView
	Dots             []dotView
	YLabelX, YLabelY string
	YLabel           string
}

type tickView struct{ Y, LabelX, LabelY, X0, X1, Text string }

type barView struct {
	X, Y, W, H, LabelX, LabelY, Label, Count, CountY, Title string
}

type dotView struct{ X, Y, Title string }

// newChart lays out the overview: one bar per alternative, its height the
// cost per km of all its planned jobs together (total cost over total
// length), and a dot per planned job at its own cost per km.
func newChart(ix *Index, u units.System) chartView {
	c := chartView{W: num(chartW), H: num(chartH), YLabel: "total cost per " + perKmName(u)}
	type group struct {
		cost, length float64
		jobs         []Row
		all          int
	}
	labels := ix.Alternatives()
	groups := map[string]*group{}
	for _, l := range labels {
		groups[l] = &group{}
	}
	top := 0.0
	for _, r := range ix.Rows {
		if !r.Listed() {
			continue
		}
		g := groups[r.Alternative]
		g.all++
		if r.Plan == nil || !(r.Length > 0) {
			continue
		}
		g.cost += r.Plan.TotalCost
		g.length += r.Length
		g.jobs = append(g.jobs, r)
		top = math.Max(top, r.Plan.TotalCost/perKm(u, r.Length))
	}
	if !(top > 0) {
		c.Empty = true
		return c
	}
	step := niceStep(top / 5)
	top = math.Ceil(top/step) * step
	x0, x1 := plotL, chartW-plotR
	y0, y1 := chartH-plotBottom, plotTop
	yOf := func(v float64) float64 { return y0 - (y0-y1)*v/top }
	c.AxisX0, c.AxisX1, c.AxisY0, c.AxisY1 = num(x0), num(x1), num(y0), num(y1)
	c.YLabelX, c.YLabelY = num(18), num((y0+y1)/2)
	for v := 0.0; v <= top*(1+1e-9); v += step {
		y := num(yOf(v))
		c.Ticks = append(c.Ticks, tickView{Y: y, LabelX: num(x0 - 6), LabelY: num(yOf(v) + 4), X0: num(x0), X1: num(x1), Text: Fixed(v, 0)})
	}
	slot := (x1 - x0) / float64(len(labels))
	barW := math.Min(slot*0.6, 120)
	for k, l := range labels {
		g := groups[l]
		mid := x0 + slot*(float64(k)+0.5)
		b := barView{LabelX: num(mid), LabelY: num(y0 + 18), Label: l, CountY: num(y0 + 34),
			Count: strconv.Itoa(len(g.jobs)) + " of " + strconv.Itoa(g.all) + " planned"}
		if g.length > 0 {
			agg := g.cost / perKm(u, g.length)
			b.X, b.W = num(mid-barW/2), num(barW)
			b.Y, b.H = num(yOf(agg)), num(y0-yOf(agg))
			b.Title = l + ": " + Fixed(agg, 0) + " per " + perKmName(u) + " over all its planned jobs"
		}
		c.Bars = append(c.Bars, b)
		for i, r := range g.jobs {
			off := 0.0
			if n := len(g.jobs); n > 1 {
				off = barW * 0.8 * (float64(i)/float64(n-1) - 0.5)
			}
			v := r.Plan.TotalCost / perKm(u, r.Length)
			c.Dots = append(c.Dots, dotView{X: num(mid + off), Y: num(yOf(v)),
				Title: clean(r.Alignment) + ", " + l + ": " + Fixed(v, 0) + " per " + perKmName(u)})
		}
	}
	return c
}

// niceStep returns 1, 2 or 5 times a power of ten, at least x.
func niceStep(x float64) float64 {
	p := math.Pow(10, math.Floor(math.Log10(x)))
	for _, m := range []float64{1, 2, 5, 10} {
		if m*p >= x {
			return m * p
		}
	}
	return 10 * p
}

// num formats an SVG coordinate to 0.1 px.
func num(v float64) string { return Fixed(v, 1) }

var pageTemplate = template.Must(template.New("index").Parse(`<!DOCTYPE html>
<html xmlns="http://www.w3.org/1999/xhtml" lang="en">
<head>
<meta charset="utf-8"/>
<meta name="viewport" content="width=device-width, initial-scale=1"/>
<title>{{.Title}}</title>
<style>
body { font-family: system-ui, sans-serif; margin: 1.5em; color: #1b1b1b; }
h1 { font-size: 1.5em; margin-bottom: 0.2em; }
h2 { font-size: 1.15em; margin-top: 1.6em; }
.caution { border: 2px solid #b00020; background: #fff4f4; padding: 0.4em 0.8em; max-width: 52em; }
.caution pre { white-space: pre-wrap; font: inherit; margin: 0.3em 0; }
table { border-collapse: collapse; font-size: 0.9em; }
th, td { border: 1px solid #c8c8c8; padding: 0.25em 0.5em; vertical-align: top; }
th { background: #eef1f4; text-align: left; }
td.note { min-width: 22em; }
td.n { text-align: right; font-variant-numeric: tabular-nums; }
tr.best td { background: #eef8ee; }
.mark { font-weight: bold; color: #1d6b1d; white-space: nowrap; }
.st-infeasible { color: #8a5a00; font-weight: bold; }
.st-failed, .st-not_run, .st-missing { color: #b00020; font-weight: bold; }
svg text { font-family: system-ui, sans-serif; font-size: 12px; fill: #1b1b1b; }
</style>
</head>
<body>
<h1>{{.Title}}</h1>
<p>{{.Counts}}{{if .Shard}} (shard {{.Shard}} of a sharded batch; <code>canalstep merge</code> combines the shards){{end}}. Figures in {{.LengthUnit}} and {{.VolumeUnit}}; costs in the currency of the unit prices.</p>
<div class="caution"><pre>{{.Caution}}</pre></div>

<h2>Cost per {{.PerKm}} by alternative</h2>
{{with .Chart}}{{if .Empty}}<p>No job has a plan, so there is nothing to chart.</p>{{else}}<svg xmlns="http://www.w3.org/2000/svg" width="{{.W}}" height="{{.H}}" viewBox="0 0 {{.W}} {{.H}}" role="img" aria-label="total cost per length by drop-height alternative">
{{range .Ticks}}<line x1="{{.X0}}" y1="{{.Y}}" x2="{{.X1}}" y2="{{.Y}}" stroke="#e2e2e2"/><text x="{{.LabelX}}" y="{{.LabelY}}" text-anchor="end">{{.Text}}</text>
{{end}}<line x1="{{.AxisX0}}" y1="{{.AxisY0}}" x2="{{.AxisX1}}" y2="{{.AxisY0}}" stroke="#555"/><line x1="{{.AxisX0}}" y1="{{.AxisY0}}" x2="{{.AxisX0}}" y2="{{.AxisY1}}" stroke="#555"/>
<text x="{{.YLabelX}}" y="{{.YLabelY}}" text-anchor="middle" transform="rotate(-90 {{.YLabelX}} {{.YLabelY}})">{{.YLabel}}</text>
{{range .Bars}}{{if .W}}<rect x="{{.X}}" y="{{.Y}}" width="{{.W}}" height="{{.H}}" fill="#8fb3d9"><title>{{.Title}}</title></rect>{{end}}<text x="{{.LabelX}}" y="{{.LabelY}}" text-anchor="middle">{{.Label}}</text><text x="{{.LabelX}}" y="{{.CountY}}" text-anchor="middle" fill="#555">{{.Count}}</text>
{{end}}{{range .Dots}}<circle cx="{{.X}}" cy="{{.Y}}" r="3" fill="#1f4e79"><title>{{.Title}}</title></circle>
{{end}}</svg>
<p>Bars: total cost over total length of the planned jobs of each drop-height set; dots: each planned job.</p>{{end}}{{end}}
{{if .Routes}}
<h2>Routes of each corridor</h2>
<table>
<tr><th>Corridor</th><th>Rank</th><th>Route (alignment)</th><th>Least-cost drop heights ({{.LengthUnit}})</th><th>Total cost</th><th>Cost per {{.PerKm}}</th></tr>
{{range .Routes}}<tr{{if eq .Rank 1}} class="best"{{end}}><td>{{.Corridor}}</td><td class="n">{{.Rank}}</td><td>{{.Alignment}}{{if eq .Rank 1}} <span class="mark">best route</span>{{end}}</td><td>{{.Alternative}}</td><td class="n">{{.Cost}}</td><td class="n">{{.CostPerKm}}</td></tr>
{{end}}</table>
{{end}}
<h2>Jobs</h2>
<table>
<tr><th>Job</th><th>Alignment</th><th>Corridor</th><th>Drop heights ({{.LengthUnit}})</th><th>Status</th><th>Length ({{.LengthUnit}})</th><th>Drops</th><th>Cut ({{.VolumeUnit}})</th><th>Fill ({{.VolumeUnit}})</th><th>Total cost</th><th>Cost per {{.PerKm}}</th><th>Saving against the best feasible baseline</th><th>Stations in command</th><th>Report</th><th>Note</th></tr>
{{range .Jobs}}<tr{{if .BestAlternative}} class="best"{{end}}><td class="n">{{.Job}}</td><td>{{.Alignment}}</td><td>{{.Corridor}}{{if .BestRoute}} <span class="mark">best route</span>{{end}}</td><td>{{.Alternative}}{{if .BestAlternative}} <span class="mark">least cost</span>{{end}}</td><td class="st-{{.Status}}">{{.Status}}</td><td class="n">{{.Length}}</td><td class="n">{{.Drops}}</td><td class="n">{{.Cut}}</td><td class="n">{{.Fill}}</td><td class="n">{{.Cost}}</td><td class="n">{{.CostPerKm}}</td><td class="n">{{.Saving}}</td><td class="n">{{.Command}}</td><td>{{if .Link}}<a href="{{.Link}}">{{.LinkText}}</a>{{end}}</td><td class="note">{{.Reason}}</td></tr>
{{end}}</table>
</body>
</html>
`))
