package chardata

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"

	"stagewright/core/device"
)

// sweep writes a small valid table: VGS 0…1.2 V in 0.1 V steps at two VDS,
// with a made-up exponential-then-square current (shape only matters for
// the counts), in the given separator and sign.
func sweep(sep string, sign float64, extra string) string {
	var b strings.Builder
	fmt.Fprintf(&b, "# invented test data\nvgs%svds%sid%s\n", sep, sep, extra)
	for _, vds := range []float64{0.1, 1.2} {
		for i := 0; i <= 12; i++ {
			vgs := float64(i) / 10
			id := 1e-7 * math.Exp((vgs-0.45)/0.035)
			if vgs > 0.45 {
				id = 1e-7 + 2e-4*(vgs-0.45)*(vgs-0.45)
			}
			fmt.Fprintf(&b, "%g%s%g%s%g\n", sign*vgs, sep, sign*vds, sep, sign*id)
		}
	}
	return b.String()
}

func TestReadGoodFiles(t *testing.T) {
	for _, tc := range []struct {
		name string
		text string
		pol  device.Polarity
	}{
		{"comma", sweep(",", 1, ""), device.NMOS},
		{"semicolon", sweep(";", 1, ""), device.NMOS},
		{"tab", sweep("\t", 1, ""), device.NMOS},
		{"p-type, simulator signs", sweep(",", -1, ""), device.PMOS},
		{"p-type, magnitudes", sweep(",", 1, ""), device.PMOS},
		{"CRLF and BOM", "\xef\xbb\xbf" + strings.ReplaceAll(sweep(",", 1, ""), "\n", "\r\n"), device.NMOS},
	} {
		t.Run(tc.name, func(t *testing.T) {
			tab, err := Read([]byte(tc.text), Options{Pol: tc.pol, W: 10e-6, L: 1e-6})
			if err != nil {
				t.Fatal(err)
			}
			if len(tab.Points) != 26 {
				t.Fatalf("%d points, want 26", len(tab.Points))
			}
			p := tab.Points[25] // VGS 1.2, VDS 1.2: conducting, normalized positive
			if p.VGS != 1.2 || p.VDS != 1.2 || !(p.ID > 0) || p.W != 10e-6 || p.L != 1e-6 || p.TempC != 27 {
				t.Errorf("last point %+v, want VGS = VDS = 1.2 and ID > 0 at W 10u, L 1u, 27 °C", p)
			}
			if !math.IsNaN(p.GM) || tab.HasGM {
				t.Errorf("gm is %v (HasGM %v) without a gm column", p.GM, tab.HasGM)
			}
			if len(tab.Fingerprint) != len("fnv1a64:")+16 || tab.Fingerprint != Fingerprint([]byte(tc.text)) {
				t.Errorf("fingerprint %q", tab.Fingerprint)
			}
		})
	}
}

// The optional columns, SI prefixes and spaces around cells.
func TestReadOptionalColumns(t *testing.T) {
	text := "VGS, VDS, ID, VBS, W, L, Temp, gm, gds, cgg\n"
	for i := 0; i < 25; i++ {
		text += fmt.Sprintf(" %dm , 1.2 , %gu , -300m , 10u , 180n , 85 , 1m , 10u , 20f\n", 40*i, 1+float64(i))
	}
	tab, err := Read([]byte(text), Options{Pol: device.NMOS})
	if err != nil {
		t.Fatal(err)
	}
	p := tab.Points[3]
	want := Point{VGS: 0.12, VDS: 1.2, ID: 4e-6, VBS: -0.3, W: 10e-6, L: 180e-9, TempC: 85, GM: 1e-3, GDS: 10e-6, CGG: 20e-15, Line: 5}
	if p != want {
		t.Errorf("point 3 = %+v, want %+v", p, want)
	}
	if !tab.HasGM || !tab.HasGDS || !tab.HasCGG {
		t.Errorf("optional columns not flagged: %+v", tab)
	}
	// A p-type file with simulator signs mirrors VBS too.
	ptext := strings.NewReplacer(" 1.2 ", " -1.2 ", "-300m", "300m").Replace(text)
	ptext = strings.ReplaceAll(ptext, "u , 300m", "u , 300m")
	var b strings.Builder
	for i, line := range strings.Split(strings.TrimSpace(ptext), "\n") {
		if i > 0 {
			cells := strings.Split(line, ",")
			cells[0] = " -" + strings.TrimSpace(cells[0])
			cells[2] = " -" + strings.TrimSpace(cells[2])
			line = strings.Join(cells, ",")
		}
		b.WriteString(line + "\n")
	}
	ptab, err := Read([]byte(b.String()), Options{Pol: device.PMOS})
	if err != nil {
		t.Fatal(err)
	}
	if q := ptab.Points[3]; q.VGS != 0.12 || q.VDS != 1.2 || q.ID != 4e-6 || q.VBS != -0.3 || q.GM != 1e-3 {
		t.Errorf("p-type point 3 = %+v, want the n-type values mirrored", q)
	}
}

// Every bad case names its line, its column and what is wrong.
func TestReadRejects(t *testing.T) {
	good := sweep(",", 1, "")
	lines := strings.Split(good, "\n")
	withLine := func(n int, s string) string { // replace the n-th line (1-based)
		c := append([]string(nil), lines...)
		c[n-1] = s
		return strings.Join(c, "\n")
	}
	for _, tc := range []struct {
		name       string
		text       string
		opt        Options
		line, col  int
		wantInText string
	}{
		{"empty", "", Options{}, 0, 0, "empty"},
		{"comments only", "# nothing\n\n", Options{}, 0, 0, "empty"},
		{"no header", "0.1,0.2,1e-6\n", Options{}, 1, 0, "header"},
		{"unknown column", "vgs,vds,idd\n", Options{}, 1, 3, "unknown column"},
		{"missing id", "vgs,vds\n0,1\n", Options{}, 1, 0, `"id"`},
		{"missing vds", "vgs,id\n0,1\n", Options{}, 1, 0, `"vds"`},
		{"repeated column", "vgs,vds,id,VGS\n", Options{}, 1, 4, "already"},
		{"no width", good, Options{L: 1e-6}, 2, 0, "width"},
		{"no length", good, Options{W: 1e-6}, 2, 0, "length"},
		{"not a number", withLine(5, "0.2,0.1,1.2x"), Options{}, 5, 3, "not a number"},
		{"empty cell", withLine(5, "0.2,,1e-6"), Options{}, 5, 2, "empty"},
		{"NaN", withLine(6, "0.3,0.1,NaN"), Options{}, 6, 3, "finite"},
		{"Inf", withLine(6, "0.3,-Inf,1e-6"), Options{}, 6, 2, "finite"},
		{"short row", withLine(7, "0.3,0.1"), Options{}, 7, 0, "cells"},
		{"duplicate point", withLine(5, lines[3]), Options{}, 5, 1, "line 4"},
		{"backwards row", withLine(20, "0.6,1.2,-1e-4"), Options{}, 20, 3, "opposite signs"},
		{"mixed polarities", withLine(20, "-0.6,-1.2,-1e-4"), Options{}, 20, 3, "mixes"},
		{"p-type signs loaded as n", sweep(",", -1, ""), Options{}, 4, 3, "p-type"},
		{"too few points", strings.Join(lines[:10], "\n"), Options{}, 0, 0, "at least 20"},
		{"too few gate steps", "vgs,vds,id\n" + strings.Repeat("", 0) + func() string {
			var b strings.Builder
			for i := 0; i < 30; i++ {
				fmt.Fprintf(&b, "%g,%g,1e-6\n", 0.5+0.1*float64(i%3), 0.1+0.05*float64(i))
			}
			return b.String()
		}(), Options{}, 0, 0, "distinct VGS"},
		{"bad width", "vgs,vds,id,w\n0,1,1e-6,-1u\n", Options{L: 1e-6}, 2, 4, "above 0"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			o := tc.opt
			o.Pol = device.NMOS
			if o.W == 0 && o.L == 0 && tc.name != "no width" && tc.name != "no length" {
				o.W, o.L = 10e-6, 1e-6
			}
			_, err := Read([]byte(tc.text), o)
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("error %v, want a *chardata.Error", err)
			}
			if e.Line != tc.line || e.Column != tc.col {
				t.Errorf("placed at line %d column %d, want line %d column %d (%v)", e.Line, e.Column, tc.line, tc.col, err)
			}
			if !strings.Contains(err.Error(), tc.wantInText) {
				t.Errorf("message %q does not say %q", err, tc.wantInText)
			}
		})
	}
}

func TestReadTooLarge(t *testing.T) {
	_, err := Read(make([]byte, MaxBytes+1), Options{Pol: device.NMOS, W: 1e-6, L: 1e-6})
	if err == nil || !strings.Contains(err.Error(), "at most 50.0 MiB") {
		t.Errorf("a file over 50 MiB gave %v", err)
	}
}

func TestErrorText(t *testing.T) {
	e := &Error{Line: 14, Column: 3, Header: "id", Message: `"1.2x" is not a number`}
	if got, want := e.Error(), `line 14, column 3 (id): "1.2x" is not a number`; got != want {
		t.Errorf("%q, want %q", got, want)
	}
}

func FuzzRead(f *testing.F) {
	f.Add([]byte(sweep(",", 1, "")))
	f.Add([]byte(sweep(";", -1, "")))
	f.Add([]byte("vgs,vds,id,vbs,w,l,temp,gm,gds,cgg\n1,1,1,0,1u,1u,27,1,1,1\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		for _, pol := range []device.Polarity{device.NMOS, device.PMOS} {
			tab, err := Read(data, Options{Pol: pol, W: 1e-6, L: 1e-6})
			if err != nil {
				if e := (*Error)(nil); !errors.As(err, &e) {
					t.Fatalf("error %T, want *Error", err)
				}
				continue
			}
			if len(tab.Points) < MinPoints {
				t.Fatalf("%d points accepted", len(tab.Points))
			}
			for _, p := range tab.Points {
				for _, v := range []float64{p.VGS, p.VDS, p.VBS, p.ID, p.W, p.L, p.TempC} {
					if math.IsNaN(v) || math.IsInf(v, 0) {
						t.Fatalf("non-finite value in %+v", p)
					}
				}
			}
		}
	})
}

func BenchmarkRead10k(b *testing.B) {
	var buf bytes.Buffer
	buf.WriteString("vgs,vds,id,vbs,l\n")
	for i := 0; i < 10000; i++ {
		fmt.Fprintf(&buf, "%g,%g,%g,%g,%s\n", 0.018*float64(i%100), 0.1+0.1*float64(i/100%20), 1e-9*float64(i+1), -0.3*float64(i/2000), []string{"180n", "1u"}[i/5000])
	}
	data := buf.Bytes()
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Read(data, Options{Pol: device.NMOS, W: 10e-6}); err != nil {
			b.Fatal(err)
		}
	}
}

// The fingerprint is FNV-1a 64 (Fowler, Noll, Vo): its published test
// vectors are 0xcbf29ce484222325 for no bytes (the offset basis) and
// 0xaf63dc4c8601ec8c for "a".
func TestFingerprintVectors(t *testing.T) {
	for in, want := range map[string]string{"": "fnv1a64:cbf29ce484222325", "a": "fnv1a64:af63dc4c8601ec8c"} {
		if got := Fingerprint([]byte(in)); got != want {
			t.Errorf("Fingerprint(%q) = %s, want %s", in, got, want)
		}
	}
}
