package stage

import (
	"math"
	"slices"

	"stagewright/core/circuit"
)

// Slew is how fast the output can move into its load capacitance: the
// largest current the stage can push into (Up) or pull out of (Down) the
// output node while the output sits at its DC level, with the input driven
// to either rail, over CL. V/s, both positive.
type Slew struct {
	Up, Down float64
	IUp      float64 // A, the current behind Up
	IDown    float64 // A, the current behind Down (its magnitude)
}

// Slew returns the slew rates into cl (F), and false when cl is not above
// 0 or a rail-driven point does not solve. The bias sources keep their
// solved values (a bias circuit does not follow a fast input), so a
// current-source load slews at its bias current, a resistor at the current
// the resistor carries at the DC output level, and a driven transistor at
// the current it carries with its input at the rail.
func (s *Solution) Slew(cl float64) (Slew, bool) {
	if !(cl > 0) || math.IsInf(cl, 0) {
		return Slew{}, false
	}
	out, ok := s.Nodes["out"]
	if !ok {
		return Slew{}, false
	}
	// The solved circuit with its servos' sources fixed at their solved
	// values, the output held at its DC level by a source whose branch
	// current is what the stage would push into the load.
	c := *s.C
	c.VSources = slices.Clone(s.C.VSources)
	for j := range c.VSources {
		if j < len(s.OP.Source) {
			c.VSources[j].V = s.OP.Source[j]
		}
	}
	c.Servos = nil
	hold := c.AddVSource("HOLD", out, circuit.Ground, s.OP.V[out])
	guess := circuit.Guess{}
	for n := 1; n < len(s.OP.V); n++ {
		guess[circuit.Node(n)] = s.OP.V[n]
	}
	var into [2]float64
	for k, rail := range [2]float64{0, s.Spec.VDD} {
		c.VSources[s.Input].V = rail
		op, err := c.SolveDC(guess, circuit.Options{})
		if err != nil {
			return Slew{}, false
		}
		// The branch current flows from the output through the holding
		// source to ground: what the stage pushes into the output node.
		into[k] = op.Branch[hold]
	}
	up := math.Max(0, math.Max(into[0], into[1]))
	down := math.Max(0, -math.Min(into[0], into[1]))
	return Slew{Up: up / cl, Down: down / cl, IUp: up, IDown: down}, true
}
