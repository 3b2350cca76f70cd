package main

import (
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"

	"stagewright/core/design"
	"stagewright/core/transfer"
	"stagewright/core/units"
)

const transferUsage = `usage: stagewright transfer FRAGMENT [-csv] [-points 201]
  the DC transfer curve: the input level swept over 0 … vdd with the bias held, the output level,
  the gain and both regions at every level, and the usable input range and output swing; JSON,
  or rows vin,vout,gain,region1,region2 with -csv
`

const distortionUsage = `usage: stagewright distortion FRAGMENT [-amp 10m]
  harmonic distortion for an input sine of amplitude -amp (V, SI prefixes allowed; default the
  fragment's amp, 10m): HD2, HD3 and THD from one solved period beside the Taylor estimate; JSON
`

// transferArgs splits the arguments of transfer and distortion into the
// one fragment and its options (given before or after it): flags names
// the options that take a value, switches those that do not.
func transferArgs(args []string, flags, switches []string) (frag string, vals map[string]string, help bool, err error) {
	vals = map[string]string{}
	is := func(list []string, s string) bool {
		for _, x := range list {
			if x == s {
				return true
			}
		}
		return false
	}
	for i := 0; i < len(args); i++ {
		a := args[i]
		if !strings.HasPrefix(a, "-") || a == "-" {
			if frag != "" {
				return "", nil, false, fmt.Errorf("unexpected argument %q: give one fragment", a)
			}
			frag = a
			continue
		}
		name, value, hasValue := strings.Cut(strings.TrimLeft(a, "-"), "=")
		switch {
		case name == "h" || name == "help":
			return "", nil, true, nil
		case is(switches, name):
			if hasValue {
				return "", nil, false, fmt.Errorf("option -%s takes no value", name)
			}
			vals[name] = ""
		case is(flags, name):
			if !hasValue {
				if i+1 >= len(args) {
					return "", nil, false, fmt.Errorf("option -%s needs a value", name)
				}
				i++
				value = args[i]
			}
			vals[name] = value
		default:
			return "", nil, false, fmt.Errorf("unknown option %q", a)
		}
	}
	if frag == "" {
		return "", nil, false, errors.New("give one fragment")
	}
	return frag, vals, false, nil
}

// transferFail writes {"ok":false,"error":{code,message,key}} on stdout
// and the message on stderr, and returns the design-error status 1.
func transferFail(stdout, stderr io.Writer, cmd, code, key, msg string) int {
	out, _ := json.Marshal(struct {
		OK    bool           `json:"ok"`
		Error design.Failure `json:"error"`
	}{false, design.Failure{Code: code, Message: msg, Key: key}})
	stdout.Write(append(out, '\n'))
	fmt.Fprintf(stderr, "stagewright %s: %s\n", cmd, msg)
	return 1
}

// transferDesign decodes the fragment strictly (any problem is a design
// error) and returns the exit status on failure.
func transferDesign(cmd, frag string, stdout, stderr io.Writer) (design.Design, int) {
	d, err := design.Decode(frag)
	if err != nil {
		key := ""
		var fe *design.FragmentError
		if errors.As(err, &fe) && len(fe.Problems) > 0 {
			key = fe.Problems[0].Key
		}
		return d, transferFail(stdout, stderr, cmd, "fragment", key, err.Error())
	}
	return d, 0
}

func transferError(stdout, stderr io.Writer, cmd string, err error) int {
	var e *transfer.Error
	if errors.As(err, &e) {
		return transferFail(stdout, stderr, cmd, "transfer", e.Key, e.Error())
	}
	return transferFail(stdout, stderr, cmd, "internal", "", err.Error())
}

func cmdTransfer(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	frag, vals, help, err := transferArgs(args, []string{"points"}, []string{"csv"})
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
	d, st := transferDesign("transfer", frag, stdout, stderr)
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
		return 0
	}
	out, err := json.Marshal(tr)
	if err != nil {
		return transferError(stdout, stderr, "transfer", err)
	}
	stdout.Write(append(out, '\n'))
	return 0
}

func cmdDistortion(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	frag, vals, help, err := transferArgs(args, []string{"amp"}, nil)
	if help {
		fmt.Fprint(stdout, distortionUsage)
		return 0
	}
	if err != nil {
		fmt.Fprintf(stderr, "stagewright distortion: %v\n%s", err, distortionUsage)
		return 2
	}
	d, st := transferDesign("distortion", frag, stdout, stderr)
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
	out, err := json.Marshal(l)
	if err != nil {
		return transferError(stdout, stderr, "distortion", err)
	}
	stdout.Write(append(out, '\n'))
	return 0
}
