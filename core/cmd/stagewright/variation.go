package main

import (
	"encoding/csv"
	"errors"
	"flag"
	"fmt"
	"io"
	"strconv"

	"stagewright/core/design"
	"stagewright/core/units"
	"stagewright/core/variation"
)

const cornersUsage = `usage: stagewright corners FRAGMENT [-csv]
  every process corner (tt ss ff sf fs) at -40, 27 and 125 °C and the design's own temperature,
  at the supply ±vddtol (10 %); every device's region, the worst named and flagged; a current
  bias held as hold= says (mirror, fixed, ideal). JSON by default, a table with -csv
`

const mcUsage = `usage: stagewright mc FRAGMENT [-n 1000] [-seed 1] [-t.gain V/V] [-t.f3db Hz] [-t.gbw Hz] [-t.idd A] [-t.power W] [-t.margin V]
  Monte Carlo of the global process shift and device mismatch; JSON. Targets (SI prefixes allowed) give the yield.
`

// parseWithFragment parses flags that may come before or after the one
// fragment argument.
func parseWithFragment(fs *flag.FlagSet, args []string) (string, error) {
	if err := fs.Parse(args); err != nil {
		return "", err
	}
	rest := fs.Args()
	if len(rest) == 0 {
		return "", errors.New("give one fragment")
	}
	frag := rest[0]
	if err := fs.Parse(rest[1:]); err != nil {
		return "", err
	}
	if len(fs.Args()) > 0 {
		return "", fmt.Errorf("unexpected argument %q after the fragment", fs.Args()[0])
	}
	return frag, nil
}

func cmdCorners(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("corners", flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	asCSV := fs.Bool("csv", false, "write the table as CSV")
	frag, err := parseWithFragment(fs, args)
	if errors.Is(err, flag.ErrHelp) {
		fmt.Fprint(stdout, cornersUsage)
		return 0
	}
	if err != nil {
		fmt.Fprintf(stderr, "stagewright corners: %v\n%s", err, cornersUsage)
		return 2
	}
	d, st := decodeFor("corners", frag, stdout, stderr)
	if st != 0 {
		return st
	}
	rows, err := variation.Corners(d)
	if err != nil {
		return failJSON(stdout, stderr, "corners", opFailureCode(err), "", err.Error())
	}
	if *asCSV {
		writeCornersCSV(stdout, rows)
	} else {
		out, err := marshal(struct {
			OK     bool                  `json:"ok"`
			Design string                `json:"design"`
			Rows   []variation.CornerRow `json:"rows"`
		}{true, d.Encode(), rows})
		if err != nil {
			return failJSON(stdout, stderr, "corners", "internal", "", err.Error())
		}
		stdout.Write(append(out, '\n'))
	}
	return 0
}

// csvNum writes a number at full precision, or an empty cell when it is not finite.
func csvNum(v design.Num) string {
	if !v.Finite() {
		return ""
	}
	return strconv.FormatFloat(float64(v), 'g', -1, 64)
}

func writeCornersCSV(w io.Writer, rows []variation.CornerRow) {
	cw := csv.NewWriter(w)
	cw.Write([]string{"corner", "temp_c", "vdd_v", "ok", "flag", "gain", "f3db_hz", "gbw_hz", "id_a", "vout_v", "vout_drift_v",
		"power_w", "margin_v", "region", "in_rms_v", "error"})
	for _, r := range rows {
		msg := ""
		if r.Error != nil {
			msg = r.Error.Message
		}
		flagged := ""
		if r.Flag {
			flagged = "out of saturation"
		}
		cw.Write([]string{r.Corner, csvNum(r.Temp), csvNum(r.VDD), strconv.FormatBool(r.OK), flagged, csvNum(r.Gain), csvNum(r.F3dB),
			csvNum(r.GBW), csvNum(r.ID), csvNum(r.VOut), csvNum(r.VOutDrift), csvNum(r.Power), csvNum(r.Margin), r.Region,
			csvNum(r.InRMS), msg})
	}
	cw.Flush()
}

// siFlag is a flag holding an SI number such as 10M or 100u.
type siFlag struct{ v *float64 }

func (f siFlag) String() string {
	if f.v == nil {
		return "0"
	}
	return units.Exact(*f.v)
}

func (f siFlag) Set(s string) error {
	v, err := units.Parse(s)
	if err != nil {
		return err
	}
	if !(v >= 0) {
		return fmt.Errorf("a target must be positive or 0 (none), got %s", s)
	}
	*f.v = v
	return nil
}

func cmdMC(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("mc", flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	n := fs.Int("n", 1000, "samples, 0 … 10000")
	seed := fs.Int64("seed", 1, "random seed")
	var t variation.Targets
	for _, tf := range []struct {
		name string
		v    *float64
	}{
		{"t.gain", &t.MinGain}, {"t.f3db", &t.MinF3dB}, {"t.gbw", &t.MinGBW}, {"t.idd", &t.MaxIDD},
		{"t.power", &t.MaxPower}, {"t.swing", &t.MinSwing}, {"t.noise", &t.MaxNoise}, {"t.margin", &t.MinMargin},
	} {
		fs.Var(siFlag{tf.v}, tf.name, "target")
	}
	frag, err := parseWithFragment(fs, args)
	if errors.Is(err, flag.ErrHelp) {
		fmt.Fprint(stdout, mcUsage)
		return 0
	}
	if err != nil {
		fmt.Fprintf(stderr, "stagewright mc: %v\n%s", err, mcUsage)
		return 2
	}
	if *n < 0 || *n > variation.MaxSamples {
		fmt.Fprintf(stderr, "stagewright mc: -n = %d is outside the accepted range [0, %d]\n%s", *n, variation.MaxSamples, mcUsage)
		return 2
	}
	d, st := decodeFor("mc", frag, stdout, stderr)
	if st != 0 {
		return st
	}
	// The fragment's mc, seed and t.* keys apply unless a flag overrides them.
	set := map[string]bool{}
	fs.Visit(func(f *flag.Flag) { set[f.Name] = true })
	if !set["n"] {
		*n = d.Aids.MC
	}
	if !set["seed"] {
		*seed = int64(d.Aids.Seed)
	}
	ft := d.Aids.Targets
	for _, c := range []struct {
		name     string
		v        *float64
		fromFrag float64
	}{
		{"t.gain", &t.MinGain, ft.Gain}, {"t.f3db", &t.MinF3dB, ft.F3dB}, {"t.gbw", &t.MinGBW, ft.GBW}, {"t.idd", &t.MaxIDD, ft.IDD},
		{"t.power", &t.MaxPower, ft.Power}, {"t.swing", &t.MinSwing, ft.Swing}, {"t.noise", &t.MaxNoise, ft.Noise}, {"t.margin", &t.MinMargin, ft.Margin},
	} {
		if !set[c.name] {
			*c.v = c.fromFrag
		}
	}
	var targets *variation.Targets
	if t != (variation.Targets{}) {
		targets = &t
	}
	r, err := variation.MonteCarlo(d, *n, *seed, targets)
	if err != nil {
		return failJSON(stdout, stderr, "mc", opFailureCode(err), "", err.Error())
	}
	out, err := marshal(struct {
		OK     bool               `json:"ok"`
		Design string             `json:"design"`
		MC     variation.MCResult `json:"mc"`
	}{true, d.Encode(), r})
	if err != nil {
		return failJSON(stdout, stderr, "mc", "internal", "", err.Error())
	}
	stdout.Write(append(out, '\n'))
	return 0
}
