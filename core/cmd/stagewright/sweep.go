package main

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"stagewright/core/design"
	"stagewright/core/sweep"
	"stagewright/core/units"
)

const sweepUsage = `usage: stagewright sweep FRAGMENT [-key w] [-lo 1u] [-hi 100u] [-n 50] [-csv]
  sweep one number key (or process parameter n.vt0 …) and report every scalar figure at each
  point, with the design marked; defaults from the fragment's sw, sw.lo, sw.hi, sw.n; JSON, or
  rows KEY,gain,f3db,… with -csv
`

const compareUsage = `usage: stagewright compare FRAGMENT [-csv]
  the fragment's design (A) beside its pinned design (pin=…, B): every scalar figure of both,
  B − A and 100·(B − A)/|A|; JSON, or rows figure,unit,a,b,diff,diff_pct with -csv
`

func designNum(x float64) design.Num { return design.Num(x) }

func cmdSweep(args []string, _ io.Reader, stdout, stderr io.Writer) int {
	frag, vals, help, err := aidArgs(args, []string{"key", "lo", "hi", "n"}, []string{"csv"})
	if help {
		fmt.Fprint(stdout, sweepUsage)
		return 0
	}
	if err != nil {
		fmt.Fprintf(stderr, "stagewright sweep: %v\n%s", err, sweepUsage)
		return 2
	}
	d, ok := decodeArg("sweep", frag, stderr)
	if !ok {
		return 1
	}
	sw := d.Aids.Sweep
	key, lo, hi, n := sw.Key, sw.Lo, sw.Hi, sw.N
	if k, ok := vals["key"]; ok {
		key = k
		if _, given := vals["lo"]; !given {
			lo, hi, _, _ = d.KeyRange(key)
		}
		if _, given := vals["hi"]; !given {
			_, hi, _, _ = d.KeyRange(key)
		}
	}
	for _, opt := range []struct {
		name string
		dst  *float64
	}{{"lo", &lo}, {"hi", &hi}} {
		if s, ok := vals[opt.name]; ok {
			v, perr := units.Parse(s)
			if perr != nil {
				fmt.Fprintf(stderr, "stagewright sweep: -%s %q: %v\n%s", opt.name, s, perr, sweepUsage)
				return 2
			}
			*opt.dst = v
		}
	}
	if s, ok := vals["n"]; ok {
		if n, err = strconv.Atoi(s); err != nil {
			fmt.Fprintf(stderr, "stagewright sweep: -n %q: a whole number 2 … %d\n%s", s, sweep.MaxPoints, sweepUsage)
			return 2
		}
	}
	res, err := sweep.Sweep(d, key, lo, hi, n)
	if err != nil {
		fmt.Fprintf(stderr, "stagewright sweep: %v\n", err)
		return 2
	}
	if _, isCSV := vals["csv"]; !isCSV {
		writeJSON(stdout, res)
		return 0
	}
	writeSweepCSV(stdout, &res)
	return 0
}

// writeSweepCSV writes one row per point: the swept input, each figure and,
// last, the reason a point has no result (empty where it has one). A figure
// that is the swept input itself (id in bias id) is not written twice; one
// of the same name that differs from it is headed "NAME (figure)".
func writeSweepCSV(out io.Writer, res *sweep.Result) {
	reasons := make(map[string]string, len(res.Failures))
	for _, f := range res.Failures {
		if at, why, ok := strings.Cut(f, ": "); ok {
			reasons[at] = why
		}
	}
	head := []string{res.Key}
	var series []sweep.Series
	for _, s := range res.Series {
		name := s.Name
		if name == res.Key {
			if sameValues(res.Values, s.Values) {
				continue
			}
			name += " (figure)"
		}
		head = append(head, name)
		series = append(series, s)
	}
	w := csv.NewWriter(out)
	w.Write(append(head, "error"))
	for i, v := range res.Values {
		row := []string{num(design.Num(v))}
		for _, s := range series {
			row = append(row, num(design.Num(s.Values[i])))
		}
		w.Write(append(row, reasons[res.Key+"="+units.Exact(v)]))
	}
	w.Flush()
}

// sameValues reports whether a figure equals the swept input wherever it
// has a value, to 1e-9 relative (the bias servo holds it to far less).
func sameValues(in, fig design.Floats) bool {
	for i, v := range in {
		f := fig[i]
		if math.IsNaN(f) {
			continue
		}
		if math.Abs(f-v) > 1e-9*math.Abs(v) {
			return false
		}
	}
	return true
}

func cmdCompare(args []string, _ io.Reader, stdout, stderr io.Writer) int {
	frag, vals, help, err := aidArgs(args, nil, []string{"csv"})
	if help {
		fmt.Fprint(stdout, compareUsage)
		return 0
	}
	if err != nil {
		fmt.Fprintf(stderr, "stagewright compare: %v\n%s", err, compareUsage)
		return 2
	}
	d, ok := decodeArg("compare", frag, stderr)
	if !ok {
		return 1
	}
	c, err := sweep.ComparePinned(d)
	if err != nil {
		fmt.Fprintf(stderr, "stagewright compare: %v\n", err)
		return 1
	}
	if _, isCSV := vals["csv"]; !isCSV {
		writeJSON(stdout, c)
		return 0
	}
	w := csv.NewWriter(stdout)
	w.Write([]string{"figure", "unit", "a", "b", "diff", "diff_pct"})
	for _, r := range c.Rows {
		w.Write([]string{r.Name, r.Unit, num(r.A), num(r.B), num(r.Diff), num(r.DiffPct)})
	}
	w.Flush()
	return 0
}
