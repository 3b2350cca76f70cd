package main

import (
	"encoding/csv"
	"fmt"
	"io"
	"strconv"

	"stagewright/core/design"
	"stagewright/core/sizing"
)

const sizeUsage = `usage: stagewright size FRAGMENT [-csv]
  search for a design meeting the fragment's targets (t.gain t.f3db t.gbw t.idd t.power t.swing
  t.noise t.margin) by moving the inputs named by vary (w l id rd rs vin lw ll vout) within
  lo.*/hi.*; hard=idd.power.noise makes those caps hard (never exceeded, not even by the best
  compromise), obj=power|area|noise what to minimise once every target is met; JSON, or one row
  per target (key,kind,target,value,margin,met,binds,hard) and a last row for the objective
  (obj=KEY,least,,value,,,,) with -csv; on failure one sentence on stderr says what to change
`

func num(x design.Num) string {
	if !x.Finite() {
		return ""
	}
	return strconv.FormatFloat(float64(x), 'g', 8, 64)
}

func cmdSize(args []string, _ io.Reader, stdout, stderr io.Writer) int {
	frag, vals, help, err := aidArgs(args, nil, []string{"csv"})
	if help {
		fmt.Fprint(stdout, sizeUsage)
		return 0
	}
	if err != nil {
		fmt.Fprintf(stderr, "stagewright size: %v\n%s", err, sizeUsage)
		return 2
	}
	d, ok := decodeArg("size", frag, stderr)
	if !ok {
		return 1
	}
	s, err := sizing.Size(d, nil)
	if err != nil {
		fmt.Fprintf(stderr, "stagewright size: %v\n", err)
		return 1
	}
	if _, isCSV := vals["csv"]; isCSV {
		w := csv.NewWriter(stdout)
		w.Write([]string{"key", "kind", "target", "value", "margin", "met", "binds", "hard"})
		for _, t := range s.Targets {
			w.Write([]string{t.Key, t.Kind, num(t.Target), num(t.Value), num(t.Margin),
				strconv.FormatBool(t.Met), strconv.FormatBool(t.Binds), strconv.FormatBool(t.Hard)})
		}
		if o := s.Objective; o != nil {
			w.Write([]string{"obj=" + o.Key, "least", "", num(o.Value), "", "", "", ""})
		}
		w.Flush()
	} else {
		writeJSON(stdout, s)
	}
	if !s.Feasible {
		fmt.Fprintf(stderr, "stagewright size: %s\n", s.Message)
		return 1
	}
	return 0
}
