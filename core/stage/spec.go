package stage

import (
	"fmt"
	"math"

	"stagewright/core/device"
)

// Kind is a stage topology.
type Kind string

// The topologies.
const (
	CS Kind = "cs" // common source: input at the gate, output at the drain
	CG Kind = "cg" // common gate: input at the source, output at the drain
	SF Kind = "sf" // source follower: input at the gate, output at the source
)

// Load is the device that completes the stage.
type Load string

// The loads.
const (
	Resistor Load = "r"      // rd to the opposite rail (sf: rs)
	Active   Load = "active" // a transistor current source (sf: a current sink of the same type)
	Diode    Load = "diode"  // a diode-connected complementary transistor (cs, cg)
)

// Bias says what the user fixes.
type Bias string

// The bias modes.
const (
	ByVin  Bias = "vin"  // the input DC level (and the load's |VGS|) are given
	ByID   Bias = "id"   // the drain current is given; bias voltages are solved for
	ByGmID Bias = "gmid" // gm/ID and drain current are given; W is solved for at the given L
)

// Spec is one stage, fully specified. Voltages in V, currents in A,
// resistances in Ω, capacitances in F, geometry in m, temperature in K.
type Spec struct {
	Kind    Kind
	Pol     device.Polarity // of the amplifying transistor M1
	Load    Load
	Bias    Bias
	Process device.Process // overrides already applied
	VDD     float64
	TempK   float64

	W, L float64

	ID   float64 // target drain current (ByID, ByGmID)
	GmID float64 // target gm/ID, S/A (ByGmID)
	Vin  float64 // input DC level: gate of cs/sf; DC level of the signal source of a cg
	VG   float64 // gate level of a cg
	VOut float64 // target output level with a transistor load (ByID, ByGmID, cs/cg)

	RD, RS       float64
	LoadW, LoadL float64
	LoadVB       float64 // |VGS| of the load/sink transistor (given, or the starting value when solved)
	RSig, RL, CL float64 // RL = +Inf: none
}

// Error is a stage that cannot be built or biased; Key names the design
// input most to blame, when there is one.
type Error struct {
	Key     string
	Message string
	// SolverFailed marks a failure of the DC solver rather than a property
	// of the design: no method found the operating point, and nothing shows
	// that none exists. Every other Error is about the design.
	SolverFailed bool
}

func (e *Error) Error() string { return e.Message }

func errorf(key, format string, a ...any) *Error {
	return &Error{Key: key, Message: fmt.Sprintf(format, a...)}
}

// loadPol is the polarity of the load transistor: complementary for cs/cg,
// the same type for a source follower's sink.
func (s *Spec) loadPol() device.Polarity {
	if s.Kind == SF {
		return s.Pol
	}
	return -s.Pol
}

func (s *Spec) check() error {
	switch s.Kind {
	case CS, CG, SF:
	default:
		return errorf("stage", "unknown stage %q", s.Kind)
	}
	switch s.Load {
	case Resistor, Active:
	case Diode:
		if s.Kind == SF {
			return errorf("load", "a source follower takes load r or active, not diode")
		}
	default:
		return errorf("load", "unknown load %q", s.Load)
	}
	if s.Pol != device.NMOS && s.Pol != device.PMOS {
		return errorf("pol", "polarity must be n or p")
	}
	pos := func(key string, v float64) error {
		if !(v > 0) || math.IsInf(v, 0) {
			return errorf(key, "%s must be positive and finite, got %g", key, v)
		}
		return nil
	}
	for _, c := range []struct {
		k string
		v float64
	}{{"vdd", s.VDD}, {"temp", s.TempK}, {"w", s.W}, {"l", s.L}, {"rsig", s.RSig}} {
		if err := pos(c.k, c.v); err != nil {
			return err
		}
	}
	if s.Bias != ByVin {
		if err := pos("id", s.ID); err != nil {
			return err
		}
	}
	if s.Load == Resistor {
		if s.Kind == SF {
			if err := pos("rs", s.RS); err != nil {
				return errorf("rs", "a source follower with load r needs a bias resistor rs > 0")
			}
		} else if err := pos("rd", s.RD); err != nil {
			return err
		}
	}
	return nil
}
