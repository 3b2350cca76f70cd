package design

import (
	"math"
	"stagewright/core/device"
	"stagewright/core/extract"
	"stagewright/core/units"
	"testing"
)

// A device whose length is a bin's gets that bin's parameters exactly, so a
// binned design at a bin length evaluates as the same design with the
// bin's values given for every length; between two bins it lies between.
func TestBinsInADesign(t *testing.T) {
	const base = "v=2&stage=cs&pol=n&proc=d180&w=10u&bias=vin&vin=0.7&load=r&rd=10k"
	const bins = "&n.thresh@180n=420m&n.thresh@1u=500m"
	var e Evaluator
	id := func(frag string) float64 {
		t.Helper()
		d, err := Decode(frag)
		if err != nil {
			t.Fatal(err)
		}
		r := e.Evaluate(d)
		if !r.OK {
			t.Fatalf("%s: %v", frag, r.Error)
		}
		return float64(r.OP.ID)
	}
	for _, c := range []struct{ l, thresh string }{{"180n", "420m"}, {"1u", "500m"}} {
		got, want := id(base+"&l="+c.l+bins), id(base+"&l="+c.l+"&n.thresh="+c.thresh)
		// 1e-12: the same parameters reached two ways; only the solver's
		// rounding differs.
		if math.Abs(got/want-1) > 1e-12 {
			t.Errorf("L = %s: ID %.12g with bins, %.12g with thresh %s", c.l, got, want, c.thresh)
		}
	}
	// At 400 nm the threshold is interpolated in 1/L:
	// 0.42 + 0.08·(1/180n − 1/400n)/(1/180n − 1/1u) = 0.4701 V.
	frac := (1/180e-9 - 1/400e-9) / (1/180e-9 - 1/1e-6)
	mid := id(base + "&l=400n" + bins)
	want := id(base + "&l=400n&n.thresh=" + units.Exact(0.42+0.08*frac))
	if math.Abs(mid/want-1) > 1e-9 {
		t.Errorf("L = 400n: ID %.12g with bins, %.12g with the interpolated threshold", mid, want)
	}
}

func TestProcessOfBins(t *testing.T) {
	d, err := Decode("n.mobility=25m&n.thresh@1u=0.5&n.lenmod@300n=30n&n.thresh@300n=0.44")
	if err != nil {
		t.Fatal(err)
	}
	pr, err := d.ProcessOf()
	if err != nil {
		t.Fatal(err)
	}
	if len(pr.NBins) != 2 || pr.NBins[0].L != 300e-9 || pr.NBins[1].L != 1e-6 || len(pr.PBins) != 0 {
		t.Fatalf("bins %+v", pr.NBins)
	}
	short, long := pr.NBins[0].Params, pr.NBins[1].Params
	if short.VT0 != 0.44 || short.LambdaL != 30e-9 || long.VT0 != 0.5 || long.LambdaL != pr.N.LambdaL {
		t.Errorf("bin values: short %+v long %+v", short, long)
	}
	if short.U0 != 25e-3 || long.U0 != 25e-3 {
		t.Error("an override for every length must reach every bin")
	}
	d.Aids.Corner = "ss"
	ss, err := d.ProcessOf()
	if err != nil {
		t.Fatal(err)
	}
	if !(ss.NBins[0].Params.VT0 > short.VT0) {
		t.Error("the slow corner did not raise a bin's threshold")
	}
}

// Every parameter the fit adjusts is held inside what a link accepts, so a
// fitted process always opens as a link.
func TestFitBoundsInsideLinkRanges(t *testing.T) {
	for _, info := range device.ParamTable {
		lo, hi, ok := extract.Bounds(info.Key)
		if !ok {
			continue
		}
		f, _, found := lookupOverride("n." + info.Key)
		if !found {
			t.Errorf("%s: fitted but not a link key", info.Key)
			continue
		}
		sp := f.span()
		if !numberOK(lo, sp, false, false) || !numberOK(hi, sp, false, false) {
			t.Errorf("%s: fit bounds %g … %g, link accepts %g … %g", info.Key, lo, hi, f.lo, f.hi)
		}
	}
}

// The link's override table and the device's parameter names are one list:
// the same keys, the same old names, each reaching the same field.
func TestOverrideTableMatchesParamTable(t *testing.T) {
	var model []*overrideParam
	for i := range overrideParams {
		if overrideParams[i].field != nil {
			model = append(model, &overrideParams[i])
		} else if overrideParams[i].spread == nil {
			t.Errorf("%s reaches nothing", overrideParams[i].name)
		}
	}
	if len(model) != len(device.ParamTable) {
		t.Fatalf("%d override parameters, %d device parameters", len(model), len(device.ParamTable))
	}
	for i, info := range device.ParamTable {
		f := model[i]
		if f.name != info.Key || f.old != info.Old {
			t.Errorf("row %d: link %s (was %q), device %s (was %q)", i, f.name, f.old, info.Key, info.Old)
		}
		var p device.Params
		if f.field(&p) != info.Field(&p) {
			t.Errorf("%s: the two tables name different fields", f.name)
		}
	}
}

// A user's own spread replaces the base's for corners and Monte Carlo;
// figures left at 0 keep the base's.
func TestOwnSpread(t *testing.T) {
	base, _ := device.Builtin("d180")
	d, err := Decode("n.vtspread=30m&n.vtmatch=8n&p.mobspread=0.06")
	if err != nil {
		t.Fatal(err)
	}
	pr, err := d.ProcessOf()
	if err != nil {
		t.Fatal(err)
	}
	n, p := pr.Spread(device.NMOS), pr.Spread(device.PMOS)
	bn, bp := base.Spread(device.NMOS), base.Spread(device.PMOS)
	if n.SigmaVT != 30e-3 || n.AVT != 8e-9 || n.SigmaMu != bn.SigmaMu || n.ABeta != bn.ABeta {
		t.Errorf("n spread %+v (base %+v)", n, bn)
	}
	if p.SigmaMu != 0.06 || p.SigmaVT != bp.SigmaVT {
		t.Errorf("p spread %+v (base %+v)", p, bp)
	}
	d.Aids.Corner = "ss"
	ss, err := d.ProcessOf()
	if err != nil {
		t.Fatal(err)
	}
	// The slow corner moves VT0 by 3σ of the user's own 30 mV.
	if got := ss.N.VT0 - base.N.VT0; math.Abs(got-3*30e-3) > 1e-12 {
		t.Errorf("ss moves the n threshold by %g V, want 90 mV", got)
	}
	if _, err := Decode("n.vtspread@1u=30m"); err == nil {
		t.Error("a spread figure with a length must be refused")
	}
}
