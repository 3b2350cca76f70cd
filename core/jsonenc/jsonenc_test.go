package jsonenc

import (
	"encoding/json"
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// The outside reference is encoding/json's Marshal: for every value here
// the bytes must be the same.

type inner struct {
	X float64 `json:"x"`
	S string  `json:"s,omitempty"`
}

type custom float64

func (c custom) MarshalJSON() ([]byte, error) { return []byte(`"c"`), nil }

type failing struct{}

func (failing) MarshalJSON() ([]byte, error) { return nil, errors.New("no") }

type named string

type deep struct {
	inner        // X and S at depth 2: hidden by embedding's own inner
	Z     string `json:"z"`
}

type Both struct {
	A int `json:"a"`
	C int
}

type Other struct {
	C int // same name and depth as Both.C, neither tagged: neither is written
	B int
}

type embedding struct {
	Own int `json:"own"`
	inner
	*deep
	Tagged inner `json:"tagged"`
	Both
	Other
	S string `json:"s"` // shallower than inner.S: wins
}

type everything struct {
	B        bool    `json:"b"`
	I        int     `json:"i"`
	I8       int8    `json:"i8"`
	U        uint64  `json:"u"`
	F        float64 `json:"f"`
	F32      float32 `json:"f32"`
	S        string  `json:"s"`
	N        named   `json:"n"`
	Untagged int
	Skipped  int `json:"-"`
	hidden   int
	P        *inner             `json:"p"`
	PNil     *inner             `json:"p_nil"`
	Sl       []inner            `json:"sl"`
	SlNil    []float64          `json:"sl_nil"`
	SlEmpty  []string           `json:"sl_empty"`
	M        map[string]float64 `json:"m"`
	MNamed   map[named]int      `json:"m_named"`
	MNil     map[string]int     `json:"m_nil"`
	Any      any                `json:"any"`
	AnyNil   any                `json:"any_nil"`
	C        custom             `json:"c"`
	CP       *custom            `json:"cp"`
	Raw      Raw                `json:"raw"`
	Nested   [][]int            `json:"nested"`
	Arr      [3]float64         `json:"arr"`
	ArrBytes [2]byte            `json:"arr_bytes"`
	OE       struct {
		B  bool               `json:"b,omitempty"`
		I  int                `json:"i,omitempty"`
		F  float64            `json:"f,omitempty"`
		S  string             `json:"s,omitempty"`
		P  *int               `json:"p,omitempty"`
		A  any                `json:"a,omitempty"`
		Sl []int              `json:"sl,omitempty"`
		M  map[string]float64 `json:"m,omitempty"`
	} `json:"oe"`
}

func sample() everything {
	c := custom(2)
	v := everything{
		B: true, I: -42, I8: -8, U: math.MaxUint64, F: 1.5e-7, F32: 3.25, S: "a\"b\\c\n<&>\u2028\x01", N: "nm",
		Untagged: 7, Skipped: 9, hidden: 3,
		P: &inner{X: 1e21, S: "in"}, Sl: []inner{{X: -0.0}, {X: 123456789, S: "é"}},
		SlEmpty: []string{}, M: map[string]float64{"z": 1, "a": 2, "é": 3, "<": 4},
		MNamed: map[named]int{"b": 1, "a": 2}, Any: map[string]any{"k": []any{1.0, "x", nil, true}},
		C: 1, CP: &c, Raw: Raw(`{"r":[1,2]}`), Nested: [][]int{{1}, {}, nil}, Arr: [3]float64{1, 0.5, -2e-9}, ArrBytes: [2]byte{7, 255},
	}
	return v
}

func same(t *testing.T, what string, v any) {
	t.Helper()
	want, err := json.Marshal(v)
	if err != nil {
		t.Fatalf("%s: encoding/json: %v", what, err)
	}
	got, err := Marshal(v)
	if err != nil {
		t.Fatalf("%s: %v", what, err)
	}
	if string(got) != string(want) {
		t.Errorf("%s:\n got %s\nwant %s", what, got, want)
	}
}

func TestMarshalMatchesEncodingJSON(t *testing.T) {
	tests := []struct {
		name string
		v    any
	}{
		{"every supported kind", sample()},
		{"pointer to it", func() *everything { v := sample(); return &v }()},
		{"nil", nil},
		{"embedded structs", embedding{Own: 1, inner: inner{X: 2, S: "promoted"}, deep: &deep{inner: inner{X: 3}}, Tagged: inner{X: 4}}},
		{"nil embedded pointer", embedding{}},
		{"nil pointer", (*inner)(nil)},
		{"nil Marshaler pointer", (*custom)(nil)},
		{"empty struct", struct{}{}},
		{"slice of any", []any{1, "two", 3.5, nil, map[string]int{}}},
		{"Raw", Raw(`[1,{"a":null}]`)},
		{"empty Raw in a struct", struct {
			R Raw `json:"r"`
		}{}},
		{"omitempty drops an empty Raw", struct {
			R Raw `json:"r,omitempty"`
		}{}},
	}
	for _, tt := range tests {
		same(t, tt.name, tt.v)
	}
}

func TestFloatsMatchEncodingJSON(t *testing.T) {
	// The format switches at 1e-6 and 1e21 (float64) and trims e-0X: the
	// edges, powers of ten across the range, the extremes and random bit
	// patterns.
	fs := []float64{0, math.Copysign(0, -1), 1, -1, 0.1, 1e-6, 9.999999999999999e-7, 1e-7, 1e20, 1e21, 9.99999999999999e20,
		math.MaxFloat64, math.SmallestNonzeroFloat64, 0x1p-1022, 1.0 / 3, 2.5e-10, 123456789012345678, -4.2e-300}
	for e := -320; e <= 308; e++ {
		fs = append(fs, math.Pow(10, float64(e)), -3*math.Pow(10, float64(e)))
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for i := 0; i < 20000; i++ {
		f := math.Float64frombits(rng.Uint64())
		if !math.IsNaN(f) && !math.IsInf(f, 0) {
			fs = append(fs, f)
		}
	}
	for _, f := range fs {
		if math.IsInf(f, 0) {
			continue // -3e308 overflows
		}
		same(t, "float64", f)
		if f32 := float32(f); !math.IsInf(float64(f32), 0) {
			same(t, "float32", f32)
		}
	}
}

func TestStringsMatchEncodingJSON(t *testing.T) {
	// Every ASCII byte, the JavaScript line separators, invalid UTF-8 and
	// random byte strings.
	var all strings.Builder
	for c := 0; c < 128; c++ {
		all.WriteByte(byte(c))
	}
	ss := []string{"", all.String(), "\u2028\u2029", "µΩ°—…", "\xff", "a\xc3", "\xed\xa0\x80", "\U0001F600"}
	rng := rand.New(rand.NewPCG(3, 4))
	for i := 0; i < 5000; i++ {
		b := make([]byte, rng.IntN(12))
		for j := range b {
			b[j] = byte(rng.IntN(256))
		}
		ss = append(ss, string(b))
	}
	for _, s := range ss {
		same(t, "string "+strconvQuote(s), s)
		// AppendStringKeepHTML against encoding/json with HTML escaping off.
		var want strings.Builder
		enc := json.NewEncoder(&want)
		enc.SetEscapeHTML(false)
		if err := enc.Encode(s); err != nil {
			t.Fatal(err)
		}
		if got := string(AppendStringKeepHTML(nil, s)) + "\n"; got != want.String() {
			t.Errorf("AppendStringKeepHTML(%s) = %s, encoding/json without HTML escapes writes %s", strconvQuote(s), got, want.String())
		}
	}
}

func strconvQuote(s string) string {
	return strings.ReplaceAll(string(AppendString(nil, s)), "\n", `\n`)
}

func TestMarshalErrors(t *testing.T) {
	tests := []struct {
		name string
		v    any
		want string // in the message
	}{
		{"NaN", struct {
			A []float64 `json:"a"`
		}{[]float64{1, math.NaN()}}, "at .a[1]: unsupported value NaN"},
		{"+Inf in a map", map[string]float64{"k": math.Inf(1)}, "at .k: unsupported value +Inf"},
		{"failing Marshaler", struct {
			F failing `json:"f"`
		}{}, "MarshalJSON of jsonenc.failing: no"},
		{"bytes", []byte("x"), "[]byte"},
		{"int keys", map[int]int{1: 1}, "map key type int"},
		{"tag option", struct {
			A int `json:"a,string"`
		}{}, `tag option "string"`},
		{"channel", make(chan int), "type chan int"},
	}
	for _, tt := range tests {
		b, err := Marshal(tt.v)
		if err == nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("%s: Marshal = %s, %v; want an error containing %q", tt.name, b, err, tt.want)
		}
		var e *Error
		if err != nil && !errors.As(err, &e) {
			t.Errorf("%s: error %T is not a *Error", tt.name, err)
		}
	}
}
