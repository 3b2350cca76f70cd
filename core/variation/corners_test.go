package variation

import (
	"math"
	"reflect"
	"strings"
	"testing"

	"stagewright/core/design"
	"stagewright/core/device"
)

// findRow returns the row of a corner and temperature at the nominal
// supply (the middle of the rows of that corner and temperature).
func findRow(t *testing.T, rows []CornerRow, corner string, temp float64) CornerRow {
	t.Helper()
	var at []CornerRow
	for _, r := range rows {
		if r.Corner == corner && float64(r.Temp) == temp {
			at = append(at, r)
		}
	}
	if len(at) == 0 {
		t.Fatalf("no row %s at %g °C", corner, temp)
	}
	return at[len(at)/2]
}

// TestCornersTypicalIsPlain: the tt row at the design's own temperature
// and supply is the plain evaluation, exactly, for bias vin and for bias
// id held ideally.
func TestCornersTypicalIsPlain(t *testing.T) {
	for _, frag := range testFragments {
		d := decode(t, frag+"&hold=ideal")
		if d.Bias == design.BiasGmID {
			continue
		}
		rows, err := Corners(d)
		if err != nil {
			t.Fatal(err)
		}
		if len(rows) != 45 {
			t.Errorf("%s: %d rows, want 5 corners × 3 temperatures × 3 supplies", frag, len(rows))
		}
		got := findRow(t, rows, "tt", 27)
		r := design.Evaluate(d)
		want := cornerRow("tt", 27, d.VDD, float64(r.Nodes["out"]), d.Stage == design.SourceFollower, r)
		if !reflect.DeepEqual(got, want) {
			t.Errorf("%s: tt row\n%+v\nplain\n%+v", frag, got, want)
		}
		if got.VOutDrift != 0 {
			t.Errorf("%s: the nominal row drifts by %g V", frag, float64(got.VOutDrift))
		}
	}
}

// TestCornersDirection checks the physics of the corners (common
// practice): at a fixed input level (bias vin) a slow n-channel device
// carries less current than typical and a fast one more; the p-channel
// corner letter does not matter for an n-channel stage with a resistor
// load. Under bias id the servo holds the current at every corner.
func TestCornersDirection(t *testing.T) {
	d := decode(t, "v=1&stage=cs&pol=n&bias=vin&vin=0.7&load=r&rd=5k")
	rows, err := Corners(d)
	if err != nil {
		t.Fatal(err)
	}
	for _, temp := range CornerTemps {
		tt, ss, ff := findRow(t, rows, "tt", temp), findRow(t, rows, "ss", temp), findRow(t, rows, "ff", temp)
		sf, fs := findRow(t, rows, "sf", temp), findRow(t, rows, "fs", temp)
		if !(ss.ID < tt.ID && tt.ID < ff.ID) {
			t.Errorf("%g °C: ID ss %g, tt %g, ff %g not increasing", temp, float64(ss.ID), float64(tt.ID), float64(ff.ID))
		}
		// Only M1's (n-channel) letter matters: sf equals ss, fs equals ff,
		// to rounding of the identical computation.
		if sf.ID != ss.ID || fs.ID != ff.ID {
			t.Errorf("%g °C: sf %g vs ss %g, fs %g vs ff %g", temp, float64(sf.ID), float64(ss.ID), float64(fs.ID), float64(ff.ID))
		}
	}
	did := decode(t, "v=1&stage=cs&pol=p&bias=id&id=50u&load=active&vout=0.9&hold=ideal")
	rows, err = Corners(did)
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range rows {
		// The current servo converges to 1e-9 relative; allow 1e-6.
		if !r.OK || math.Abs(float64(r.ID)-50e-6) > 50e-12 {
			t.Errorf("bias id, %s at %g °C: ok %v, ID %g", r.Corner, float64(r.Temp), r.OK, float64(r.ID))
		}
	}
}

// TestCornersRowDesign: a row's fragment reopens the same corner: its
// process is device.Corner of the design's, and evaluating it alone gives
// the row.
func TestCornersRowDesign(t *testing.T) {
	d := decode(t, testFragments[1]+"&temp=50&n.clm=0.03u")
	rows, err := Corners(d)
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 60 {
		t.Errorf("%d rows, want 5 corners × 4 temperatures × 3 supplies", len(rows))
	}
	for i := 1; i < 12; i++ {
		a, b := rows[i-1], rows[i]
		if b.Temp < a.Temp || (b.Temp == a.Temp && b.VDD <= a.VDD) {
			t.Errorf("rows not by temperature, then supply: %v/%v, %v/%v", a.Temp, a.VDD, b.Temp, b.VDD)
		}
	}
	pr, _ := d.ProcessOf()
	for _, r := range rows {
		dr, err := design.Decode(r.Design)
		if err != nil {
			t.Fatalf("%s: %v", r.Design, err)
		}
		got, _ := dr.ProcessOf()
		want, _ := device.Corner(pr, r.Corner)
		// The fragment writes numbers exactly (units.Exact round-trips).
		if got.N != want.N || got.P != want.P {
			t.Errorf("%s at %g: process from the row's fragment differs from device.Corner", r.Corner, float64(r.Temp))
		}
		if dr.Temp != float64(r.Temp) || got.N.LambdaL != 0.03e-6 {
			t.Errorf("%s: temperature %g or own override lost", r.Design, dr.Temp)
		}
		nominal := design.Evaluate(d)
		if again := cornerRow(r.Corner, float64(r.Temp), float64(r.VDD), float64(nominal.Nodes["out"]), false, design.Evaluate(dr)); !reflect.DeepEqual(again, r) {
			t.Errorf("%s: reopened row differs", r.Design)
		}
	}
}

// TestCornersGmID: a gm/ID design keeps its solved width; the tt row at
// its temperature matches the plain evaluation to the search tolerance of
// gm/ID (1e-6 relative, so figures within 1e-4).
func TestCornersGmID(t *testing.T) {
	d := decode(t, "v=1&stage=cs&pol=n&bias=gmid&gmid=15&id=20u&load=r&rd=20k&hold=ideal")
	rows, err := Corners(d)
	if err != nil {
		t.Fatal(err)
	}
	plain := design.Evaluate(d)
	tt := findRow(t, rows, "tt", 27)
	if math.Abs(float64(tt.Gain-plain.Midband.Gain)) > 1e-4*math.Abs(float64(plain.Midband.Gain)) {
		t.Errorf("tt gain %g, plain %g", float64(tt.Gain), float64(plain.Midband.Gain))
	}
	if !strings.Contains(tt.Design, "bias=id") {
		t.Errorf("gm/ID rows should be bias id at the solved width: %s", tt.Design)
	}
	if _, err := Corners(decode(t, "v=1&stage=cs&pol=n&bias=gmid&gmid=40&id=20u")); err == nil {
		t.Error("a gm/ID design with no operating point gave corners")
	}
}

func TestCornersErrorsAndFailures(t *testing.T) {
	d := decode(t, testFragments[0])
	bad := d
	bad.L = 0
	if _, err := Corners(bad); err == nil {
		t.Error("an invalid design gave corners")
	}
	// More current than the resistor allows: every row fails, none panics,
	// figures are null.
	rows, err := Corners(decode(t, "v=1&stage=cs&pol=n&bias=id&id=10m&load=r&rd=100k&hold=ideal"))
	if err != nil {
		t.Fatal(err)
	}
	if _, err := Corners(decode(t, "v=1&stage=cs&pol=n&bias=id&id=10m&load=r&rd=100k")); err == nil ||
		!strings.Contains(err.Error(), "no bias to hold") {
		t.Errorf("a held design with no nominal operating point: %v", err)
	}
	for _, r := range rows {
		if r.OK || r.Error == nil || r.Gain.Finite() || r.ID.Finite() {
			t.Errorf("%s %g: ok %v error %v gain %v", r.Corner, float64(r.Temp), r.OK, r.Error, r.Gain)
		}
	}
}
