package design

import (
	"bufio"
	"encoding/json"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"
)

// v1Golden is one stored fragment with the figures it evaluated to when it
// was recorded: the midband gain (V/V), M1's drain current (A) and the
// −3 dB frequency (Hz; null when the sweep does not reach it), each to six
// significant digits. A fragment that had no operating point records the
// failure code instead.
type v1Golden struct {
	Line     int              `json:"line"`
	Fragment string           `json:"fragment"`
	Error    string           `json:"error,omitempty"`
	Gain     *json.RawMessage `json:"gain,omitempty"`
	ID       *json.RawMessage `json:"id,omitempty"`
	F3dB     *json.RawMessage `json:"f3db,omitempty"`
}

// storedLinks names the stored fragments of each fragment version and the
// figures recorded for them.
var storedLinks = []struct {
	version          int
	fragments, golds string
}{
	{1, "testdata/fragments/v1.txt", "testdata/fragments/v1.golden.json"},
	{2, "testdata/fragments/v2.txt", "testdata/fragments/v2.golden.json"},
}

// readStored returns the stored fragments of a file with their line numbers.
func readStored(t *testing.T, file string) (lines []int, frags []string) {
	t.Helper()
	fh, err := os.Open(file)
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	sc := bufio.NewScanner(fh)
	for n := 1; sc.Scan(); n++ {
		s := strings.TrimSpace(sc.Text())
		if s == "" || strings.HasPrefix(s, "//") {
			continue
		}
		lines, frags = append(lines, n), append(frags, s)
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return lines, frags
}

// sig6 writes x to six significant digits, or null when x is not finite.
func sig6(x float64) *json.RawMessage {
	raw := json.RawMessage("null")
	if isFinite(x) {
		raw = json.RawMessage(strconv.FormatFloat(x, 'g', 6, 64))
	}
	return &raw
}

// matchSig6 compares a value with its stored six-digit form. The stored
// number carries a rounding error of up to half a unit in its sixth digit
// (5e-6 relative at most); on top of that the figure may move by 1e-6
// relative — far more than the rounding differences between builds
// (~1e-12 after a Newton solve that stops at a 1e-9 residual and converges
// quadratically), far less than any deliberate model change.
func matchSig6(got float64, want *json.RawMessage) (bool, string) {
	if want == nil {
		return false, "missing"
	}
	if string(*want) == "null" {
		return !isFinite(got), "null"
	}
	w, err := strconv.ParseFloat(string(*want), 64)
	if err != nil {
		return false, string(*want)
	}
	ulp6 := 0.5 * math.Pow(10, math.Floor(math.Log10(math.Abs(w)))-5)
	return math.Abs(got-w) <= ulp6+1e-6*math.Abs(w), string(*want)
}

// Every stored link of each version keeps opening, without a single
// problem, to the figures recorded for it: a v=1 link with the demo
// processes as they were then. If the model changes on purpose, regenerate
// the record with STAGEWRIGHT_WRITE_GOLDEN=1 and review the diff (a v=1
// record must never need it).
func TestMigration(t *testing.T) {
	for _, set := range storedLinks {
		t.Run("v"+strconv.Itoa(set.version), func(t *testing.T) {
			testStoredLinks(t, set.version, set.fragments, set.golds)
		})
	}
}

func testStoredLinks(t *testing.T, version int, v1Fragments, v1GoldenFile string) {
	lines, frags := readStored(t, v1Fragments)
	if len(frags) < 30 {
		t.Fatalf("%s holds %d fragments, want at least 30", v1Fragments, len(frags))
	}
	var e Evaluator
	got := make([]v1Golden, len(frags))
	for i, frag := range frags {
		d, err := Decode(frag)
		if err != nil {
			t.Errorf("%s:%d: stored fragment %q no longer decodes cleanly: %v", v1Fragments, lines[i], frag, err)
			continue
		}
		if d.Version != version {
			t.Errorf("%s:%d: version %d, want %d", v1Fragments, lines[i], d.Version, version)
		}
		r := e.Evaluate(d)
		g := v1Golden{Line: lines[i], Fragment: frag}
		if r.OK {
			g.Gain, g.ID, g.F3dB = sig6(float64(r.Midband.Gain)), sig6(float64(r.OP.ID)), sig6(float64(r.AC.F3dB))
		} else {
			g.Error = r.Error.Code
		}
		got[i] = g
	}
	if os.Getenv("STAGEWRIGHT_WRITE_GOLDEN") == "1" {
		var buf strings.Builder
		enc := json.NewEncoder(&buf)
		enc.SetEscapeHTML(false) // keep the fragments readable: & not \u0026
		enc.SetIndent("", "  ")
		if err := enc.Encode(got); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(v1GoldenFile, []byte(buf.String()), 0o644); err != nil {
			t.Fatal(err)
		}
		t.Logf("wrote %s with %d designs", v1GoldenFile, len(got))
		return
	}
	b, err := os.ReadFile(v1GoldenFile)
	if err != nil {
		t.Fatalf("%v (write it with STAGEWRIGHT_WRITE_GOLDEN=1)", err)
	}
	var want []v1Golden
	if err := json.Unmarshal(b, &want); err != nil {
		t.Fatalf("%s: %v", v1GoldenFile, err)
	}
	byFrag := map[string]v1Golden{}
	for _, w := range want {
		byFrag[w.Fragment] = w
	}
	if len(byFrag) != len(frags) {
		t.Errorf("%s records %d designs, %s holds %d", v1GoldenFile, len(byFrag), v1Fragments, len(frags))
	}
	ok := 0
	for i, frag := range frags {
		w, found := byFrag[frag]
		if !found {
			t.Errorf("%s:%d: %q has no recorded figures", v1Fragments, lines[i], frag)
			continue
		}
		d, err := Decode(frag)
		if err != nil {
			continue // reported above
		}
		r := e.Evaluate(d)
		if w.Error != "" || !r.OK {
			if !r.OK && r.Error.Code == w.Error {
				continue
			}
			t.Errorf("%s:%d: %q: recorded failure %q, now ok=%v %+v", v1Fragments, lines[i], frag, w.Error, r.OK, r.Error)
			continue
		}
		ok++
		for _, c := range []struct {
			name string
			got  float64
			want *json.RawMessage
		}{
			{"gain", float64(r.Midband.Gain), w.Gain},
			{"id", float64(r.OP.ID), w.ID},
			{"f3db", float64(r.AC.F3dB), w.F3dB},
		} {
			if match, ws := matchSig6(c.got, c.want); !match {
				t.Errorf("%s:%d: %q: %s = %.9g, recorded %s", v1Fragments, lines[i], frag, c.name, c.got, ws)
			}
		}
	}
	if ok < 30 {
		t.Errorf("only %d stored fragments evaluate; the record should hold at least 30 working designs", ok)
	}
}

func TestMatchSig6(t *testing.T) {
	raw := func(s string) *json.RawMessage { r := json.RawMessage(s); return &r }
	for _, c := range []struct {
		got  float64
		want string
		ok   bool
	}{
		{1.000004, "1", true},   // within the rounding of the sixth digit
		{1.0000065, "1", false}, // beyond rounding plus 1e-6
		{-9.653422548, "-9.65342", true},
		{-9.65345, "-9.65342", false},
		{math.NaN(), "null", true},
		{1.3e8, "null", false},
		{math.NaN(), "1.3e+08", false},
	} {
		if got, _ := matchSig6(c.got, raw(c.want)); got != c.ok {
			t.Errorf("matchSig6(%v, %s) = %v, want %v", c.got, c.want, got, c.ok)
		}
	}
}

// The version decides the demo process: the same design at the shortest
// length has about three times the gain of version 2 under version 1
// (gm·ro ≈ 120 then, a few tens now), and its version-2 link with the
// parameters of version 1 given as keys has the version-1 figures.
func TestVersionChoosesProcess(t *testing.T) {
	const design = "stage=cs&pol=n&proc=d180&w=20u&l=180n&bias=gmid&gmid=11&id=50u&load=active&ll=2u&lw=20u"
	var e Evaluator
	gain := func(frag string) float64 {
		t.Helper()
		d, err := Decode(frag)
		if err != nil {
			t.Fatal(err)
		}
		r := e.Evaluate(d)
		if !r.OK {
			t.Fatalf("%s: %v", frag, r.Error)
		}
		return math.Abs(float64(r.Midband.Gain))
	}
	g1, g2 := gain("v=1&"+design), gain("v=2&"+design)
	if !(g1 > 2*g2) {
		t.Errorf("gain %.4g under v=1, %.4g under v=2: want v=1 well above", g1, g2)
	}
	pinned := gain("v=2&" + design + "&n.lenmod=20n&n.dibl=0&p.lenmod=25n&p.dibl=0")
	// 1e-12: the same process reached two ways, bit for bit up to the
	// solver's own rounding.
	if math.Abs(pinned/g1-1) > 1e-12 {
		t.Errorf("v=2 with version 1's parameters: gain %.12g, v=1: %.12g", pinned, g1)
	}
}
