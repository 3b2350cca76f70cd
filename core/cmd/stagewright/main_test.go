package main

import (
	"bytes"
	"encoding/json"
	"strings"
	"testing"
)

func runCLI(args []string, stdin string) (code int, stdout, stderr string) {
	var out, errb bytes.Buffer
	code = run(args, strings.NewReader(stdin), &out, &errb)
	return code, out.String(), errb.String()
}

// Every stage, polarity, load and bias mode evaluates from the command
// line to one JSON result with ok = true.
func TestEvalEveryStage(t *testing.T) {
	for _, st := range []string{"cs", "cg", "sf"} {
		for _, pol := range []string{"n", "p"} {
			for _, load := range []string{"r", "active", "diode"} {
				if st == "sf" && load == "diode" {
					continue
				}
				for _, bias := range []string{"id", "gmid", "vin"} {
					frag := "v=1&stage=" + st + "&pol=" + pol + "&load=" + load + "&bias=" + bias
					code, out, errs := runCLI([]string{"eval", frag}, "")
					var r struct {
						OK    bool `json:"ok"`
						Error *struct {
							Code, Message, Key string
						} `json:"error"`
						Midband *struct {
							Gain       *float64
							SupplyGain *float64 `json:"supply_gain"`
							PSRR       *float64 `json:"psrr_db"`
						} `json:"midband"`
						Hand *struct {
							SupplyGain *float64 `json:"supply_gain"`
						} `json:"hand"`
						Devices []struct{ Name, Role, Pol string } `json:"devices"`
						AC      *struct{ F []float64 }             `json:"ac"`
						Poles   []json.RawMessage                  `json:"poles"`
					}
					if err := json.Unmarshal([]byte(out), &r); err != nil {
						t.Fatalf("%s: output is not one JSON object: %v\n%s", frag, err, out)
					}
					if bias == "vin" && !r.OK {
						// A given input level need not suit every load; it must
						// fail as a design error with a message, exit status 1.
						if code != 1 || r.Error == nil || r.Error.Message == "" || errs == "" {
							t.Errorf("%s: failed without a clear error (exit %d): %s", frag, code, out)
						}
						continue
					}
					if code != 0 || !r.OK || r.Midband == nil || r.Midband.Gain == nil || len(r.AC.F) == 0 || len(r.Poles) == 0 {
						t.Errorf("%s: exit %d, ok %v, stderr %q", frag, code, r.OK, errs)
						continue
					}
					// The supply rejection and its hand estimate, and one
					// device per transistor (M2 only with a transistor load).
					if r.Midband.SupplyGain == nil || r.Midband.PSRR == nil || r.Hand == nil || r.Hand.SupplyGain == nil {
						t.Errorf("%s: no supply_gain, psrr_db or hand supply_gain in %.300s", frag, out)
					}
					if n := 1 + map[bool]int{true: 1}[load != "r"]; len(r.Devices) != n || r.Devices[0].Name != "M1" || r.Devices[0].Pol != pol {
						t.Errorf("%s: devices %+v, want %d starting with M1 of polarity %s", frag, r.Devices, n, pol)
					}
				}
			}
		}
	}
}

// A malformed fragment gets a one-line error naming the key, exit status 1.
func TestEvalMalformed(t *testing.T) {
	for frag, key := range map[string]string{
		"w=-3u":        "w",
		"l=abc":        "l",
		"stage=xx":     "stage",
		"wdith=10u":    "wdith",
		"vdd=0":        "vdd",
		"v=3":          "v",
		"rd=10k&rd=5k": "rd",
	} {
		code, _, errs := runCLI([]string{"eval", frag}, "")
		lines := strings.Split(strings.TrimSpace(errs), "\n")
		if code != 1 || len(lines) != 1 || !strings.Contains(errs, key+"=") {
			t.Errorf("%q: exit %d, stderr %q; want exit 1 and one line naming %s", frag, code, errs, key)
		}
	}
}

// "eval -" reads one fragment per line and writes one JSON line each.
func TestEvalLines(t *testing.T) {
	in := "v=1&stage=cs\n\n// a comment\nv=1&stage=sf&w=bad\nv=1&stage=cg\n"
	code, out, errs := runCLI([]string{"eval", "-"}, in)
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if len(lines) != 3 {
		t.Fatalf("%d output lines, want 3:\n%s", len(lines), out)
	}
	for _, l := range lines {
		if !json.Valid([]byte(l)) {
			t.Errorf("not JSON: %s", l)
		}
	}
	if code != 1 || !strings.Contains(errs, "line 4") {
		t.Errorf("exit %d, stderr %q: want 1 and the bad line named", code, errs)
	}
}

func TestUsage(t *testing.T) {
	for _, args := range [][]string{nil, {"frobnicate"}, {"eval"}, {"eval", "a", "b"}} {
		if code, _, errs := runCLI(args, ""); code != 2 || errs == "" {
			t.Errorf("%v: exit %d, want 2 with a usage message", args, code)
		}
	}
	if code, out, _ := runCLI([]string{"keys"}, ""); code != 0 || !strings.Contains(out, "| `stage` |") {
		t.Errorf("keys: exit %d", code)
	}
}

// The JSON says what the exit status says: a fragment with a rejected key
// exits 1 and its result has ok false (the figures, computed with the bad
// key at its default, are still there); a clean one exits 0 with ok true.
// K is read as kilo; meg is told to be M.
func TestEvalOKMatchesExit(t *testing.T) {
	for _, tc := range []struct {
		frag   string
		code   int
		ok     bool
		stderr string
	}{
		{"v=1&stage=cs&rd=12K", 0, true, ""},
		{"v=1&stage=cs&rd=5x", 1, false, "rd=5x"},
		{"v=1&stage=cs&rd=1meg", 1, false, "write M for mega"},
		{"v=1&stage=cs&wdith=10u", 1, false, "wdith"},
	} {
		code, out, errs := runCLI([]string{"eval", tc.frag}, "")
		var r struct {
			OK      bool                     `json:"ok"`
			Design  string                   `json:"design"`
			Midband *struct{ Gain *float64 } `json:"midband"`
		}
		if err := json.Unmarshal([]byte(out), &r); err != nil {
			t.Fatalf("%s: not JSON: %v", tc.frag, err)
		}
		if code != tc.code || r.OK != tc.ok || !strings.Contains(errs, tc.stderr) {
			t.Errorf("%s: exit %d, ok %v, stderr %q; want exit %d, ok %v, stderr with %q", tc.frag, code, r.OK, errs, tc.code, tc.ok, tc.stderr)
		}
		if r.Midband == nil || r.Midband.Gain == nil {
			t.Errorf("%s: the figures are gone", tc.frag)
		}
	}
	// and line by line
	_, out, _ := runCLI([]string{"eval", "-"}, "v=1&stage=cs\nv=1&stage=cs&rd=5x\n")
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if len(lines) != 2 || !strings.HasPrefix(lines[0], `{"ok":true`) || !strings.HasPrefix(lines[1], `{"ok":false`) {
		t.Errorf("eval -: %q; want ok true then ok false", lines)
	}
	if _, out, _ := runCLI([]string{"eval", "v=1&stage=cs&rd=12K"}, ""); !strings.Contains(out, "&rd=12k&") {
		t.Errorf("12K did not read as 12k: %.300s", out)
	}
}
