package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"strings"

	"stagewright/core/design"
	"stagewright/core/stage"
)

// The helpers every subcommand shares: splitting its arguments, decoding
// its fragment, and writing its JSON answer or error.

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

// failJSON writes {"ok":false,"error":{...}} and the message on stderr.
func failJSON(stdout, stderr io.Writer, cmd, code, key, msg string) int {
	out, _ := marshal(struct {
		OK    bool           `json:"ok"`
		Error design.Failure `json:"error"`
	}{false, design.Failure{Code: code, Message: msg, Key: key}})
	stdout.Write(append(out, '\n'))
	fmt.Fprintf(stderr, "stagewright %s: %s\n", cmd, msg)
	return 1
}

// opFailureCode is the JSON error code of an analysis that found no
// operating point: solver_failed when the DC solver failed on a design
// that may well have one, no_operating_point otherwise.
func opFailureCode(err error) string {
	var se *stage.Error
	if errors.As(err, &se) && se.SolverFailed {
		return design.CodeSolverFailed
	}
	return "no_operating_point"
}

// decodeFor decodes a fragment strictly: any problem is a design error.
func decodeFor(cmd, frag string, stdout, stderr io.Writer) (design.Design, int) {
	d, err := design.Decode(onProcess(frag))
	if err != nil {
		key := ""
		var fe *design.FragmentError
		if errors.As(err, &fe) && len(fe.Problems) > 0 {
			key = fe.Problems[0].Key
		}
		return d, failJSON(stdout, stderr, cmd, "fragment", key, err.Error())
	}
	return d, 0
}

// decodeArg decodes the fragment of an aid command; a problem is a design
// error (status 1).
func decodeArg(cmd, frag string, stderr io.Writer) (design.Design, bool) {
	d, err := design.Decode(onProcess(frag))
	if err != nil {
		fmt.Fprintf(stderr, "stagewright %s: %v\n", cmd, err)
		return d, false
	}
	return d, true
}

func writeJSON(stdout io.Writer, v any) {
	b, err := marshal(v)
	if err != nil {
		b = []byte(`{"ok":false,"error":{"code":"internal","message":"result could not be written as JSON"}}`)
	}
	stdout.Write(append(b, '\n'))
}

// marshal is json.Marshal without HTML escaping, so fragments keep their &.
func marshal(v any) ([]byte, error) {
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(v); err != nil {
		return nil, err
	}
	return bytes.TrimSuffix(b.Bytes(), []byte("\n")), nil
}
