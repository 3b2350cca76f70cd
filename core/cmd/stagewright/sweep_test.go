package main

import (
	"bytes"
	"strings"
	"testing"
)

func TestCmdSweep(t *testing.T) {
	checkAid(t, "sweep", func(a []string, in *strings.Reader, o, e *bytes.Buffer) int { return cmdSweep(a, in, o, e) }, []aidCase{
		{[]string{"", "-key", "w", "-lo", "1u", "-hi", "100u", "-n", "5"}, 0, `"key":"w","log":true`},
		{[]string{"rd=5k", "-key=rd", "-lo=1k", "-hi=9k", "-n=3", "-csv"}, 0, "rd,gain,f3db,ugf,gbw,in_rms,power,margin,id,gm_id,rout,rin\n1000,"},
		{[]string{"sw=n.vt0&sw.lo=0.3&sw.hi=0.6&sw.n=4"}, 0, `"key":"n.vt0"`},
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
