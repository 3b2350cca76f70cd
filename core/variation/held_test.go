package variation

import (
	"math"
	"strings"
	"testing"

	"stagewright/core/design"
	"stagewright/core/device"
)

// The follower with a current sink at the slow corner and 125 °C: its sink
// M2 leaves saturation, and the row names it with the margin the plain
// evaluation of that corner reports.
func TestCornersFlagTheWorstDevice(t *testing.T) {
	d := decode(t, "v=1&stage=sf&load=active&cl=5p&id=200u&w=40u&l=0.5u&hold=ideal")
	rows, err := Corners(d)
	if err != nil {
		t.Fatal(err)
	}
	row := findRow(t, rows, "ss", 125)
	plain := design.Evaluate(decode(t, "v=1&stage=sf&load=active&cl=5p&id=200u&w=40u&l=0.5u&corner=ss&temp=125"))
	if !plain.OK || plain.LoadOP == nil {
		t.Fatalf("plain ss/125: %+v", plain.Error)
	}
	m2 := float64(plain.LoadOP.Margin)
	if !(m2 < 0) {
		t.Fatalf("the demo case no longer puts M2 in triode (margin %g V)", m2)
	}
	if !row.Flag || !strings.HasPrefix(row.Region, "M2 triode, −") || float64(row.Margin) != m2 {
		t.Errorf("ss/125 row: flag %v region %q margin %g; M2's margin %g", row.Flag, row.Region, float64(row.Margin), m2)
	}
	if len(row.Devices) != 2 || row.Devices[1].Role != "sink" || row.Devices[0].Region != "saturation" {
		t.Errorf("devices %+v", row.Devices)
	}
	if tt := findRow(t, rows, "tt", 27); tt.Flag || tt.Region != "saturation" {
		t.Errorf("tt/27 row flagged: %q", tt.Region)
	}
}

// Supply corners move the figures the way the circuit says (common
// practice): with the bias levels fixed, a current-source-loaded stage's
// output follows the supply, and a resistor-loaded stage near the edge of
// saturation loses gain at the low supply.
func TestSupplyCorners(t *testing.T) {
	rows, err := Corners(decode(t, "stage=cs&pol=n&load=active&bias=vin&vin=0.6&vbl=0.75&w=10u&l=1u&lw=10u&ll=1u"))
	if err != nil {
		t.Fatal(err)
	}
	lo, mid, hi := supplyRows(t, rows, "tt", 27)
	if !(lo.VOut < mid.VOut && mid.VOut < hi.VOut) {
		t.Errorf("active load: vout %g, %g, %g at %g, %g, %g V", float64(lo.VOut), float64(mid.VOut), float64(hi.VOut),
			float64(lo.VDD), float64(mid.VDD), float64(hi.VDD))
	}
	rows, err = Corners(decode(t, "stage=cs&pol=n&load=r&bias=vin&vin=0.75&rd=4k&w=10u&l=0.5u"))
	if err != nil {
		t.Fatal(err)
	}
	lo, mid, hi = supplyRows(t, rows, "tt", 27)
	if !(math.Abs(float64(lo.Gain)) < math.Abs(float64(mid.Gain)) && math.Abs(float64(mid.Gain)) <= math.Abs(float64(hi.Gain))) {
		t.Errorf("resistor load: gain %g, %g, %g", float64(lo.Gain), float64(mid.Gain), float64(hi.Gain))
	}
	if math.Abs(float64(lo.VDD)-1.62) > 1e-12 || math.Abs(float64(hi.VDD)-1.98) > 1e-12 {
		t.Errorf("supplies %g, %g: want ±10 %% of 1.8 V", float64(lo.VDD), float64(hi.VDD))
	}
	one, err := Corners(decode(t, "stage=cs&pol=n&load=r&bias=vin&vin=0.75&rd=4k&vddtol=0"))
	if err != nil || len(one) != 15 {
		t.Errorf("vddtol=0: %d rows (%v), want 15", len(one), err)
	}
}

func supplyRows(t *testing.T, rows []CornerRow, corner string, temp float64) (lo, mid, hi CornerRow) {
	t.Helper()
	var at []CornerRow
	for _, r := range rows {
		if r.Corner == corner && float64(r.Temp) == temp {
			at = append(at, r)
		}
	}
	if len(at) != 3 {
		t.Fatalf("%d rows at %s %g °C, want 3 supplies", len(at), corner, temp)
	}
	return at[0], at[1], at[2]
}

// A mirror-held common-source stage: M1 and its diode-connected copy see
// the same corner, so the drain current moves only by what their drain
// voltages differ, to first order ID/Iref − 1 = (gds/ID)·(VDS1 − VGS_ref)
// (the mirror's output-resistance error; Razavi, Design of Analog CMOS
// Integrated Circuits, ch. 5). The ideal current holds ID exactly, and a
// fixed gate voltage lets it move with the corner far more.
func TestMirrorHeldBias(t *testing.T) {
	const base = "stage=cs&pol=n&load=r&rd=5k&bias=id&id=100u&w=10u&l=1u&vddtol=0"
	ideal, err := Corners(decode(t, base+"&hold=ideal"))
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range ideal {
		// The servo converges to 1e-9 relative; allow 1e-6.
		if !r.OK || math.Abs(float64(r.ID)/100e-6-1) > 1e-6 {
			t.Errorf("ideal, %s %g °C: ID %g", r.Corner, float64(r.Temp), float64(r.ID))
		}
	}
	mirror, err := Corners(decode(t, base))
	if err != nil {
		t.Fatal(err)
	}
	fixed, err := Corners(decode(t, base+"&hold=fixed"))
	if err != nil {
		t.Fatal(err)
	}
	for i, r := range mirror {
		if !r.OK {
			t.Fatalf("mirror %s %g: %v", r.Corner, float64(r.Temp), r.Error)
		}
		rd := decode(t, r.Design)
		res := design.Evaluate(rd)
		vgsRef := rd.Vin // the copy's VGS is the gate level it gives M1
		vds1 := float64(res.OP.VDS)
		hand := 1 + float64(res.OP.GDS)/float64(res.OP.ID)*(vds1-vgsRef)
		got := float64(r.ID) / 100e-6
		// 15 % of the deviation plus 1e-4: first order in gds/ID, which
		// itself changes between VGS_ref and VDS1.
		if math.Abs(got-hand) > 0.15*math.Abs(hand-1)+1e-4 {
			t.Errorf("mirror %s %g °C: ID/Iref %.5f, hand %.5f", r.Corner, float64(r.Temp), got, hand)
		}
		fr := fixed[i]
		if r.Corner != "tt" && !(math.Abs(float64(fr.ID)/100e-6-1) > 2*math.Abs(got-1)) {
			t.Errorf("%s %g °C: a fixed gate moves ID by %.3g, the mirror by %.3g: want the fixed gate to move it more",
				r.Corner, float64(r.Temp), float64(fr.ID)/100e-6-1, got-1)
		}
	}
}

// Monte Carlo of a mirror-held common-source stage. With every spread off
// each sample is the mirror corner's tt row. With the global shift alone
// the mirror and M1 move together, so ID moves far less than a fixed gate
// lets it. With mismatch alone, the copy and M1 mismatch like a current
// mirror's pair: σ(ΔID/ID)² = (gm/ID)²·(σ²VT1 + σ²VTref) + σ²β1 + σ²βref,
// each σ by Pelgrom's law (Pelgrom, Duinmaijer, Welbers, IEEE JSSC 1989),
// to first order.
func TestMonteCarloMirrorHeld(t *testing.T) {
	const frag = "stage=cs&pol=n&load=r&rd=5k&bias=id&id=100u&w=10u&l=1u&vddtol=0"
	d := decode(t, frag)
	rows, err := Corners(d)
	if err != nil {
		t.Fatal(err)
	}
	tt := findRow(t, rows, "tt", 27)
	nom, err := MonteCarloWith(d, Options{Samples: 3, Seed: 1, NoGlobal: true, NoMismatch: true})
	if err != nil {
		t.Fatal(err)
	}
	// The two solve the same circuit from different starts: 1e-6.
	if math.Abs(float64(nom.ID.Mean/tt.ID)-1) > 1e-6 || math.Abs(float64(nom.Gain.Mean/tt.Gain)-1) > 1e-6 {
		t.Errorf("nominal sample ID %g gain %g, tt row ID %g gain %g", float64(nom.ID.Mean), float64(nom.Gain.Mean), float64(tt.ID), float64(tt.Gain))
	}
	const n = 3000
	glob, err := MonteCarloWith(d, Options{Samples: n, Seed: 5, NoMismatch: true})
	if err != nil {
		t.Fatal(err)
	}
	fixedGlob, err := MonteCarloWith(decode(t, frag+"&hold=fixed"), Options{Samples: n, Seed: 5, NoMismatch: true})
	if err != nil {
		t.Fatal(err)
	}
	if !(float64(glob.ID.SD) < 0.2*float64(fixedGlob.ID.SD)) {
		t.Errorf("global shift: σ(ID) %g held by a mirror, %g by a fixed gate", float64(glob.ID.SD), float64(fixedGlob.ID.SD))
	}
	mis, err := MonteCarloWith(d, Options{Samples: n, Seed: 9, NoGlobal: true})
	if err != nil {
		t.Fatal(err)
	}
	pr, _ := device.Builtin("d180")
	sp := pr.Spread(device.NMOS)
	area := 10e-6 * 1e-6
	res := design.Evaluate(d)
	gmid := float64(res.OP.GmID)
	svt, sb := sp.AVT/math.Sqrt(area), sp.ABeta/math.Sqrt(area)
	hand := math.Sqrt(gmid*gmid*2*svt*svt+2*sb*sb) * float64(res.OP.ID)
	// Four standard errors of a sample σ, plus 5 % for the first-order
	// form (gm/ID moves across the spread).
	if e := math.Abs(float64(mis.ID.SD)/hand - 1); e > relSE4(n)+0.05 {
		t.Errorf("mismatch: σ(ID) %g, Pelgrom hand %g (rel %.3f)", float64(mis.ID.SD), hand, e)
	}
}
