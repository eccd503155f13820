package html

import (
	"regexp"
	"strconv"
	"strings"

	"canalstep/planner"
	"canalstep/report/units"
)

// dropView is the sheet of one drop.
type dropView struct {
	N       int
	ID      string // anchor, "drop-3"
	Station string
	Dims    []kv
	Checks  table
	Own     []string // warnings of this drop alone
	Shared  []string // the shared warnings that concern it ("W2")
}

// shared is a warning that several drops share, listed once.
type shared struct {
	Ref, Text string
	Drops     []dropRef
}

type dropRef struct{ ID, Label string }

// dropKinds are the warning kinds that belong to one drop.
func dropKind(k planner.Kind) bool {
	return k == planner.WarnDropDesign || k == planner.WarnOutlet || k == planner.WarnDropDesignFailed
}

// dropWarningText words a drop's warning without its station: the drop's
// texts are unit-free.
func dropWarningText(w planner.Warning) string {
	switch w.Kind {
	case planner.WarnOutlet:
		return "at " + flowShare(w.Flow) + " of the design flow: " + w.Text
	case planner.WarnDropDesignFailed:
		return "the drop design failed: " + w.Text
	}
	return w.Text
}

// warningGroup is one drop warning and the drops (indices) it concerns,
// in drop order: the warnings of one kind, checked flow and text but for
// the figures in it, whose figures are given as their range over the
// drops.
type warningGroup struct {
	text  string
	drops []int
}

// figure matches a number in a warning's text.
var figureRE = regexp.MustCompile(`[0-9]+(\.[0-9]+)?`)

// groupDropWarnings gathers the drops' warnings by kind, checked flow and
// the shape of their text (the text with its figures taken out), in the
// order they first appear; each figure of a group's text becomes the
// range it takes over the group's drops ("1.37–1.73").
func groupDropWarnings(drops []planner.DropResult) []warningGroup {
	type key struct {
		kind  planner.Kind
		flow  float64
		shape string
	}
	type acc struct {
		w      planner.Warning
		lo, hi []string // figures as written, the smallest and largest
		drops  []int
	}
	idx := map[key]int{}
	var out []*acc
	for i, d := range drops {
		for _, w := range d.Warnings {
			figs := figureRE.FindAllString(w.Text, -1)
			k := key{w.Kind, w.Flow, figureRE.ReplaceAllString(w.Text, "#")}
			g, ok := idx[k]
			if !ok {
				g = len(out)
				idx[k] = g
				out = append(out, &acc{w: w, lo: figs, hi: append([]string(nil), figs...)})
			}
			a := out[g]
			for j, f := range figs {
				if num(f) < num(a.lo[j]) {
					a.lo[j] = f
				}
				if num(f) > num(a.hi[j]) {
					a.hi[j] = f
				}
			}
			if len(a.drops) == 0 || a.drops[len(a.drops)-1] != i {
				a.drops = append(a.drops, i)
			}
		}
	}
	groups := make([]warningGroup, len(out))
	for g, a := range out {
		j := 0
		text := figureRE.ReplaceAllStringFunc(a.w.Text, func(string) string {
			lo, hi := a.lo[j], a.hi[j]
			j++
			if lo == hi {
				return lo
			}
			return lo + "–" + hi
		})
		w := a.w
		w.Text = text
		groups[g] = warningGroup{text: dropWarningText(w), drops: a.drops}
	}
	return groups
}

func num(s string) float64 {
	v, _ := strconv.ParseFloat(s, 64)
	return v
}

func (v *view) drops(r *Report, n numbers) {
	res := r.Result
	L := n.u.Symbol(units.Length)
	groups := groupDropWarnings(res.Drops)
	ref := map[int]string{} // group → "W1" for groups of two drops or more
	for g, w := range groups {
		if len(w.drops) < 2 {
			continue
		}
		s := shared{Ref: "W" + strconv.Itoa(len(v.Shared)+1), Text: visible(w.text, maxLine)}
		for _, i := range w.drops {
			s.Drops = append(s.Drops, dropRef{ID: dropID(i), Label: n.station(res.Drops[i].Chainage)})
		}
		ref[g] = s.Ref
		v.Shared = append(v.Shared, s)
	}
	for i, d := range res.Drops {
		dv := dropView{N: i + 1, ID: dropID(i), Station: n.station(d.Chainage)}
		dv.Dims = []kv{
			{"Station", dv.Station},
			{"Height (bed fall)", n.level(d.Height)},
			{"Upstream invert", n.level(d.UpstreamInvert)},
			{"Crest level", crestWords(d, n)},
			{"Basin floor", n.level(d.BasinFloor) + " (" + n.level(d.BasinDepression) + " below the downstream bed)"},
			{"Downstream invert", n.level(d.DownstreamInvert)},
			{"Basin length × width", n.bare(units.Length, d.BasinLength, 2) + " × " + n.length(d.BasinWidth)},
			{"End sill height", n.level(d.EndSill)},
			{"Side walls above the basin floor", n.length(d.WallHeight)},
			{"Outlet transition length", n.length(d.TransitionLength)},
			{"Jump at the design flow", jumpWords(d.JumpState)},
		}
		dv.Checks = table{Caption: "Outlet check at each flow (depths above the basin floor, Rand's relations)",
			Head: []string{"Flow", "Discharge (" + n.u.Symbol(units.Flow) + ")", "yc (" + L + ")", "Drop number", "y1 (" + L + ")", "F1",
				"y2 needed (" + L + ")", "Tailwater (" + L + ")", "TW/y2", "TW − y2 (" + L + ")", "Jump", "Depression that holds it (" + L + ")"},
			Num: []bool{true, true, true, true, true, true, true, true, true, true, false, true}}
		for _, c := range d.Checks {
			class := ""
			if c.JumpState != "in_basin" {
				class = "warn"
			}
			share := 0.0
			if res.Record.Flow > 0 {
				share = c.Q / res.Record.Flow
			}
			dv.Checks.add(class, flowShare(share), n.bare(units.Flow, c.Q, 3), n.bare(units.Length, c.CriticalDepth, 3),
				fixed(c.DropNumber, 4), n.bare(units.Length, c.ToeDepth, 3), fixed(c.ToeFroude, 2),
				n.bare(units.Length, c.SequentDepth, 3), n.bare(units.Length, c.TailwaterDepth, 3), fixed(c.TailwaterRatio, 2),
				n.bare(units.Length, c.Margin, 3), jumpWords(c.JumpState), n.bare(units.Length, c.RequiredDepression, 3))
		}
		for g, w := range groups {
			if !contains(w.drops, i) {
				continue
			}
			if s, ok := ref[g]; ok {
				dv.Shared = append(dv.Shared, s)
			} else {
				dv.Own = append(dv.Own, visible(w.text, maxLine))
			}
		}
		v.Drops = append(v.Drops, dv)
	}
}

func crestWords(d planner.DropResult, n numbers) string {
	if d.CrestRaise <= 0 {
		return n.level(d.CrestLevel) + " (at the upstream bed)"
	}
	return n.level(d.CrestLevel) + " (raised " + n.level(d.CrestRaise) + " above the upstream bed)"
}

func dropID(i int) string { return "drop-" + strconv.Itoa(i+1) }

func contains(xs []int, x int) bool {
	for _, y := range xs {
		if y == x {
			return true
		}
	}
	return false
}

// warnings is the list of every warning of the plan: those of the drops
// once per text with their stations, the others as the planner gives them.
func (v *view) warnings(r *Report, n numbers) {
	res := r.Result
	if res == nil || !v.Optimal {
		return
	}
	for _, w := range res.Warnings {
		if !dropKind(w.Kind) {
			v.Warnings = append(v.Warnings, visible(r.Words.warning(w), maxLine))
		}
	}
	for _, g := range groupDropWarnings(res.Drops) {
		var at []string
		for _, i := range g.drops {
			at = append(at, n.station(res.Drops[i].Chainage))
		}
		where := "the drop at " + at[0]
		if len(at) > 1 {
			where = strconv.Itoa(len(at)) + " drops at " + strings.Join(at, ", ")
		}
		v.Warnings = append(v.Warnings, visible(upper(g.text)+" ("+where+")", maxLine))
	}
}

// upper makes the first letter of s upper case.
func upper(s string) string {
	for i, r := range s {
		return strings.ToUpper(string(r)) + s[i+len(string(r)):]
	}
	return s
}
