package main

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"strconv"

	"stagewright/core/transfer"
	"stagewright/core/units"
)

const transferUsage = `usage: stagewright transfer FRAGMENT [-csv] [-points 201]
  the DC transfer curve: the input level swept over 0 … vdd with the bias held, the output level,
  the gain and both regions at every level (refined where the curve is steep, so that no step moves
  the output by more than 1 % of vdd; -points sets the uniform grid it starts from), the usable input
  range and output swing, and the swing around the operating point: the headroom up and down from the
  DC output to the first transistor leaving saturation, named at the output's high and low end, and
  the symmetric swing (twice the smaller headroom); JSON, or rows vin,vout,gain,region1,region2 with
  -csv (the swing then as a last line on stderr)
`

const distortionUsage = `usage: stagewright distortion FRAGMENT [-amp 10m]
  harmonic distortion for an input sine of amplitude -amp (V, SI prefixes allowed; default the
  fragment's amp, 10m): HD2, HD3 and THD from one solved period beside the Taylor estimate; JSON
`

func transferError(stdout, stderr io.Writer, cmd string, err error) int {
	var e *transfer.Error
	if errors.As(err, &e) {
		return failJSON(stdout, stderr, cmd, "transfer", e.Key, e.Error())
	}
	return failJSON(stdout, stderr, cmd, "internal", "", err.Error())
}

func cmdTransfer(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	frag, vals, help, err := aidArgs(args, []string{"points"}, []string{"csv"})
	if help {
		fmt.Fprint(stdout, transferUsage)
		return 0
	}
	if err != nil {
		fmt.Fprintf(stderr, "stagewright transfer: %v\n%s", err, transferUsage)
		return 2
	}
	points := transfer.DefaultPoints
	if s, ok := vals["points"]; ok {
		n, err := strconv.Atoi(s)
		if err != nil || n < 2 || n > transfer.MaxPoints {
			fmt.Fprintf(stderr, "stagewright transfer: -points %q: give a whole number in 2 … %d\n", s, transfer.MaxPoints)
			return 2
		}
		points = n
	}
	d, st := decodeFor("transfer", frag, stdout, stderr)
	if st != 0 {
		return st
	}
	tr, err := transfer.Curve(d, points)
	if err != nil {
		return transferError(stdout, stderr, "transfer", err)
	}
	if _, ok := vals["csv"]; ok {
		w := csv.NewWriter(stdout)
		w.Write([]string{"vin", "vout", "gain", "region1", "region2"})
		g := func(v float64) string { return strconv.FormatFloat(v, 'g', 8, 64) }
		for i := range tr.Vin {
			w.Write([]string{g(tr.Vin[i]), g(tr.Vout[i]), g(tr.Gain[i]), tr.Region1[i], tr.Region2[i]})
		}
		w.Flush()
		if err := w.Error(); err != nil {
			fmt.Fprintln(stderr, "stagewright transfer:", err)
			return 1
		}
		fmt.Fprintln(stderr, swingLine(tr))
		return 0
	}
	out, err := marshal(tr)
	if err != nil {
		return transferError(stdout, stderr, "transfer", err)
	}
	stdout.Write(append(out, '\n'))
	return 0
}

func cmdDistortion(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	frag, vals, help, err := aidArgs(args, []string{"amp"}, nil)
	if help {
		fmt.Fprint(stdout, distortionUsage)
		return 0
	}
	if err != nil {
		fmt.Fprintf(stderr, "stagewright distortion: %v\n%s", err, distortionUsage)
		return 2
	}
	d, st := decodeFor("distortion", frag, stdout, stderr)
	if st != 0 {
		return st
	}
	amp := d.Aids.Amp
	if !(amp > 0) {
		amp = transfer.DefaultAmp
	}
	if s, ok := vals["amp"]; ok {
		v, err := units.Parse(s)
		if err != nil || !(v > 0) {
			fmt.Fprintf(stderr, "stagewright distortion: -amp %q: give a positive amplitude in V, e.g. 10m\n", s)
			return 2
		}
		amp = v
	}
	l, err := transfer.Distortion(d, amp)
	if err != nil {
		return transferError(stdout, stderr, "distortion", err)
	}
	out, err := marshal(l)
	if err != nil {
		return transferError(stdout, stderr, "distortion", err)
	}
	stdout.Write(append(out, '\n'))
	return 0
}

// swingLine is the swing around the operating point in one line, in output
// terms: "output 900 mV: up 598.9 mV (M2 leaves saturation), down 735.3 mV
// (M1 leaves saturation), symmetric 1.198 V; usable range 1.193 V".
func swingLine(tr transfer.Trace) string {
	v := func(x float64) string { return units.Engineering(x, 4, "V") }
	return fmt.Sprintf("output %s: up %s (%s), down %s (%s), symmetric %s; usable range %s",
		v(tr.OutOp), v(tr.HeadroomHi), tr.LimitOutHi, v(tr.HeadroomLo), tr.LimitOutLo, v(tr.SwingSym), v(tr.Swing))
}
