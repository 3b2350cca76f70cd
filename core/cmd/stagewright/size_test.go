package main

import (
	"bytes"
	"encoding/json"
	"strings"
	"testing"
)

type aidCase struct {
	args   []string
	status int
	out    string // the output contains it
}

// checkAid runs cmd on every case: the status, a piece of the output, and
// valid JSON whenever the output is an object.
func checkAid(t *testing.T, name string, cmd func([]string, *strings.Reader, *bytes.Buffer, *bytes.Buffer) int, cases []aidCase) {
	t.Helper()
	for _, tc := range cases {
		var out, errb bytes.Buffer
		st := cmd(tc.args, strings.NewReader(""), &out, &errb)
		if st != tc.status || !strings.Contains(out.String(), tc.out) {
			t.Errorf("%s %q: status %d (want %d), out %.200s, err %s", name, tc.args, st, tc.status, out.String(), errb.String())
		}
		if strings.HasPrefix(out.String(), "{") && !json.Valid(out.Bytes()) {
			t.Errorf("%s %q: output is not JSON", name, tc.args)
		}
		if st != 0 && errb.Len() == 0 {
			t.Errorf("%s %q: status %d without a message", name, tc.args, st)
		}
	}
}

func TestCmdSize(t *testing.T) {
	checkAid(t, "size", func(a []string, in *strings.Reader, o, e *bytes.Buffer) int { return cmdSize(a, in, o, e) }, []aidCase{
		{[]string{"w=20u&cl=500f&t.gain=5&t.idd=200u"}, 0, `"feasible":true`},
		{[]string{"-csv", "w=20u&cl=500f&t.gain=5&t.idd=200u"}, 0, "key,kind,target,value,margin,met,binds,hard\nt.gain,min,5,"},
		{[]string{"-csv", "w=20u&cl=500f&t.gain=5&t.idd=200u&hard=idd&obj=area"}, 0, ",true,false,true\nobj=area,least,,"},
		{[]string{"w=20u&cl=500f&t.gain=5&t.idd=200u&obj=power"}, 0, `"objective":{"key":"power"`},
		{[]string{"cl=1p&t.gain=20&t.f3db=50M&t.idd=200u&hard=idd"}, 1, `"hard":true`},
		{[]string{"hard=gain&t.gain=5"}, 1, ""},
		{[]string{"t.gain=1e5&t.idd=10u"}, 1, `"feasible":false`},
		{[]string{"w=-1"}, 1, ""},
		{[]string{""}, 1, ""}, // no target
		{[]string{}, 2, ""},
		{[]string{"-x", "w=1u"}, 2, ""},
		{[]string{"-h"}, 0, "usage: stagewright size"},
	})
}
