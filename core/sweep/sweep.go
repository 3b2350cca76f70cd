package sweep

import (
	"fmt"
	"math"
	"strings"

	"stagewright/core/design"
	"stagewright/core/units"
)

// Figure names a scalar figure of an evaluation.
type Figure struct {
	Name string `json:"name"`
	Unit string `json:"unit"`
}

// Figures are the scalar figures Sweep and Compare report, in order.
var Figures = []Figure{
	{"gain", "V/V"}, {"f3db", "Hz"}, {"ugf", "Hz"}, {"gbw", "Hz"}, {"in_rms", "V"}, {"power", "W"},
	{"margin", "V"}, {"id", "A"}, {"gm_id", "S/A"}, {"rout", "Ω"}, {"rin", "Ω"}, {"psrr_db", "dB"},
}

// figuresOf fills dst (len(Figures)) from r; NaN where a figure is missing.
func figuresOf(r *design.Result, dst []float64) {
	for i := range dst {
		dst[i] = math.NaN()
	}
	if !r.OK {
		return
	}
	if m := r.Midband; m != nil {
		dst[0], dst[9], dst[10], dst[11] = float64(m.Gain), float64(m.Rout), float64(m.Rin), float64(m.PSRRdB)
	}
	if ac := r.AC; ac != nil {
		dst[1], dst[2], dst[3] = float64(ac.F3dB), float64(ac.UGF), float64(ac.GBW)
	}
	if r.Noise != nil {
		dst[4] = float64(r.Noise.InRMS)
	}
	if op := r.OP; op != nil {
		if op.Power != nil {
			dst[5] = float64(*op.Power)
		}
		dst[6], dst[7], dst[8] = float64(op.Margin), float64(op.ID), float64(op.GmID)
	}
}

// Series is one figure over the sweep.
type Series struct {
	Figure
	Values design.Floats `json:"values"`
}

// Result is a sweep: the key's values, each figure over them (null where
// the design had no operating point), and the present design marked.
type Result struct {
	Key     string        `json:"key"`
	Log     bool          `json:"log"`
	Values  design.Floats `json:"values"`
	Series  []Series      `json:"series"`
	Present Present       `json:"present"`
	// Failures says, for each point without a result, why ("w=1m: …").
	Failures []string `json:"failures,omitempty"`
}

// Present is the unswept design: its value of the key and its figures.
type Present struct {
	Value   design.Num            `json:"value"`
	Figures map[string]design.Num `json:"figures"`
}

// MaxPoints bounds a sweep.
const MaxPoints = 1000

// Sweep evaluates d with key (any number key or process override "n.thresh")
// at n points from lo to hi, logarithmically spaced when the key's slider is
// logarithmic and lo > 0, and reports every scalar figure. lo and hi must
// lie in the key's accepted range for d.
func Sweep(d design.Design, key string, lo, hi float64, n int) (Result, error) {
	klo, khi, log, ok := d.KeyRange(key)
	switch {
	case !ok:
		return Result{}, fmt.Errorf("sweep: %q is not a number key of the design", key)
	case n < 2 || n > MaxPoints:
		return Result{}, fmt.Errorf("sweep: %d points; accepted 2 … %d", n, MaxPoints)
	case !(lo < hi) || lo < klo || hi > khi || math.IsInf(hi, 0):
		return Result{}, fmt.Errorf("sweep: %s from %s to %s; it must rise within %s … %s", key,
			units.Exact(lo), units.Exact(hi), units.Exact(klo), units.Exact(khi))
	}
	log = log && lo > 0
	res := Result{Key: key, Log: log, Values: make(design.Floats, n)}
	res.Series = make([]Series, len(Figures))
	for i, f := range Figures {
		res.Series[i] = Series{Figure: f, Values: make(design.Floats, n)}
	}
	var e design.Evaluator
	fig := make([]float64, len(Figures))
	for i := range n {
		t := float64(i) / float64(n-1)
		v := lo + t*(hi-lo)
		if log {
			v = math.Exp(math.Log(lo) + t*(math.Log(hi)-math.Log(lo)))
		}
		switch i {
		case 0:
			v = lo
		case n - 1:
			v = hi
		}
		res.Values[i] = v
		p, err := WithKey(d, key, v)
		var r design.Result
		if err == nil {
			r = e.Evaluate(p)
			if !r.OK && r.Error != nil {
				err = fmt.Errorf("%s", r.Error.Message)
			}
		}
		if err != nil {
			res.Failures = append(res.Failures, key+"="+units.Exact(v)+": "+err.Error())
		}
		figuresOf(&r, fig)
		for j := range fig {
			res.Series[j].Values[i] = fig[j]
		}
	}
	r := e.Evaluate(d)
	figuresOf(&r, fig)
	res.Present = Present{Value: design.Num(valueOf(d, key)), Figures: map[string]design.Num{}}
	for j, f := range Figures {
		res.Present.Figures[f.Name] = design.Num(fig[j])
	}
	return res, nil
}

// WithKey returns d with key set to v, through the fragment codec so that
// every rule of the key table applies (dependent defaults, ranges).
func WithKey(d design.Design, key string, v float64) (design.Design, error) {
	text := units.Exact(v)
	if math.IsInf(v, 1) {
		text = "inf"
	}
	var b strings.Builder
	for _, pair := range strings.Split(d.Encode(), "&") {
		if k, _, _ := strings.Cut(pair, "="); k == key || pair == "" {
			continue
		}
		b.WriteString(pair)
		b.WriteByte('&')
	}
	b.WriteString(key + "=" + text)
	out, err := design.Decode(b.String())
	if err != nil {
		return d, err
	}
	return out, nil
}

// valueOf reads key's value from d by the codec: the value its canonical
// fragment writes, or the override's, or the process default.
func valueOf(d design.Design, key string) float64 {
	for _, pair := range strings.Split(d.Encode(), "&") {
		if k, v, _ := strings.Cut(pair, "="); k == key {
			if v == "inf" {
				return math.Inf(1)
			}
			if x, err := units.Parse(v); err == nil {
				return x
			}
		}
	}
	for _, k := range design.Schema(d.Process) {
		if k.Key == key {
			return k.Default
		}
	}
	return math.NaN()
}

// Row is one figure of a comparison: A's and B's values, B − A, and the
// relative difference 100·(B − A)/|A| in percent (null when A is 0).
type Row struct {
	Figure
	A       design.Num `json:"a"`
	B       design.Num `json:"b"`
	Diff    design.Num `json:"diff"`
	DiffPct design.Num `json:"diff_pct"`
}

// Comparison is the A/B table of two designs.
type Comparison struct {
	A    string `json:"a"` // fragments
	B    string `json:"b"`
	Rows []Row  `json:"rows"`
}

// Compare evaluates a and b and lists every scalar figure of both. A design
// without an operating point has null figures; that is not an error.
func Compare(a, b design.Design) (Comparison, error) {
	var e design.Evaluator
	ra, rb := e.Evaluate(a), e.Evaluate(b)
	fa, fb := make([]float64, len(Figures)), make([]float64, len(Figures))
	figuresOf(&ra, fa)
	figuresOf(&rb, fb)
	c := Comparison{A: a.Encode(), B: b.Encode()}
	for i, f := range Figures {
		row := Row{Figure: f, A: design.Num(fa[i]), B: design.Num(fb[i]), Diff: design.Num(fb[i] - fa[i])}
		row.DiffPct = design.Num(math.NaN())
		if fa[i] != 0 {
			row.DiffPct = design.Num(100 * (fb[i] - fa[i]) / math.Abs(fa[i]))
		}
		c.Rows = append(c.Rows, row)
	}
	return c, nil
}

// ComparePinned compares d (A) with its pinned design (B).
func ComparePinned(d design.Design) (Comparison, error) {
	if d.Aids.Pin == nil {
		return Comparison{}, fmt.Errorf("compare: the design has no pinned design (give pin=FRAGMENT, percent-encoded)")
	}
	a := d
	a.Aids.Pin = nil
	return Compare(a, *d.Aids.Pin)
}
