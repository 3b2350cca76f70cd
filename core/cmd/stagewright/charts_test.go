package main

import (
	"bytes"
	"strings"
	"testing"
)

func TestCmdCharts(t *testing.T) {
	checkAid(t, "charts", func(a []string, in *strings.Reader, o, e *bytes.Buffer) int { return cmdCharts(a, in, o, e) }, []aidCase{
		{[]string{"l=1u"}, 0, `"gm_id":[`},
		{[]string{"pol=p", "-points", "5", "-csv"}, 0, "vgs,id,gm_id,ic,id_w,gm_ro,ft,saturated\n"},
		{[]string{"l=1u", "-points", "1"}, 2, ""},
		{[]string{"l=-1"}, 1, ""},
		{[]string{}, 2, ""},
	})
}
