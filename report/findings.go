package report

import (
	"errors"
	"fmt"
	"strings"

	"canalstep/planner"
	"canalstep/report/units"
)

// The planner's findings are typed, with numbers in SI; these functions
// word them once, here, in the user's units.

// where words a chainage range: "at 1+250.00" or "at 12 stations from
// 1+250.00 to 1+370.00".
func where(from, to float64, stations int, u Units) string {
	if from == to {
		return "at " + u.Station(from)
	}
	if stations > 0 {
		return fmt.Sprintf("at %d stations from %s to %s", stations, u.Station(from), u.Station(to))
	}
	return fmt.Sprintf("from %s to %s", u.Station(from), u.Station(to))
}

func kindWords(k planner.Kind) string { return strings.ReplaceAll(string(k), "_", " ") }

// FormatViolation words a broken constraint in u's units.
func FormatViolation(v planner.Violation, u Units) string {
	L := func(x float64) string { return u.Format(units.Length, x, 2) }
	Z := func(x float64) string { return u.Format(units.Length, x, 3) }
	at := where(v.From, v.To, v.Stations, u)
	switch v.Kind {
	case planner.KindMaxCut:
		return fmt.Sprintf("maximum cut depth %s exceeded %s (up to %s)", L(v.Limit), at, L(v.Value))
	case planner.KindMaxFill:
		return fmt.Sprintf("maximum fill height %s exceeded %s (up to %s)", L(v.Limit), at, L(v.Value))
	case planner.KindFixedInvert:
		return fmt.Sprintf("fixed invert %s missed %s (bed %s)", Z(v.Limit), at, Z(v.Value))
	case planner.KindMinWaterLevel:
		return fmt.Sprintf("lowest water level %s not reached %s (water %s)", Z(v.Limit), at, Z(v.Value))
	case planner.KindOfftake:
		return fmt.Sprintf("offtake command level %s not reached %s (water %s)", Z(v.Limit), at, Z(v.Value))
	case planner.KindCommand:
		return fmt.Sprintf("command margin %s not held %s (worst %s)", L(v.Limit), at, L(v.Value))
	case planner.KindEndInvert:
		return fmt.Sprintf("end invert %s missed (bed %s)", Z(v.Limit), Z(v.Value))
	case planner.KindDropSpacing:
		return fmt.Sprintf("drops closer than %s %s (%s)", L(v.Limit), at, L(v.Value))
	case planner.KindDropPosition:
		return "a drop within the minimum reach of the start or at a control station " + at
	}
	return kindWords(v.Kind) + " " + at
}

// FormatWarning words a warning in u's units.
func FormatWarning(w planner.Warning, u Units) string {
	at := where(w.From, w.To, w.Stations, u)
	switch w.Kind {
	case planner.WarnDropDesign:
		return fmt.Sprintf("drop %s: %s", at, w.Text)
	case planner.WarnDropDesignFailed:
		return fmt.Sprintf("drop %s: the drop design failed: %s", at, w.Text)
	case planner.WarnOutlet:
		return fmt.Sprintf("drop %s, at %.0f %% of the design flow: %s", at, 100*w.Flow, w.Text)
	case planner.WarnBackwater:
		return fmt.Sprintf("backwater %s eats more than half the %s freeboard; widen the crest or raise the banks", at, u.Format(units.Length, w.Limit, 3))
	case planner.WarnVelocityMax:
		return fmt.Sprintf("velocity reaches %s, above the permissible %s, %s", u.Format(units.Velocity, w.Value, 3), u.Format(units.Velocity, w.Limit, 3), w.Text)
	case planner.WarnVelocityMin:
		return fmt.Sprintf("velocity falls to %s, below the non-silting %s, %s", u.Format(units.Velocity, w.Value, 3), u.Format(units.Velocity, w.Limit, 3), w.Text)
	case planner.WarnCommand:
		return fmt.Sprintf("the water surface dips below the command margin %s %s (worst margin %s)", u.Format(units.Length, w.Limit, 2), at, u.Format(units.Length, w.Value, 2))
	case planner.WarnCatch:
		return fmt.Sprintf("catch point beyond the sampled cross-section %s: the ground is taken level beyond it; widen the section or check the ground", at)
	case planner.WarnProfile:
		return fmt.Sprintf("water-surface profile failed %s (%s); normal depth shown", at, w.Text)
	}
	return fmt.Sprintf("%s %s: %s", kindWords(w.Kind), at, w.Text)
}

// FormatConflict words one stretch of an infeasible plan in u's units:
// what conflicts, where, by how much, and the flags that relax it.
func FormatConflict(c planner.Conflict, u Units) string {
	var names []string
	for _, k := range c.Kinds {
		names = append(names, kindWords(k))
	}
	s := strings.Join(names, " and ") + " cannot be met " + where(c.From, c.To, 0, u)
	L := func(x float64) string { return u.Format(units.Length, x, 2) }
	first := planner.Kind("")
	if len(c.Kinds) > 0 {
		first = c.Kinds[0]
	}
	switch c.Cause {
	case planner.CauseContradict:
		if len(c.Kinds) > 1 {
			s += fmt.Sprintf(": the %s needs the bed %s higher than the %s allows", kindWords(first), L(c.Shortage), kindWords(c.Kinds[1]))
		}
	case planner.CauseTooHigh:
		s += fmt.Sprintf(": the %s needs the bed %s higher than the flattest grade %.6g reaches from the start", kindWords(first), L(c.Shortage), c.Grade)
	case planner.CauseTooLow:
		s += fmt.Sprintf(": the steepest grade %.6g and drops of %s at their spacing leave the bed %s above what the %s allows", c.Grade, L(c.Height), L(c.Shortage), kindWords(first))
	case planner.CauseGradeSet:
		s += fmt.Sprintf(": the candidate grades cannot meet the invert %s on the elevation grid", u.Format(units.Length, c.Height, 3))
		if len(c.Grades) > 0 {
			var gs []string
			for _, g := range c.Grades {
				gs = append(gs, fmt.Sprintf("%.7g", g))
			}
			s += "; grades that would: " + strings.Join(gs, ", ")
		}
	case planner.CauseSpacing:
		s += ": drops cannot be spaced by their basin, transition and minimum reach here"
	case planner.CauseLimits:
		switch {
		case hasKind(c.Kinds, planner.KindMaxFill) && !hasKind(c.Kinds, planner.KindMaxCut):
			s += ": the ground falls faster than the steepest grade and the allowed drops at their minimum spacing can follow"
		case hasKind(c.Kinds, planner.KindMaxCut) && !hasKind(c.Kinds, planner.KindMaxFill):
			s += ": the ground rises above the bed by more than the cut allowed"
		default:
			s += ": the cut and fill limits leave no bed line the grades and drops can follow"
		}
	}
	if c.Uphill {
		s += "; the ground rises along the route: it may be drawn from its tail to its head (reverse its vertices)"
	}
	if len(c.Flags) > 0 {
		s += "; relax it with " + strings.Join(c.Flags, " or ")
	}
	return s
}

func hasKind(ks []planner.Kind, k planner.Kind) bool {
	for _, x := range ks {
		if x == k {
			return true
		}
	}
	return false
}

// conflicts returns the conflicts of an infeasible plan's error.
func conflicts(err error) []planner.Conflict {
	var ie *planner.InfeasibleError
	if errors.As(err, &ie) {
		return ie.Conflicts
	}
	return nil
}

// ErrorText words a planner error in u's units: an infeasible plan's
// conflicts one after another, any other error as it is.
func ErrorText(err error, u Units) string {
	if err == nil {
		return ""
	}
	cs := conflicts(err)
	if len(cs) == 0 {
		return err.Error()
	}
	parts := make([]string, len(cs))
	for i, c := range cs {
		parts[i] = FormatConflict(c, u)
	}
	return "no feasible profile: " + strings.Join(parts, "; ")
}
