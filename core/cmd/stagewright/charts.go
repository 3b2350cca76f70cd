package main

import (
	"encoding/csv"
	"fmt"
	"io"
	"strconv"

	"stagewright/core/charts"
)

const chartsUsage = `usage: stagewright charts FRAGMENT [-csv] [-points 200]
  gm/ID design charts of the fragment's M1 (its process, polarity, W, L, temperature; VDS = vdd/2):
  gm/ID, IC, ID/W, gm·ro and fT over VGS, with the design marked; JSON, or rows
  vgs,id,gm_id,ic,id_w,gm_ro,ft,saturated with -csv
`

func cmdCharts(args []string, _ io.Reader, stdout, stderr io.Writer) int {
	frag, vals, help, err := aidArgs(args, []string{"points"}, []string{"csv"})
	if help {
		fmt.Fprint(stdout, chartsUsage)
		return 0
	}
	points := 200
	if err == nil {
		if p, ok := vals["points"]; ok {
			if points, err = strconv.Atoi(p); err != nil || points < 2 || points > charts.MaxPoints {
				err = fmt.Errorf("-points %q: a whole number 2 … %d", p, charts.MaxPoints)
			}
		}
	}
	if err != nil {
		fmt.Fprintf(stderr, "stagewright charts: %v\n%s", err, chartsUsage)
		return 2
	}
	d, ok := decodeArg("charts", frag, stderr)
	if !ok {
		return 1
	}
	c, err := charts.ForDesign(d, points)
	if err != nil {
		fmt.Fprintf(stderr, "stagewright charts: %v\n", err)
		return 1
	}
	if _, isCSV := vals["csv"]; !isCSV {
		writeJSON(stdout, c)
		return 0
	}
	w := csv.NewWriter(stdout)
	w.Write([]string{"vgs", "id", "gm_id", "ic", "id_w", "gm_ro", "ft", "saturated"})
	f := func(x float64) string { return num(designNum(x)) }
	for i := range c.VGS {
		w.Write([]string{f(c.VGS[i]), f(c.ID[i]), f(c.GmID[i]), f(c.IC[i]), f(c.IDW[i]), f(c.GmRo[i]), f(c.FT[i]),
			strconv.FormatBool(c.Saturated[i])})
	}
	w.Flush()
	return 0
}
