package main

import (
	"bytes"
	"strings"
	"testing"
)

func TestCmdSweep(t *testing.T) {
	checkAid(t, "sweep", func(a []string, in *strings.Reader, o, e *bytes.Buffer) int { return cmdSweep(a, in, o, e) }, []aidCase{
		{[]string{"", "-key", "w", "-lo", "1u", "-hi", "100u", "-n", "5"}, 0, `"key":"w","log":true`},
		{[]string{"rd=5k", "-key=rd", "-lo=1k", "-hi=9k", "-n=3", "-csv"}, 0, "rd,gain,f3db,ugf,gbw,in_rms,power,margin,id,gm_id,rout,rin,psrr_db,error\n1000,"},
		{[]string{"sw=n.vt0&sw.lo=0.3&sw.hi=0.6&sw.n=4"}, 0, `"key":"n.thresh"`},
		{[]string{"", "-key", "stage"}, 2, ""},
		{[]string{"", "-lo", "x"}, 2, ""},
	})
}

func TestCmdCompare(t *testing.T) {
	checkAid(t, "compare", func(a []string, in *strings.Reader, o, e *bytes.Buffer) int { return cmdCompare(a, in, o, e) }, []aidCase{
		{[]string{"id=50u&pin=id%3D100u"}, 0, `"rows":[{"name":"gain"`},
		{[]string{"id=50u&pin=id%3D100u", "-csv"}, 0, "figure,unit,a,b,diff,diff_pct\ngain,V/V,"},
		{[]string{"id=50u"}, 1, ""},
	})
}

// The CSV of a sweep names each column once, and a point without a result
// says why in its error column.
func TestCmdSweepCSVColumns(t *testing.T) {
	run := func(args ...string) []string {
		t.Helper()
		var out, errb bytes.Buffer
		if st := cmdSweep(args, strings.NewReader(""), &out, &errb); st != 0 {
			t.Fatalf("sweep %q: status %d: %s", args, st, errb.String())
		}
		return strings.Split(strings.TrimSpace(out.String()), "\n")
	}
	// Sweeping id in bias id: the figure id is the input itself.
	lines := run("bias=id", "-key", "id", "-lo", "10u", "-hi", "100u", "-n", "3", "-csv")
	head := strings.Split(lines[0], ",")
	seen := map[string]bool{}
	for _, h := range head {
		if seen[h] {
			t.Errorf("column %q twice in %q", h, lines[0])
		}
		seen[h] = true
	}
	if head[0] != "id" || head[len(head)-1] != "error" {
		t.Errorf("header %q: want id first and error last", lines[0])
	}
	// 100 µA through more than 18 kΩ cannot fit in 1.8 V: those points
	// have no operating point, and their error cell must say something.
	lines = run("bias=id&id=100u&load=r", "-key", "rd", "-lo", "1k", "-hi", "1M", "-n", "4", "-csv")
	var failed int
	for _, l := range lines[1:] {
		cells := strings.Split(l, ",")
		last := cells[len(cells)-1]
		if cells[1] == "" && last == "" {
			t.Errorf("row %q has no result and no reason", l)
		}
		if cells[1] != "" && last != "" {
			t.Errorf("row %q has a result and a reason", l)
		}
		if last != "" {
			failed++
		}
	}
	if failed == 0 {
		t.Errorf("no row without a result in %q; the case no longer tests the error column", lines)
	}
}
