package design

import (
	"bytes"
	"encoding/json"
	"math"
	"math/rand"
	"testing"
)

// reference is encoding/json's text for r (HTML escaping off): the
// hand-written writer must give the same bytes.
func reference(t testing.TB, r *Result) []byte {
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(r); err != nil {
		t.Fatal(err)
	}
	return bytes.TrimSuffix(b.Bytes(), []byte("\n"))
}

// The hand-written JSON equals encoding/json's byte for byte, on random
// designs (evaluated and failing), on a result with problems and odd text,
// and on a result whose series were taken out (as the bridge does).
func TestJSONMatchesEncodingJSON(t *testing.T) {
	rng := rand.New(rand.NewSource(5))
	var e Evaluator
	check := func(name string, r *Result) {
		t.Helper()
		got, want := r.JSON(), reference(t, r)
		if !bytes.Equal(got, want) {
			i := 0
			for i < len(got) && i < len(want) && got[i] == want[i] {
				i++
			}
			lo := max(0, i-60)
			t.Fatalf("%s: JSON differs at byte %d:\n got …%s\nwant …%s", name, i, got[lo:min(len(got), i+60)], want[lo:min(len(want), i+60)])
		}
	}
	for i := 0; i < 300; i++ {
		frag := randomFragment(rng)
		r := e.EvaluateFragment(frag)
		check(frag, &r)
	}
	r := e.EvaluateFragment("w=<b>\"x\"\\\t&l=1e999&q=\u2028&stage=cs")
	r.Warnings = append(r.Warnings, "bad \xff byte", "line\nbreak \u2029 and \x01")
	check("problems and odd text", &r)
	r = e.EvaluateFragment("stage=cs&load=active")
	r.AC.F, r.AC.MagDB = nil, nil
	r.Noise.In = nil
	r.AC.Zin[0] = math.Inf(1)
	check("series taken out", &r)
	empty := Result{}
	check("zero value", &empty)
}

func BenchmarkResultJSON(b *testing.B) {
	d := mustDecode(b, "stage=cs&load=active")
	r := Evaluate(d)
	r.AC.F, r.AC.MagDB, r.AC.PhaseDeg, r.AC.Zin, r.AC.Zout = nil, nil, nil, nil, nil
	r.Noise.F, r.Noise.Out, r.Noise.In = nil, nil, nil
	b.Run("hand", func(b *testing.B) {
		b.ReportAllocs()
		var buf []byte
		for i := 0; i < b.N; i++ {
			buf = r.AppendJSON(buf[:0])
		}
	})
	b.Run("encoding-json", func(b *testing.B) {
		b.ReportAllocs()
		for i := 0; i < b.N; i++ {
			reference(b, &r)
		}
	})
}
