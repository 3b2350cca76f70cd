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
	"stagewright/core/sizing"
)

const sizeUsage = `usage: stagewright size FRAGMENT [-csv]
  search for a design meeting the fragment's targets (t.gain t.f3db t.gbw t.idd t.power t.swing
  t.noise t.margin) by moving the inputs named by vary within lo.*/hi.*; JSON, or one row per
  target (key,kind,target,value,margin,met,binds) with -csv
`

// aidArgs splits arguments into the one fragment and options given before
// or after it: flags take a value (-key w or -key=w), switches do not.
func aidArgs(args []string, flags, switches []string) (frag string, vals map[string]string, help bool, err error) {
	vals = map[string]string{}
	got := false
	has := func(list []string, s string) bool {
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
			if got {
				return "", nil, false, fmt.Errorf("unexpected argument %q: give one fragment", a)
			}
			frag, got = a, true
			continue
		}
		name, value, hasValue := strings.Cut(strings.TrimLeft(a, "-"), "=")
		switch {
		case name == "h" || name == "help":
			return "", nil, true, nil
		case has(switches, name):
			if hasValue {
				return "", nil, false, fmt.Errorf("option -%s takes no value", name)
			}
			vals[name] = ""
		case has(flags, name):
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
	if !got {
		return "", nil, false, errors.New("give a fragment ('' for the defaults)")
	}
	return frag, vals, false, nil
}

// decodeArg decodes the fragment of an aid command; a problem is a design
// error (status 1).
func decodeArg(cmd, frag string, stderr io.Writer) (design.Design, bool) {
	d, err := design.Decode(frag)
	if err != nil {
		fmt.Fprintf(stderr, "stagewright %s: %v\n", cmd, err)
		return d, false
	}
	return d, true
}

func writeJSON(stdout io.Writer, v any) {
	b, err := json.Marshal(v)
	if err != nil {
		b = []byte(`{"ok":false,"error":{"code":"internal","message":"result could not be written as JSON"}}`)
	}
	stdout.Write(append(b, '\n'))
}

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
		w.Write([]string{"key", "kind", "target", "value", "margin", "met", "binds"})
		for _, t := range s.Targets {
			w.Write([]string{t.Key, t.Kind, num(t.Target), num(t.Value), num(t.Margin),
				strconv.FormatBool(t.Met), strconv.FormatBool(t.Binds)})
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
