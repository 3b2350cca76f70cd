package sizing

import (
	"math"
	"slices"
	"strings"

	"stagewright/core/design"
	"stagewright/core/units"
)

// atEnd is how close, in the unit-cube coordinate, an input must lie to an
// end of its range to count as having reached it (0.1 % of the range).
const atEnd = 1e-3

// failure is the one sentence of a search that did not meet every target:
// which targets the best compromise misses and by how much, which targets
// they traded against (a conflict along the search, or a hard target the
// compromise sits at), and what to change: relax the missed ones, raise a
// hard cap that binds, widen a range the search ran into, or let sizing
// move more inputs.
func (s *searcher) failure(out *Sizing) string {
	const head = "no design meets every target: "
	if !s.reached {
		return head + "the best point found has no operating point; widen the ranges (lo.*, hi.*) or let vary move more inputs"
	}
	var missed, relax, raise, partners []string
	for i, t := range out.Targets {
		g := &s.goals[i]
		if t.Met {
			continue
		}
		missed = append(missed, t.Key+" ("+reads(g, float64(t.Value))+")")
		if g.hard {
			raise = append(raise, t.Key)
		} else {
			relax = append(relax, t.Key)
		}
	}
	for _, t := range out.Targets {
		if !t.Met {
			continue
		}
		trades := t.Hard && t.Binds
		for _, c := range out.Conflicts {
			if c.A == t.Key || c.B == t.Key {
				trades = true
			}
		}
		if !trades {
			continue
		}
		if t.Hard {
			partners = append(partners, "the hard "+t.Key)
			if t.Binds {
				raise = append(raise, t.Key)
			}
			continue
		}
		partners = append(partners, t.Key)
	}
	var actions []string
	if len(relax) > 0 {
		actions = append(actions, "relax "+or(relax))
	}
	if len(raise) > 0 {
		actions = append(actions, "allow more "+or(raise)+" (a hard cap)")
	}
	var widen []string
	for i, v := range out.Vars {
		u := s.vars[i].coord(float64(v.Value))
		switch {
		case v.Key == "vin":
		case u <= atEnd:
			widen = append(widen, "lo."+v.Key)
		case u >= 1-atEnd:
			widen = append(widen, "hi."+v.Key)
		}
	}
	if len(widen) > 0 {
		it := " (the search reached it)"
		if len(widen) > 1 {
			it = " (the search reached them)"
		}
		actions = append(actions, "widen "+or(widen)+it)
	}
	if more := unvaried(&s.base); len(more) > 0 {
		actions = append(actions, "let vary move "+strings.Join(more, ", ")+" too")
	}
	msg := head + "the best compromise misses " + and(missed)
	if len(partners) > 0 {
		msg += ", which trade against " + and(partners)
	}
	if len(actions) > 0 {
		msg += "; " + join(actions, ", or ")
	}
	return msg
}

// reads says a target's value beside what it asks: "18.2 V/V, at least 20 V/V".
func reads(g *goal, value float64) string {
	v := "no value"
	if !math.IsNaN(value) {
		v = units.Engineering(value, 3, g.unit)
	}
	kind := "at most "
	if g.atLeast {
		kind = "at least "
	}
	return v + ", " + kind + units.Engineering(g.target, 3, g.unit)
}

// unvaried lists the inputs that matter for d but that vary leaves alone,
// but for vin and rs.
func unvaried(d *design.Design) []string {
	var out []string
	for _, k := range design.VarNames() {
		if k == "vin" || k == "rs" {
			continue // the input level is the bias mode's, degeneration trades gain away: neither is a cure to suggest
		}
		if !d.Aids.Vary.Has(k) && d.Relevant(k) {
			out = append(out, k)
		}
	}
	return out
}

func and(parts []string) string { return join(parts, " and ") }
func or(parts []string) string  { return join(parts, " or ") }

// join lists parts as prose: "a", "a and b", "a, b and c".
func join(parts []string, last string) string {
	parts = slices.Compact(slices.Clone(parts))
	switch len(parts) {
	case 0:
		return ""
	case 1:
		return parts[0]
	}
	return strings.Join(parts[:len(parts)-1], ", ") + last + parts[len(parts)-1]
}
